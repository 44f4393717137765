#pragma once

// Measured beam data in long format, as `beamdata import` reads it (beamdata/FORMAT.md "Measured
// data for import"): one row per measured point, a header naming the columns with their units.
//
//   quantity,beam,wedge,field_cm,depth_mm,off_axis_mm,value
//   pdd,6X,,10,15.0,,100.0
//
// Columns: `quantity` and `value` (required); `field_cm`/`field_mm`, `depth_cm`/`depth_mm`,
// `off_axis_cm`/`off_axis_mm`, `ssd_cm`/`ssd_mm` (converted to cm); `beam` (a beam id; rows of
// other beams are skipped) and `wedge` (a wedge id, for wedge rows). Quantities: pdd, tmr, oar
// (or profile), sc, scp, sp, wedge_factor, wedge_profile.

#include <countersign/beamdata/problem.hpp>

#include <cstddef>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata {

struct MeasuredPoint {
  std::string quantity;  // lower case, "profile" read as "oar"
  std::string beam;      // empty when the file has no beam column
  std::string wedge;     // empty unless a wedge row
  std::optional<double> field_cm;
  std::optional<double> depth_cm;
  std::optional<double> off_axis_cm;
  std::optional<double> ssd_cm;
  double value = 0.0;
  std::size_t line = 0;  // line in the file (1-based)
};

struct MeasuredData {
  std::filesystem::path file;
  std::string sha256_hex;  // of the file's bytes
  std::vector<MeasuredPoint> points;
  std::vector<Problem> problems;  // every bad row, naming line and column
};

// Reads a long-format file; a file that cannot be read at all gives one problem.
[[nodiscard]] MeasuredData read_measured_data(const std::filesystem::path& file);

// The quantities the long format knows.
[[nodiscard]] const std::vector<std::string>& measured_quantities();

}  // namespace countersign::beamdata
