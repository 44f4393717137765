#pragma once

// Writing what `beamdata import` resampled: every table (each by a temporary file and a rename),
// then the provenance note. Nothing is written when a target path may not be used.

#include <countersign/beamdata/import.hpp>
#include <countersign/beamdata/measured_data.hpp>

#include "import_steps.hpp"

#include <string>
#include <vector>

namespace countersign::beamdata::detail {

// A resampled table waiting to be written.
struct PendingTable {
  std::string relative;  // path as named in the manifest
  std::string quantity;
  std::string row_axis, column_axis;  // column_axis empty for one-axis tables
  std::vector<double> rows, columns;
  std::vector<double> values;  // row-major
  int decimals = 4;
  std::size_t measured_points = 0;
  std::string method;

  static PendingTable two_axis(const std::string& relative, const std::string& quantity, const GridRequest& r,
                               std::vector<double> values, int decimals, std::size_t points,
                               std::string method);
  static PendingTable one_axis(const std::string& relative, const std::string& quantity,
                               std::vector<double> axis, std::vector<double> values, std::string method);
};

void write_import(const ImportOptions& options, const MeasuredData& data,
                  const std::vector<PendingTable>& tables, ImportResult& result);

}  // namespace countersign::beamdata::detail
