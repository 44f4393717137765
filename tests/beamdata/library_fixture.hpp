#pragma once

// Helpers for beam-data tests: a small library written by hand (INVENTED data, not the demo
// library), copies of the demo library to damage, and file edits.

#include "support/paths.hpp"

#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>

namespace countersign::beamdata::testing {

inline void write_text(const std::filesystem::path& path, const std::string& text) {
  std::filesystem::create_directories(path.parent_path());
  std::ofstream out(path, std::ios::binary);
  out << text;
  if (!out) throw std::runtime_error("cannot write " + path.string());
}

inline std::string read_text(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// Replaces the first occurrence of `from` (which must exist) in a file.
inline void replace_in_file(const std::filesystem::path& path, const std::string& from,
                            const std::string& to) {
  std::string text = read_text(path);
  const auto at = text.find(from);
  if (at == std::string::npos) throw std::runtime_error("'" + from + "' not found in " + path.string());
  text.replace(at, from.size(), to);
  write_text(path, text);
}

// A temporary folder removed when the test ends.
class TempDir {
 public:
  TempDir() : path_(countersign::test::make_temp_dir("countersign-beamdata")) {}
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  [[nodiscard]] const std::filesystem::path& path() const { return path_; }

 private:
  std::filesystem::path path_;
};

inline std::filesystem::path demo_library() { return countersign::test::source_dir() / "beamdata"; }

// Copies the demo library (its machine and its CT tables) into `dir`; returns the copy's
// FERN-LINAC-1 folder.
inline std::filesystem::path copy_demo_library(const std::filesystem::path& dir) {
  std::filesystem::copy(demo_library() / "FERN-LINAC-1", dir / "FERN-LINAC-1",
                        std::filesystem::copy_options::recursive);
  std::filesystem::copy(demo_library() / "ct", dir / "ct", std::filesystem::copy_options::recursive);
  return dir / "FERN-LINAC-1";
}

// A small library written by hand: one invented machine with one 6 MV beam, tables on a coarse
// grid. INVENTED test data (values rounded from the demo model), not for clinical use.
inline std::filesystem::path write_hand_library(const std::filesystem::path& dir) {
  const auto machine = dir / "TEST-LINAC-H";
  write_text(machine / "machine.toml",
             R"(# INVENTED test data for the fictional Fernhollow Radiotherapy Unit - not for clinical use.
machine = "TEST-LINAC-H"
sad_cm = 100

[[beam]]
id = "X6"
radiation = "PHOTON"
energy_mv = 6
dmax_cm = 1.5
pdd_ssd_cm = 100.0

[beam.calibration]
output_cgy_per_mu = 0.998
field_cm = 10.0
ssd_cm = 100.0
depth_cm = 1.5

[beam.tables]
pdd = "x6/pdd.csv"
tmr = "x6/tmr.csv"
sc = "x6/sc.csv"
sp = "x6/sp.csv"

[[beam.wedge]]
id = "WX30"
angle_deg = 30
kind = "PHYSICAL"
factor = 0.7

[[beam.wedge]]
id = "WX60"
angle_deg = 60
kind = "DYNAMIC"
table = "x6/wf_wx60.csv"

[[beam.tray]]
id = "TRAY-H"
factor = 0.96
)");
  write_text(machine / "x6/pdd.csv", R"(# INVENTED test data
depth_cm,5,10,20
0,36.59,41.02,47.16
1.5,100.00,100.00,100.00
5,82.99,85.54,88.07

10,62.85,66.74,70.47
20,35.35,38.90,42.07
)");
  write_text(machine / "x6/tmr.csv", R"(# INVENTED test data
depth_cm,5,10,20
0,0.3553,0.3984,0.4580
1.5,1.0000,1.0000,1.0000
5,0.8855,0.9121,0.9398
10,0.7309,0.7747,0.8204
20,0.4803,0.5266,0.5686
)");
  write_text(machine / "x6/sc.csv", "field_cm,sc\n4,0.9586\n5,0.9673\n10,1.0000\n20,1.0319\n30,1.0436\n");
  write_text(machine / "x6/sp.csv",
             "field_cm,sp\r\n4,0.9683\r\n5,0.9748\r\n10,1.0000\r\n20,1.0276\r\n30,1.0396\r\n");
  write_text(machine / "x6/wf_wx60.csv", "depth_cm,5,20\n1.5,0.50,0.51\n20,0.53,0.54\n");
  return dir;
}

}  // namespace countersign::beamdata::testing

namespace countersign::beamdata::testing {

// Replaces cell `column` (1-based) of the CSV row whose first cell is `row_key`; returns that
// row's line number (1-based) in the file.
inline std::size_t set_cell(const std::filesystem::path& path, const std::string& row_key, std::size_t column,
                            const std::string& text) {
  std::istringstream in(read_text(path));
  std::string out;
  std::string line;
  std::size_t number = 0;
  std::size_t found = 0;
  while (std::getline(in, line)) {
    ++number;
    if (found == 0 && line.rfind(row_key + ",", 0) == 0) {
      found = number;
      std::size_t start = 0;
      for (std::size_t c = 1; c < column; ++c) start = line.find(',', start) + 1;
      const auto end = line.find(',', start);
      line = line.substr(0, start) + text + (end == std::string::npos ? std::string{} : line.substr(end));
    }
    out += line + "\n";
  }
  if (found == 0) throw std::runtime_error("no row '" + row_key + "' in " + path.string());
  write_text(path, out);
  return found;
}

// The line number of the first line starting with `prefix`.
inline std::size_t line_of(const std::filesystem::path& path, const std::string& prefix) {
  std::istringstream in(read_text(path));
  std::string line;
  std::size_t number = 0;
  while (std::getline(in, line)) {
    ++number;
    if (line.rfind(prefix, 0) == 0) return number;
  }
  throw std::runtime_error("no line '" + prefix + "' in " + path.string());
}

}  // namespace countersign::beamdata::testing
