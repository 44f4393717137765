#include <countersign/beamdata/csv.hpp>

#include "csv_reader.hpp"

#include <cmath>
#include <fstream>
#include <iomanip>
#include <ostream>
#include <sstream>

namespace countersign::beamdata {

namespace {
Expected<std::string> read_text(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) return Error{ErrorKind::io, file.string(), "", "", "cannot open the file"};
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) return Error{ErrorKind::io, file.string(), "", "", "cannot read the file"};
  return text.str();
}

void write_comments(std::ostream& out, const std::vector<std::string>& comments) {
  for (const auto& comment : comments) out << "# " << comment << '\n';
}

// Axis values are written with as few digits as represent them exactly (e.g. 1.5, 10).
std::string axis_text(double value) {
  std::ostringstream text;
  text << std::setprecision(12) << value;
  return text.str();
}
}  // namespace

Expected<Table2D> read_table2d(const std::filesystem::path& file, const std::string& quantity,
                               const std::string& row_axis_name, const std::string& column_axis_name) {
  const auto text = read_text(file);
  if (!text) return text.error();
  std::vector<Problem> problems;
  const detail::TableSource source{file.string(), file.string(), quantity};
  auto read = detail::parse_table2d(*text, source, row_axis_name, column_axis_name, problems);
  if (!problems.empty()) return problems.front().to_error();
  return std::move(*read.table);
}

Expected<Table1D> read_table1d(const std::filesystem::path& file, const std::string& quantity) {
  const auto text = read_text(file);
  if (!text) return text.error();
  std::vector<Problem> problems;
  const detail::TableSource source{file.string(), file.string(), quantity};
  auto read = detail::parse_table1d(*text, source, problems);
  if (!problems.empty()) return problems.front().to_error();
  return std::move(*read.table);
}

void write_table(std::ostream& out, const Table2D& table, const std::vector<std::string>& comments,
                 int decimals) {
  write_comments(out, comments);
  out << table.row_axis_name();
  for (const double column : table.columns()) out << ',' << axis_text(column);
  out << '\n';
  for (std::size_t r = 0; r < table.rows().size(); ++r) {
    out << axis_text(table.rows()[r]);
    for (std::size_t c = 0; c < table.columns().size(); ++c) {
      out << ',';
      // A cell without a value (NaN) is written empty, so that no reader takes it for data.
      if (std::isfinite(table.cell(r, c)))
        out << std::fixed << std::setprecision(decimals) << table.cell(r, c) << std::defaultfloat;
    }
    out << '\n';
  }
}

void write_table(std::ostream& out, const Table1D& table, const std::vector<std::string>& comments,
                 int decimals) {
  write_comments(out, comments);
  out << table.axis_name() << ',' << table.quantity() << '\n';
  for (std::size_t i = 0; i < table.axis().size(); ++i) {
    out << axis_text(table.axis()[i]) << ',';
    if (std::isfinite(table.values()[i]))
      out << std::fixed << std::setprecision(decimals) << table.values()[i] << std::defaultfloat;
    out << '\n';
  }
}

}  // namespace countersign::beamdata
