#include <countersign/beamdata/measured_data.hpp>
#include <countersign/beamdata/sha256.hpp>

#include "library_files.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <map>

namespace countersign::beamdata {

namespace {

std::string trim(std::string_view s) {
  const auto first = s.find_first_not_of(" \t\r");
  if (first == std::string_view::npos) return {};
  return std::string{s.substr(first, s.find_last_not_of(" \t\r") - first + 1)};
}

std::vector<std::string> split(std::string_view line) {
  std::vector<std::string> cells;
  while (true) {
    const auto comma = line.find(',');
    cells.push_back(trim(line.substr(0, comma)));
    if (comma == std::string_view::npos) return cells;
    line = line.substr(comma + 1);
  }
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return s;
}

// A length column: its index and the factor to centimetres.
struct LengthColumn {
  std::optional<std::size_t> index;
  double to_cm = 1.0;
};

struct Header {
  std::optional<std::size_t> quantity, value, beam, wedge;
  LengthColumn field, depth, off_axis, ssd;
  std::size_t cell_count = 0;
};

// Which column holds what; problems for unknown or repeated names.
Header read_header(const std::vector<std::string>& cells, const std::string& file, std::size_t line,
                   std::vector<Problem>& problems) {
  Header h;
  const auto problem = [&](std::size_t column, std::string message) {
    problems.push_back(Problem{file, std::nullopt, line, column + 1, "header", std::move(message)});
  };
  const std::map<std::string, std::pair<LengthColumn Header::*, double>> lengths = {
      {"field_cm", {&Header::field, 1.0}},       {"field_mm", {&Header::field, 0.1}},
      {"depth_cm", {&Header::depth, 1.0}},       {"depth_mm", {&Header::depth, 0.1}},
      {"off_axis_cm", {&Header::off_axis, 1.0}}, {"off_axis_mm", {&Header::off_axis, 0.1}},
      {"ssd_cm", {&Header::ssd, 1.0}},           {"ssd_mm", {&Header::ssd, 0.1}}};
  const std::map<std::string, std::optional<std::size_t> Header::*> plain = {{"quantity", &Header::quantity},
                                                                             {"value", &Header::value},
                                                                             {"beam", &Header::beam},
                                                                             {"wedge", &Header::wedge}};
  for (std::size_t c = 0; c < cells.size(); ++c) {
    const std::string name = lower(cells[c]);
    if (const auto it = plain.find(name); it != plain.end()) {
      if ((h.*(it->second)).has_value()) problem(c, "column '" + name + "' appears twice");
      h.*(it->second) = c;
    } else if (const auto jt = lengths.find(name); jt != lengths.end()) {
      LengthColumn& column = h.*(jt->second.first);
      if (column.index) problem(c, "a second column for " + name.substr(0, name.rfind('_')));
      column = LengthColumn{c, jt->second.second};
    } else {
      problem(c, "unknown column '" + cells[c] +
                     "' (lengths need their unit: field_cm or field_mm, depth_cm or depth_mm, ...)");
    }
  }
  h.cell_count = cells.size();
  if (!h.quantity) problem(0, "no 'quantity' column");
  if (!h.value) problem(0, "no 'value' column");
  return h;
}

std::optional<double> number(const std::string& cell) {
  double value = 0.0;
  const char* begin = cell.data();
  const char* end = begin + cell.size();
  if (begin != end && *begin == '+') ++begin;
  const auto [ptr, ec] = std::from_chars(begin, end, value);
  if (cell.empty() || ec != std::errc{} || ptr != end || !std::isfinite(value)) return std::nullopt;
  return value;
}

// One data row into a point; false (with problems) when a cell is unusable.
bool read_row(const std::vector<std::string>& cells, const Header& h, std::size_t line, MeasuredData& data) {
  const auto problem = [&](std::size_t column, std::string message) {
    data.problems.push_back(Problem{data.file.string(), std::nullopt, line, column + 1, "measured",
                                    std::move(message), Severity::error, "unusable measured row"});
    return false;
  };
  MeasuredPoint p;
  p.line = line;
  p.quantity = lower(cells[*h.quantity]);
  if (p.quantity == "profile") p.quantity = "oar";
  const auto& known = measured_quantities();
  if (std::find(known.begin(), known.end(), p.quantity) == known.end())
    return problem(*h.quantity, "unknown quantity '" + cells[*h.quantity] + "'");
  if (h.beam) p.beam = cells[*h.beam];
  if (h.wedge) p.wedge = cells[*h.wedge];
  const auto value = number(cells[*h.value]);
  if (!value) return problem(*h.value, "value '" + cells[*h.value] + "' is not a finite number");
  p.value = *value;
  bool ok = true;
  const auto length = [&](const LengthColumn& column, std::optional<double>& out) {
    if (!column.index || cells[*column.index].empty()) return;
    const auto v = number(cells[*column.index]);
    if (!v) {
      ok = problem(*column.index, "'" + cells[*column.index] + "' is not a finite number");
      return;
    }
    out = *v * column.to_cm;
  };
  length(h.field, p.field_cm);
  length(h.depth, p.depth_cm);
  length(h.off_axis, p.off_axis_cm);
  length(h.ssd, p.ssd_cm);
  if (ok) data.points.push_back(std::move(p));
  return ok;
}

}  // namespace

const std::vector<std::string>& measured_quantities() {
  static const std::vector<std::string> names = {"pdd", "tmr", "oar",          "sc",
                                                 "scp", "sp",  "wedge_factor", "wedge_profile"};
  return names;
}

MeasuredData read_measured_data(const std::filesystem::path& file) {
  MeasuredData data;
  data.file = file;
  const auto bytes = detail::read_file(file);
  if (!bytes) {
    data.problems.push_back(
        Problem{file.string(), std::nullopt, std::nullopt, std::nullopt, "", "cannot read the file"});
    return data;
  }
  data.sha256_hex = sha256_hex(*bytes);
  std::string_view text = *bytes;
  if (text.starts_with("\xEF\xBB\xBF")) text.remove_prefix(3);
  std::optional<Header> header;
  std::size_t line = 0;
  while (!text.empty()) {
    ++line;
    const auto end = text.find('\n');
    const std::string content = trim(text.substr(0, end));
    text = end == std::string_view::npos ? std::string_view{} : text.substr(end + 1);
    if (content.empty() || content.front() == '#') continue;
    const auto cells = split(content);
    if (!header) {
      header = read_header(cells, file.string(), line, data.problems);
      if (!header->quantity || !header->value) return data;
      continue;
    }
    if (cells.size() < header->cell_count) {
      data.problems.push_back(Problem{
          file.string(), std::nullopt, line, std::nullopt, "measured",
          std::to_string(cells.size()) + " cells, the header has " + std::to_string(header->cell_count),
          Severity::error, "unusable measured row"});
      continue;
    }
    read_row(cells, *header, line, data);
  }
  if (!header)
    data.problems.push_back(
        Problem{file.string(), std::nullopt, std::nullopt, std::nullopt, "", "no header row"});
  return data;
}

}  // namespace countersign::beamdata
