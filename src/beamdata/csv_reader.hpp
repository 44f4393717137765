#pragma once

// The CSV parser behind the loader and validation: it keeps going after a bad cell so that every
// problem of a table is reported, and remembers the file line of every data row.

#include <countersign/beamdata/problem.hpp>
#include <countersign/beamdata/table.hpp>

#include <cstddef>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::beamdata::detail {

struct TableSource {
  std::string problem_file;  // path for problem messages (as built from the user's folder)
  std::string table_file;    // path stored in the table (as named in the manifest)
  std::string quantity;      // "pdd", "tmr", "sc", ...
};

struct Read2D {
  std::optional<Table2D> table;        // set only when the table has no problem
  std::vector<std::size_t> row_lines;  // file line of each data row
  std::size_t header_line = 0;
};

struct Read1D {
  std::optional<Table1D> table;
  std::vector<std::size_t> row_lines;
  std::size_t header_line = 0;
};

[[nodiscard]] Read2D parse_table2d(std::string_view text, const TableSource& source,
                                   const std::string& row_axis_name, const std::string& column_axis_name,
                                   std::vector<Problem>& problems);

// A one-axis table: header "<axis_name>,<quantity>", then one pair per row.
[[nodiscard]] Read1D parse_table1d(std::string_view text, const TableSource& source,
                                   std::vector<Problem>& problems, const std::string& axis_name = "field_cm");

// The axes of a table whose cells may still be empty (a template): the header's column values
// and every row's first cell. nullopt when the header does not start with row_axis_name or an
// axis value is not a number or not strictly increasing. One-axis tables have no columns.
struct Grid {
  std::vector<double> rows;
  std::vector<double> columns;
};
[[nodiscard]] std::optional<Grid> parse_grid(std::string_view text, const std::string& row_axis_name);

}  // namespace countersign::beamdata::detail
