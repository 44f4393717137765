#pragma once

// Helpers for the study-reader tests: the demo studies (testdata/studies, INVENTED), copies of them
// in a temporary folder that a test may damage with DCMTK's dcmodify, and loading.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <string>

namespace countersign::test {

inline std::filesystem::path demo_study(const std::string& name) {
  return source_dir() / "testdata/studies" / name;
}

// The RT Plan file of a demo study folder (RP.*.dcm).
inline std::filesystem::path plan_file_in(const std::filesystem::path& folder) {
  for (const auto& entry : std::filesystem::directory_iterator(folder)) {
    if (entry.path().filename().string().rfind("RP.", 0) == 0) return entry.path();
  }
  throw std::runtime_error("no RP.*.dcm in " + folder.string());
}

// A demo study copied into a fresh temporary folder, removed at the end of the test.
class StudyCopy {
 public:
  explicit StudyCopy(const std::string& name) : dir_(make_temp_dir("countersign-study")) {
    std::filesystem::copy(demo_study(name), dir_);
  }
  ~StudyCopy() { std::filesystem::remove_all(dir_); }
  StudyCopy(const StudyCopy&) = delete;
  StudyCopy& operator=(const StudyCopy&) = delete;

  [[nodiscard]] const std::filesystem::path& dir() const { return dir_; }
  [[nodiscard]] std::filesystem::path file(const std::string& name) const { return dir_ / name; }

  // Runs DCMTK's dcmodify (no backup files) on one file of the copy.
  void modify(const std::string& file_name, const std::string& arguments) const {
    const auto result = run_command("dcmodify -nb " + arguments + " " + quote(file(file_name).string()));
    ASSERT_EQ(result.exit_code, 0) << "dcmodify " << arguments << ": " << result.err;
  }
  void modify_ct(const std::string& arguments) const {
    for (const auto& entry : std::filesystem::directory_iterator(dir_)) {
      const std::string name = entry.path().filename().string();
      if (name.rfind("CT", 0) == 0) modify(name, arguments);
    }
  }

  // Loads the study of the copy's plan from the copy's folder.
  [[nodiscard]] study::Result<study::Study> load() const {
    auto plan = dicom::read_plan_file(plan_file_in(dir_));
    if (!plan) throw std::runtime_error(plan.error().message());
    const std::filesystem::path inputs[] = {dir_};
    return dicom::load_study_for_plan(plan.value(), inputs);
  }

 private:
  std::filesystem::path dir_;
};

inline study::Result<study::Study> load_demo_study(const std::string& name) {
  const auto folder = demo_study(name);
  auto plan = dicom::read_plan_file(plan_file_in(folder));
  if (!plan) throw std::runtime_error(plan.error().message());
  const std::filesystem::path inputs[] = {folder};
  return dicom::load_study_for_plan(plan.value(), inputs);
}

}  // namespace countersign::test
