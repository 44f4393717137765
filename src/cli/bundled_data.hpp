#pragma once

// Where the bundled (invented) demo data lives: share/countersign/ beside the program's bin/ folder,
// found from the running program's own path, so an installed program and one run from its build
// folder (CMake links build/share/countersign/ to the source tree) both find it. Nothing of the
// source tree's location is compiled in.
//
//   <prefix>/bin/countersign                       <build>/src/countersign
//   <prefix>/share/countersign/beamdata/           <build>/share/countersign/beamdata -> <source>/beamdata
//   <prefix>/share/countersign/demo-plans/         <build>/share/countersign/demo-plans -> <source>/testdata/plans
//   <prefix>/share/countersign/dicom/reader.dic    <build>/share/countersign/dicom/reader.dic (written by the build)

#include <filesystem>

namespace countersign::cli {

// share/countersign/ for the running program.
[[nodiscard]] std::filesystem::path bundled_data_folder();

// The bundled demo beam-data library and the bundled demo plans.
[[nodiscard]] std::filesystem::path bundled_beamdata();
[[nodiscard]] std::filesystem::path bundled_demo_plans();

// Points the DICOM reader at the small dictionary of the attributes it reads (dicom/dictionary.hpp),
// for commands that only read plans: check, show, explain, selftest. Not for the services.
void use_bundled_reader_dictionary();

}  // namespace countersign::cli
