#pragma once

// CT number to relative electron density tables of a beam-data library (beamdata/FORMAT.md "CT
// number to relative electron density"): <library>/ct/default.csv and <library>/ct/<STATION>.csv.

#include <string>
#include <string_view>
#include <vector>

namespace countersign::beamdata {

struct DensityLookup {
  double relative_electron_density = 0.0;
  bool clamped = false;  // the CT number lay outside the table: the end row's density was used
};

// One table: Hounsfield units strictly increasing, one density per row. Plain value.
struct CtDensityTable {
  std::string file;     // as fingerprinted, e.g. "ct/default.csv"
  std::string station;  // the Station Name (0008,1010) it is chosen for; empty for the default table
  std::vector<double> hu;
  std::vector<double> relative_electron_density;

  // Linear interpolation between rows; below the first row the first row's density, above the
  // last row the last's, marked clamped. The table must not be empty.
  [[nodiscard]] DensityLookup density(double hu_value) const;
};

struct CtDensityTables {
  std::vector<CtDensityTable> tables;  // the default (station empty) and station tables, by file name

  // The table of a CT's Station Name (leading and trailing spaces ignored, otherwise exact), else
  // the default table, else nullptr.
  [[nodiscard]] const CtDensityTable* for_station(std::string_view station_name) const;
  [[nodiscard]] const CtDensityTable* default_table() const;
  [[nodiscard]] bool empty() const { return tables.empty(); }
};

}  // namespace countersign::beamdata
