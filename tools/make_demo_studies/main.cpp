// make_demo_studies: writes the INVENTED demo CT phantoms of the fictional Fernhollow Radiotherapy
// Unit (CT series, RT Structure Set, RT Plans) into <testdata>/studies/<phantom>/, and the geometry
// the generator knows of each beam into <testdata>/studies/EXPECTED_GEOMETRY.tsv. Reproducible:
// fixed UIDs and dates.
//
//   make_demo_studies <testdata-dir>
//   make_demo_studies --bench <dir> [slices]   a 512 x 512 x slices (default 100) study for the
//                                               loading benchmark (not committed)

#include "phantom.hpp"
#include "study_plans.hpp"
#include "write_study.hpp"

#include <dcmtk/oflog/oflog.h>

#include <fmt/format.h>

#include <cmath>
#include <exception>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <string>

namespace {

namespace fs = std::filesystem;
using namespace make_demo_studies;

std::vector<BeamGeometry> write_study(const PhantomSpec& phantom, const fs::path& dir) {
  fs::create_directories(dir);
  write_ct_series(phantom, dir);
  write_structure_set(phantom, dir);
  return write_study_plans(phantom, dir);
}

// Up to 10 significant digits; rounding residue below a nanometre written as 0.
std::string number(double value) { return fmt::format("{:.10g}", std::abs(value) < 5e-10 ? 0.0 : value); }
std::string triple(const std::array<double, 3>& p) {
  return number(p[0]) + "\\" + number(p[1]) + "\\" + number(p[2]);
}

void write_manifest(const std::vector<std::pair<std::string, BeamGeometry>>& rows, const fs::path& path) {
  std::ofstream out(path);
  out << "# Geometry of each beam of the INVENTED demo studies, computed by tools/make_demo_studies from "
         "the\n"
         "# phantoms' own polygons (not from the CT files): central axis of the gantry angle through the\n"
         "# isocentre (HFS, couch 0), dose point at the isocentre. Distances in mm. Entry, SSD and depth "
         "are\n"
         "# exact for the polygons; the radiological depth is that of the CT voxels (each of the CT number "
         "at\n"
         "# its centre) by the midpoint rule in 0.01 mm steps, with the demo table -1000 HU -> 0.00,\n"
         "# 0 HU -> 1.00, 3000 HU -> 2.50 (linear).\n"
         "study\tplan_file\tbeam_number\tbeam_name\tgantry_deg\tisocenter_mm\tentry_mm\tssd_mm\tdepth_mm\t"
         "radiological_depth_mm\n";
  for (const auto& [study, g] : rows) {
    out << fmt::format("{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\t{}\n", study, g.plan_file, g.beam_number,
                       g.beam_name, number(g.gantry_deg), triple(g.isocenter_mm), triple(g.entry_mm),
                       number(g.ssd_mm), number(g.depth_mm), number(g.radiological_depth_mm));
  }
}

}  // namespace

int main(int argc, char** argv) {
  OFLog::getLogger("dcmtk").setLogLevel(OFLogger::ERROR_LOG_LEVEL);
  try {
    const std::string first = argc > 1 ? argv[1] : "";
    if (first == "--bench" && (argc == 3 || argc == 4)) {
      const std::size_t slices = argc == 4 ? std::stoul(argv[3]) : 100;
      write_study(bench_phantom(slices), argv[2]);
      std::cout << "wrote a 512 x 512 x " << slices << " INVENTED study under " << argv[2] << "\n";
      return 0;
    }
    if (argc != 2 || first.starts_with("-")) {
      std::cerr << "usage: make_demo_studies <testdata-dir> | --bench <dir> [slices]\n";
      return 3;
    }
    const fs::path root = fs::path(argv[1]) / "studies";
    std::vector<std::pair<std::string, BeamGeometry>> rows;
    for (const auto& phantom : demo_phantoms()) {
      for (auto& g : write_study(phantom, root / phantom.folder)) rows.emplace_back(phantom.folder, g);
    }
    write_manifest(rows, root / "EXPECTED_GEOMETRY.tsv");
    std::cout << "wrote " << demo_phantoms().size() << " INVENTED demo studies under " << root.string()
              << "\n";
    return 0;
  } catch (const std::exception& e) {
    std::cerr << "make_demo_studies: " << e.what() << "\n";
    return 1;
  }
}
