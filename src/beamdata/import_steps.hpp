#pragma once

// The steps of `beamdata import`: what the manifest says about the beam (import_targets.cpp) and
// resampling scattered measured points onto a table's grid (import_grid.cpp).

#include <countersign/beamdata/import.hpp>
#include <countersign/beamdata/problem.hpp>
#include <countersign/beamdata/resample.hpp>

#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata::detail {

struct WedgeTarget {
  std::string table;              // manifest `table`, empty when none
  std::string orientation_table;  // manifest `orientation_table`, empty when none
  std::optional<double> factor;   // manifest constant
};

// What the manifest says about one beam.
struct ImportTargets {
  std::optional<double> dmax_cm;
  std::optional<double> pdd_ssd_cm;
  std::map<std::string, std::string> tables;  // "pdd" -> "6X/pdd.csv", as named under [beam.tables]
  std::map<std::string, WedgeTarget> wedges;  // by wedge id
};

// Reads the beam's entry of machine.toml; a problem when the manifest or the beam is missing.
[[nodiscard]] std::optional<ImportTargets> read_import_targets(const std::filesystem::path& machine_folder,
                                                               const std::string& beam_id,
                                                               std::vector<Problem>& problems);

// A measured point placed on a two-axis table: row (depth), column (field or off-axis), value.
struct Sample {
  double row = 0.0;
  double column = 0.0;
  double value = 0.0;
};

enum class CurvesRun {
  along_rows,     // each measured curve has a fixed column (depth scans at one field size)
  along_columns,  // each measured curve has a fixed row (profiles at one depth)
};

// Per curve: divide by the curve's value at `at` (along its own axis) and multiply by `to`.
struct Normalisation {
  double at = 0.0;
  double to = 1.0;
};

struct GridRequest {
  std::string quantity;  // for messages
  std::string row_axis, column_axis;
  std::vector<double> rows, columns;  // the table's grid
  CurvesRun run = CurvesRun::along_rows;
  ResamplingMethod method = ResamplingMethod::monotone_cubic;
  double max_gap_along_cm = 1.0;   // within a curve
  double max_gap_across_cm = 5.0;  // between curves
  std::optional<Normalisation> normalisation;
  bool fold_mirror = false;  // profiles: average the two halves at |x|
};

// Values row-major on the grid; a problem (naming the cell and the reason) for every cell that
// could not be filled. `file` names the target table in problems.
[[nodiscard]] std::vector<double> resample_grid(const std::vector<Sample>& samples,
                                                const GridRequest& request, const std::string& file,
                                                std::vector<Problem>& problems);

// A one-axis factor: resampled at `axis` and normalised to 1 at `normalise_at`.
[[nodiscard]] std::vector<double> resample_factor(const std::vector<std::pair<double, double>>& points,
                                                  const std::vector<double>& axis, double normalise_at,
                                                  ResamplingMethod method, double max_gap_cm,
                                                  const std::string& quantity, const std::string& file,
                                                  std::vector<Problem>& problems);

}  // namespace countersign::beamdata::detail
