#pragma once

// The loader's full pass over a library folder: reads every manifest and every table it names,
// collecting all problems, and keeps the file lines of table rows for later findings.

#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/problem.hpp>

#include <cstddef>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata::detail {

struct TableLines {
  std::size_t header_line = 0;
  std::vector<std::size_t> row_lines;  // file line of each data row
};

struct Inspection {
  Library library;        // the machines that could be read completely
  bool complete = false;  // every manifest and table could be read
  std::vector<Problem> problems;
  std::map<std::string, TableLines> lines;  // keyed by problem_path(machine, table)
  std::size_t machine_count = 0;
  std::size_t beam_count = 0;
  std::string sha256_hex;  // over every manifest and table that could be read
};

// The path used in problems for a table of a machine: machine folder / path in the manifest.
[[nodiscard]] std::string problem_path(const Machine& machine, const std::string& table_file);

[[nodiscard]] Inspection inspect_library(const std::filesystem::path& folder);

struct PhysicsFindings {
  std::vector<Problem> problems;
  std::size_t consistency_nodes_compared = 0;
  std::size_t consistency_nodes_skipped = 0;
};

// Normalisation, plausible ranges and PDD/TMR consistency of a structurally complete library.
[[nodiscard]] PhysicsFindings check_physics(const Library& library,
                                            const std::map<std::string, TableLines>& lines);

}  // namespace countersign::beamdata::detail
