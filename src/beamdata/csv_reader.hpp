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

[[nodiscard]] Read1D parse_table1d(std::string_view text, const TableSource& source,
                                   std::vector<Problem>& problems);

}  // namespace countersign::beamdata::detail
