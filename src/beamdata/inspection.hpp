#pragma once

// The loader's full pass over a library folder: reads every manifest and every table it names,
// collecting all problems, and keeps what could be read of every beam — even an incomplete one —
// so that structural problems never hide physics ones.

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

// What could be read of one photon [[beam]]; tables that could not be read are empty.
struct BeamDraft {
  BeamData data;
  bool complete = false;  // every required key and table was read without an error
  bool dmax_known = false;
  bool pdd_ssd_known = false;
  bool calibration_known = false;
};

struct ElectronDraft {
  ElectronBeamData data;
  bool complete = false;
  bool dmax_known = false;
  bool pdd_ssd_known = false;
  bool calibration_known = false;
};

struct MachineDraft {
  Machine machine;  // name, aliases, sad_cm, manifest; beams are in the drafts below
  std::vector<BeamDraft> beams;
  std::vector<ElectronDraft> electron_beams;
  bool complete = false;  // the manifest and every beam were read without an error
  bool sad_known = false;
};

struct Inspection {
  std::filesystem::path root;
  std::vector<MachineDraft> machines;
  CtDensityTables ct;
  bool complete = false;  // every manifest and table could be read
  std::vector<Problem> problems;
  std::map<std::string, TableLines> lines;  // keyed by the table's problem path
  std::size_t machine_count = 0;
  std::size_t beam_count = 0;
  std::string sha256_hex;  // over every manifest and table that could be read

  // Every machine with every beam that could be read, complete or not (for reports).
  [[nodiscard]] Library readable_library() const;
};

// The path used in problems for a table of a machine: machine folder / path in the manifest.
[[nodiscard]] std::string problem_path(const Machine& machine, const std::string& table_file);

[[nodiscard]] Inspection inspect_library(const std::filesystem::path& folder);

struct PhysicsFindings {
  std::vector<Problem> problems;
  std::size_t consistency_nodes_compared = 0;
  std::size_t consistency_nodes_skipped = 0;
};

// Normalisation, plausible ranges, suspicious data and PDD/TMR consistency of whatever could be
// read: every table present is checked, every rule whose inputs are known is applied.
[[nodiscard]] PhysicsFindings check_physics(const Inspection& inspection);

}  // namespace countersign::beamdata::detail
