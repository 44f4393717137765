#include "csv_reader.hpp"

#include <algorithm>
#include <array>
#include <charconv>
#include <cmath>
#include <functional>

namespace countersign::beamdata::detail {

namespace {

struct Line {
  std::size_t number = 0;
  std::vector<std::string> cells;
};

std::string trim(std::string_view s) {
  const auto first = s.find_first_not_of(" \t\r");
  if (first == std::string_view::npos) return {};
  const auto last = s.find_last_not_of(" \t\r");
  return std::string{s.substr(first, last - first + 1)};
}

std::string format_number(double value) {
  std::array<char, 32> buffer{};
  const auto [ptr, ec] = std::to_chars(buffer.data(), buffer.data() + buffer.size(), value);
  return ec == std::errc{} ? std::string(buffer.data(), ptr) : std::string{"?"};
}

// Non-comment, non-blank lines split at commas, with their 1-based line numbers.
std::vector<Line> split_lines(std::string_view text) {
  if (text.starts_with("\xEF\xBB\xBF")) text.remove_prefix(3);  // UTF-8 byte-order mark
  std::vector<Line> lines;
  std::size_t number = 0;
  while (!text.empty()) {
    ++number;
    const auto end = text.find('\n');
    const std::string_view raw = text.substr(0, end);
    text = end == std::string_view::npos ? std::string_view{} : text.substr(end + 1);
    const std::string content = trim(raw);
    if (content.empty() || content.front() == '#') continue;
    Line line{number, {}};
    std::string_view rest = content;
    while (true) {
      const auto comma = rest.find(',');
      line.cells.push_back(trim(rest.substr(0, comma)));
      if (comma == std::string_view::npos) break;
      rest = rest.substr(comma + 1);
    }
    lines.push_back(std::move(line));
  }
  return lines;
}

// Parses a whole cell as a finite decimal number, or records a problem and returns nothing.
std::optional<double> number(const std::string& cell, const TableSource& source, std::size_t line,
                             std::size_t column, std::vector<Problem>& problems) {
  const auto problem = [&](std::string message, std::string rule) {
    problems.push_back(Problem{source.problem_file, std::nullopt, line, column, source.quantity,
                               std::move(message), Severity::error, std::move(rule)});
    return std::optional<double>{};
  };
  if (cell.empty()) return problem("missing value", "missing value");
  double value = 0.0;
  const char* begin = cell.data();
  const char* end = cell.data() + cell.size();
  if (*begin == '+') ++begin;
  const auto [ptr, ec] = std::from_chars(begin, end, value);
  if (ec != std::errc{} || ptr != end) return problem("'" + cell + "' is not a number", "not a number");
  if (!std::isfinite(value)) return problem("'" + cell + "' is not a finite number", "not a finite number");
  return value;
}

// Axis values strictly increasing; reports the first node that is not, at its own position.
bool check_increasing(const std::vector<double>& axis, const std::vector<std::size_t>& lines,
                      const std::vector<std::size_t>& columns, const std::string& axis_name,
                      const TableSource& source, std::vector<Problem>& problems) {
  bool ok = true;
  for (std::size_t i = 1; i < axis.size(); ++i) {
    // A cell that is not a number has its own problem already.
    if (!std::isfinite(axis[i]) || !std::isfinite(axis[i - 1])) continue;
    if (!(axis[i] > axis[i - 1])) {
      problems.push_back(Problem{source.problem_file, std::nullopt, lines[i], columns[i], source.quantity,
                                 axis_name + " not strictly increasing (" + format_number(axis[i]) +
                                     " after " + format_number(axis[i - 1]) + ")"});
      ok = false;
    }
  }
  return ok;
}

}  // namespace

Read2D parse_table2d(std::string_view text, const TableSource& source, const std::string& row_axis_name,
                     const std::string& column_axis_name, std::vector<Problem>& problems) {
  Read2D result;
  const std::size_t problems_before = problems.size();
  const std::vector<Line> lines = split_lines(text);
  if (lines.empty()) {
    problems.push_back(Problem{source.problem_file, std::nullopt, std::nullopt, std::nullopt, source.quantity,
                               "no header row and no data"});
    return result;
  }
  const Line& header = lines.front();
  result.header_line = header.number;
  if (header.cells.front() != row_axis_name) {
    problems.push_back(
        Problem{source.problem_file, std::nullopt, header.number, 1, source.quantity,
                "first header cell is '" + header.cells.front() + "', expected '" + row_axis_name + "'"});
  }
  if (header.cells.size() < 2) {
    problems.push_back(Problem{source.problem_file, std::nullopt, header.number, std::nullopt,
                               source.quantity, "header names no " + column_axis_name + " columns"});
    return result;
  }
  std::vector<double> columns;
  std::vector<std::size_t> column_numbers;
  for (std::size_t c = 1; c < header.cells.size(); ++c) {
    if (const auto v = number(header.cells[c], source, header.number, c + 1, problems)) {
      columns.push_back(*v);
      column_numbers.push_back(c + 1);
    }
  }
  if (lines.size() < 2) {
    problems.push_back(Problem{source.problem_file, std::nullopt, std::nullopt, std::nullopt, source.quantity,
                               "header only, no data rows"});
  }
  std::vector<double> rows;
  std::vector<double> values;
  for (std::size_t i = 1; i < lines.size(); ++i) {
    const Line& line = lines[i];
    if (line.cells.size() != header.cells.size()) {
      problems.push_back(Problem{source.problem_file, std::nullopt, line.number, std::nullopt,
                                 source.quantity,
                                 std::to_string(line.cells.size()) + " cells, the header has " +
                                     std::to_string(header.cells.size())});
      continue;
    }
    const auto row_value = number(line.cells.front(), source, line.number, 1, problems);
    rows.push_back(row_value.value_or(std::nan("")));
    result.row_lines.push_back(line.number);
    for (std::size_t c = 1; c < line.cells.size(); ++c) {
      values.push_back(number(line.cells[c], source, line.number, c + 1, problems).value_or(std::nan("")));
    }
  }
  check_increasing(columns, std::vector<std::size_t>(columns.size(), header.number), column_numbers,
                   column_axis_name, source, problems);
  check_increasing(rows, result.row_lines, std::vector<std::size_t>(rows.size(), 1), row_axis_name, source,
                   problems);
  if (problems.size() == problems_before && !rows.empty()) {
    result.table = Table2D{source.table_file, source.quantity,    row_axis_name,    std::move(rows),
                           column_axis_name,  std::move(columns), std::move(values)};
  }
  return result;
}

Read1D parse_table1d(std::string_view text, const TableSource& source, std::vector<Problem>& problems,
                     const std::string& axis_name) {
  Read1D result;
  const std::size_t problems_before = problems.size();
  const std::vector<Line> lines = split_lines(text);
  if (lines.empty()) {
    problems.push_back(Problem{source.problem_file, std::nullopt, std::nullopt, std::nullopt, source.quantity,
                               "no header row and no data"});
    return result;
  }
  const Line& header = lines.front();
  result.header_line = header.number;
  if (header.cells.size() != 2 || header.cells[0] != axis_name || header.cells[1] != source.quantity) {
    problems.push_back(Problem{source.problem_file, std::nullopt, header.number, std::nullopt,
                               source.quantity,
                               "header must be '" + axis_name + "," + source.quantity + "'"});
  }
  if (lines.size() < 2) {
    problems.push_back(Problem{source.problem_file, std::nullopt, std::nullopt, std::nullopt, source.quantity,
                               "header only, no data rows"});
  }
  std::vector<double> axis;
  std::vector<double> values;
  for (std::size_t i = 1; i < lines.size(); ++i) {
    const Line& line = lines[i];
    if (line.cells.size() != 2) {
      problems.push_back(Problem{source.problem_file, std::nullopt, line.number, std::nullopt,
                                 source.quantity, std::to_string(line.cells.size()) + " cells, expected 2"});
      continue;
    }
    axis.push_back(number(line.cells[0], source, line.number, 1, problems).value_or(std::nan("")));
    values.push_back(number(line.cells[1], source, line.number, 2, problems).value_or(std::nan("")));
    result.row_lines.push_back(line.number);
  }
  check_increasing(axis, result.row_lines, std::vector<std::size_t>(axis.size(), 1), axis_name, source,
                   problems);
  if (problems.size() == problems_before && !axis.empty()) {
    result.table = Table1D{source.table_file, source.quantity, axis_name, std::move(axis), std::move(values)};
  }
  return result;
}

std::optional<Grid> parse_grid(std::string_view text, const std::string& row_axis_name) {
  const std::vector<Line> lines = split_lines(text);
  if (lines.empty() || lines.front().cells.front() != row_axis_name) return std::nullopt;
  Grid grid;
  const auto as_number = [](const std::string& cell) -> std::optional<double> {
    double value = 0.0;
    const char* begin = cell.data();
    const char* end = cell.data() + cell.size();
    if (begin != end && *begin == '+') ++begin;
    const auto [ptr, ec] = std::from_chars(begin, end, value);
    if (cell.empty() || ec != std::errc{} || ptr != end || !std::isfinite(value)) return std::nullopt;
    return value;
  };
  for (std::size_t c = 1; c < lines.front().cells.size(); ++c) {
    const auto v = as_number(lines.front().cells[c]);
    if (!v) return std::nullopt;
    grid.columns.push_back(*v);
  }
  for (std::size_t i = 1; i < lines.size(); ++i) {
    const auto v = as_number(lines[i].cells.front());
    if (!v) return std::nullopt;
    grid.rows.push_back(*v);
  }
  const auto increasing = [](const std::vector<double>& axis) {
    return std::adjacent_find(axis.begin(), axis.end(), std::greater_equal<>()) == axis.end();
  };
  if (grid.rows.empty() || !increasing(grid.rows) || !increasing(grid.columns)) return std::nullopt;
  return grid;
}

}  // namespace countersign::beamdata::detail
