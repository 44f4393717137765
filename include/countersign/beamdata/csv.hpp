#pragma once

// Reading and writing single beam-data CSV tables (beamdata/FORMAT.md "CSV tables"), for the
// commissioning conversions that work on loose files rather than a whole library.

#include <countersign/beamdata/table.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <iosfwd>
#include <string>
#include <vector>

namespace countersign::beamdata {

// A two-axis table: header "<row_axis_name>,<column values>...", then one row per row-axis value.
// The first problem found is returned, naming the file, row and column.
[[nodiscard]] Expected<Table2D> read_table2d(const std::filesystem::path& file, const std::string& quantity,
                                             const std::string& row_axis_name,
                                             const std::string& column_axis_name);

// A one-axis table: header "field_cm,<quantity>", then one pair per row.
[[nodiscard]] Expected<Table1D> read_table1d(const std::filesystem::path& file, const std::string& quantity);

// Writes a table in the same format; each comment line is prefixed with "# ". A cell that is not a
// finite number is written empty.
void write_table(std::ostream& out, const Table2D& table, const std::vector<std::string>& comments,
                 int decimals);
void write_table(std::ostream& out, const Table1D& table, const std::vector<std::string>& comments,
                 int decimals);

}  // namespace countersign::beamdata
