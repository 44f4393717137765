#pragma once

// `beamdata import`: measured data in long format (measured_data.hpp) resampled onto the grids of
// one beam's tables, normalised as the format requires, and written with a provenance note. All or
// nothing: when any table cannot be made without extrapolating or bridging a gap wider than its
// stated limit, nothing is written and every such cell is reported.

#include <countersign/beamdata/problem.hpp>
#include <countersign/beamdata/resample.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata {

// The widest gap between neighbouring measured points that resampling may bridge, per quantity
// and axis ("pdd", "depth_cm", 1.0). Defaults: default_gap_limits().
struct GapLimit {
  std::string quantity;
  std::string axis;
  double max_gap_cm = 0.0;
};

// Scanned curves 1 cm along depth or off-axis distance; 5 cm between field sizes and between the
// depths of profiles or wedge factors (common practice, no source).
[[nodiscard]] const std::vector<GapLimit>& default_gap_limits();

// Parses "pdd:depth_cm=0.5"; nullopt when malformed or not a known quantity and axis.
[[nodiscard]] std::optional<GapLimit> parse_gap_limit(const std::string& text);

struct ImportOptions {
  std::filesystem::path measured_file;
  std::filesystem::path machine_folder;  // holds machine.toml, which names the beam's tables
  std::string beam_id;
  ResamplingMethod method = ResamplingMethod::monotone_cubic;
  std::vector<GapLimit> gap_limits;  // overrides of the defaults
  std::optional<double> dmax_cm;     // else the manifest's dmax_cm
};

struct ImportedTable {
  std::string file;      // as named in the manifest
  std::string quantity;  // "pdd", "tmr", "oar", "sc", "sp", "wedge_factor", "wedge_oar"
  std::size_t measured_points = 0;
  std::string method;      // resampling and normalisation, one sentence
  std::string sha256_hex;  // of the written file
};

struct ImportResult {
  std::vector<ImportedTable> tables;  // written; empty when there are problems
  std::vector<std::string> notes;     // what was not imported and why, comparisons with constants
  std::vector<Problem> problems;      // errors: nothing was written
  std::filesystem::path provenance_file;
  std::string measured_sha256_hex;

  [[nodiscard]] bool ok() const { return problems.empty(); }
};

[[nodiscard]] ImportResult import_measured_data(const ImportOptions& options);

}  // namespace countersign::beamdata
