#include "import_write.hpp"

#include <countersign/beamdata/csv.hpp>
#include <countersign/beamdata/sha256.hpp>
#include <countersign/util/version.hpp>

#include "library_files.hpp"
#include "table_checks.hpp"
#include "table_notes.hpp"

#include <chrono>
#include <ctime>
#include <fstream>
#include <sstream>

namespace countersign::beamdata::detail {

namespace fs = std::filesystem;

namespace {

std::string toml_string(const std::string& s) {
  std::string out = "\"";
  for (const char c : s) {
    if (c == '"' || c == '\\') out += '\\';
    if (c == '\n') {
      out += "\\n";
      continue;
    }
    out += c;
  }
  return out + "\"";
}

std::string utc_now() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm utc{};
  gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

std::string table_bytes(const PendingTable& t, const MeasuredData& data) {
  const std::vector<std::string> comments = {
      "Imported by countersign beamdata import from " + data.file.filename().string() + " (SHA-256 " +
          data.sha256_hex + ")",
      std::to_string(t.measured_points) + " measured points; " + t.method, table_axes_note(t.quantity)};
  std::ostringstream out;
  if (t.column_axis.empty()) {
    write_table(out, Table1D{t.relative, t.quantity, t.row_axis, t.rows, t.values}, comments, 4);
  } else {
    write_table(out, Table2D{t.relative, t.quantity, t.row_axis, t.rows, t.column_axis, t.columns, t.values},
                comments, t.decimals);
  }
  return out.str();
}

// Writes by a temporary file in the same folder and a rename, so a reader never sees half a table.
bool write_atomically(const fs::path& path, const std::string& bytes) {
  std::error_code ec;
  fs::create_directories(path.parent_path(), ec);
  const fs::path temporary = path.string() + ".import-tmp";
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    out << bytes;
    out.close();
    if (!out) return false;
  }
  fs::rename(temporary, path, ec);
  return !ec;
}

std::string provenance_text(const ImportOptions& o, const MeasuredData& data, const ImportResult& result) {
  std::ostringstream out;
  out << "# Provenance of the tables written by `countersign beamdata import`. Not part of the beam-data\n"
      << "# format nor of the library's SHA-256; keep it with the commissioning record.\n"
      << "imported_at_utc = " << toml_string(utc_now()) << "\n"
      << "software = " << toml_string(std::string{"countersign "} + version_string) << "\n"
      << "beam = " << toml_string(o.beam_id) << "\n"
      << "measured_file = " << toml_string(fs::absolute(data.file).string()) << "\n"
      << "measured_sha256 = " << toml_string(data.sha256_hex) << "\n"
      << "resampling = " << toml_string(std::string{to_string(o.method)}) << "\n"
      << "resampling_description = " << toml_string(describe(o.method)) << "\n"
      << "extrapolation = \"none: cells outside the measured range are refused\"\n";
  if (o.dmax_cm) out << "dmax_cm_given = " << number_text(*o.dmax_cm) << "\n";
  out << "notes = [";
  for (std::size_t i = 0; i < result.notes.size(); ++i)
    out << (i ? ", " : "") << toml_string(result.notes[i]);
  out << "]\n";
  for (const auto& limit : default_gap_limits()) {
    double used = limit.max_gap_cm;
    for (const auto& given : o.gap_limits)
      if (given.quantity == limit.quantity && given.axis == limit.axis) used = given.max_gap_cm;
    out << "\n[[gap_limit]]\nquantity = " << toml_string(limit.quantity)
        << "\naxis = " << toml_string(limit.axis) << "\nmax_gap_cm = " << number_text(used) << "\n";
  }
  for (const auto& t : result.tables) {
    out << "\n[[table]]\nfile = " << toml_string(t.file) << "\nquantity = " << toml_string(t.quantity)
        << "\nmeasured_points = " << t.measured_points << "\nmethod = " << toml_string(t.method)
        << "\nsha256 = " << toml_string(t.sha256_hex) << "\n";
  }
  return out.str();
}

}  // namespace

PendingTable PendingTable::two_axis(const std::string& relative, const std::string& quantity,
                                    const GridRequest& r, std::vector<double> values, int decimals,
                                    std::size_t points, std::string method) {
  return PendingTable{relative,  quantity,          r.row_axis, r.column_axis, r.rows,
                      r.columns, std::move(values), decimals,   points,        std::move(method)};
}

PendingTable PendingTable::one_axis(const std::string& relative, const std::string& quantity,
                                    std::vector<double> axis, std::vector<double> values,
                                    std::string method) {
  return PendingTable{relative, quantity,          "field_cm", "", std::move(axis),
                      {},       std::move(values), 4,          0,  std::move(method)};
}

void write_import(const ImportOptions& o, const MeasuredData& data, const std::vector<PendingTable>& tables,
                  ImportResult& result) {
  std::vector<fs::path> paths;
  for (const auto& t : tables) {
    const auto resolved = confined_new_path(o.machine_folder, t.relative);
    if (const auto* why = std::get_if<std::string>(&resolved)) {
      result.problems.push_back(Problem{(o.machine_folder / "machine.toml").string(), std::nullopt,
                                        std::nullopt, std::nullopt, t.quantity, "names " + *why});
    } else {
      paths.push_back(std::get<fs::path>(resolved));
    }
  }
  if (!result.ok()) return;
  for (std::size_t i = 0; i < tables.size(); ++i) {
    const std::string bytes = table_bytes(tables[i], data);
    if (!write_atomically(paths[i], bytes)) {
      result.problems.push_back(Problem{paths[i].string(), std::nullopt, std::nullopt, std::nullopt,
                                        tables[i].quantity, "cannot write the file"});
      return;
    }
    result.tables.push_back(ImportedTable{tables[i].relative, tables[i].quantity, tables[i].measured_points,
                                          tables[i].method, sha256_hex(bytes)});
  }
  result.provenance_file = paths.front().parent_path() / ("import-provenance-" + o.beam_id + ".toml");
  if (!write_atomically(result.provenance_file, provenance_text(o, data, result)))
    result.problems.push_back(Problem{result.provenance_file.string(), std::nullopt, std::nullopt,
                                      std::nullopt, "", "cannot write the provenance note"});
}

}  // namespace countersign::beamdata::detail
