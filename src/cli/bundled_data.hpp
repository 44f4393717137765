#pragma once

// Where the bundled (invented) demo data lives: share/countersign/ beside the program's bin/ folder,
// found from the running program's own path, so an installed program and one run from its build
// folder (CMake links build/share/countersign/ to the source tree) both find it. Nothing of the
// source tree's location is compiled in.
//
//   <prefix>/bin/countersign                       <build>/src/countersign
//   <prefix>/share/countersign/beamdata/           <build>/share/countersign/beamdata -> <source>/beamdata
//   <prefix>/share/countersign/demo-plans/         <build>/share/countersign/demo-plans -> <source>/testdata/plans

#include <filesystem>

namespace countersign::cli {

// share/countersign/ for the running program.
[[nodiscard]] std::filesystem::path bundled_data_folder();

// The bundled demo beam-data library and the bundled demo plans.
[[nodiscard]] std::filesystem::path bundled_beamdata();
[[nodiscard]] std::filesystem::path bundled_demo_plans();

}  // namespace countersign::cli
