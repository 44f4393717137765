// load_study: reads a plan and loads the study it refers to from the files and folders given, as
// `check STUDY_FOLDER/` will; prints one summary line. For whole-process timing against dcmdump
// over the same files (tools/bench-study).
//
//   load_study PLAN.dcm FILE_OR_FOLDER...

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>

#include <filesystem>
#include <iostream>
#include <vector>

int main(int argc, char** argv) {
  using namespace countersign;
  if (argc < 3) {
    std::cerr << "usage: load_study PLAN.dcm FILE_OR_FOLDER...\n";
    return 3;
  }
  auto plan = dicom::read_plan_file(argv[1]);
  if (!plan) {
    std::cerr << plan.error().message() << "\n";
    return 3;
  }
  const std::vector<std::filesystem::path> inputs(argv + 2, argv + argc);
  const auto study = dicom::load_study_for_plan(plan.value(), inputs);
  if (!study) {
    std::cerr << study.problem().message() << "\n";
    return 2;
  }
  const auto& g = study->ct.grid;
  std::cout << "CT " << g.size[0] << " x " << g.size[1] << " x " << g.size[2] << ", body "
            << study::code(study->body.source) << " " << study->body.voxel_count << " voxels\n";
  return 0;
}
