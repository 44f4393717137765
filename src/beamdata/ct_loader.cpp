#include "ct_loader.hpp"

#include "csv_reader.hpp"

#include <algorithm>
#include <vector>

namespace countersign::beamdata::detail {

namespace fs = std::filesystem;

namespace {

std::vector<fs::path> ct_files(const fs::path& ct_folder, Inspection& inspection) {
  std::vector<fs::path> files;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator(ct_folder, ec)) {
    if (entry.path().extension() == ".csv") {
      files.push_back(entry.path());
    } else {
      inspection.problems.push_back(Problem{entry.path().string(), std::nullopt, std::nullopt, std::nullopt,
                                            "ct", "not a .csv table, ignored", Severity::warning});
    }
  }
  std::sort(files.begin(), files.end());
  return files;
}

}  // namespace

bool read_ct_tables(const fs::path& root, Inspection& inspection, Fingerprint& fingerprint) {
  const fs::path folder = root / "ct";
  std::error_code ec;
  if (!fs::is_directory(folder, ec)) return true;
  bool complete = true;
  for (const fs::path& file : ct_files(folder, inspection)) {
    const std::string name = file.filename().string();
    const auto resolved = confined_path(folder, name);
    const std::string shown = file.string();
    const auto problem = [&](std::string message) {
      inspection.problems.push_back(
          Problem{shown, std::nullopt, std::nullopt, std::nullopt, "ct", std::move(message)});
      complete = false;
    };
    if (const auto* why = std::get_if<std::string>(&resolved)) {
      problem(*why);
      continue;
    }
    const auto bytes = read_file(std::get<fs::path>(resolved));
    if (!bytes) {
      problem("cannot read the file");
      continue;
    }
    fingerprint.add("ct/" + name, *bytes);
    const TableSource source{shown, "ct/" + name, "relative_electron_density"};
    Read1D read = parse_table1d(*bytes, source, inspection.problems, "hu");
    inspection.lines[shown] = TableLines{read.header_line, read.row_lines};
    if (!read.table) {
      complete = false;
      continue;
    }
    const std::string stem = file.stem().string();
    inspection.ct.tables.push_back(CtDensityTable{"ct/" + name, stem == "default" ? std::string{} : stem,
                                                  read.table->axis(), read.table->values()});
  }
  return complete;
}

}  // namespace countersign::beamdata::detail
