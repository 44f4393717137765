// Independent cross-check: every field `countersign show --json` prints is compared with what
// pydicom (Debian's python3-pydicom, a different DICOM reader) reads from the same file, through
// tests/dicom/pydicom_plan_json.py. Files: pydicom's own rtplan.dcm and every demo plan.

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

// Compares two JSON trees; numbers within a relative 1e-9 (both readers parse the same text).
void compare(const json& ours, const json& theirs, const std::string& path, int& leaves) {
  if (ours.is_object() && theirs.is_object()) {
    for (const auto& [key, value] : ours.items()) {
      if (!theirs.contains(key)) {
        ADD_FAILURE() << path << "/" << key << " only in countersign's JSON";
        continue;
      }
      compare(value, theirs.at(key), path + "/" + key, leaves);
    }
    for (const auto& [key, value] : theirs.items()) {
      if (!ours.contains(key)) ADD_FAILURE() << path << "/" << key << " only in pydicom's JSON";
    }
    return;
  }
  if (ours.is_array() && theirs.is_array()) {
    ASSERT_EQ(ours.size(), theirs.size()) << path;
    for (std::size_t i = 0; i < ours.size(); ++i)
      compare(ours[i], theirs[i], path + "[" + std::to_string(i) + "]", leaves);
    return;
  }
  ++leaves;
  if (ours.is_number() && theirs.is_number()) {
    const double a = ours.get<double>();
    const double b = theirs.get<double>();
    EXPECT_LE(std::abs(a - b), 1e-9 * std::max(1.0, std::abs(a))) << path << ": " << a << " vs pydicom " << b;
    return;
  }
  EXPECT_EQ(ours, theirs) << path;
}

class ShowMatchesPydicom : public ::testing::TestWithParam<std::string> {};

TEST_P(ShowMatchesPydicom, EveryFieldEqual) {
  const auto python = python_with_pydicom();
  ASSERT_TRUE(python.has_value())
      << "python3-pydicom is needed for the independent cross-check (apt-get install "
         "python3-pydicom)";
  const std::string file = GetParam();
  const auto ours = run_command(quote(program().string()) + " show --json " + quote(file));
  ASSERT_EQ(ours.exit_code, 0) << ours.err;
  const auto script = source_dir() / "tests/dicom/pydicom_plan_json.py";
  const auto theirs = run_command(*python + " " + quote(script.string()) + " " + quote(file));
  ASSERT_EQ(theirs.exit_code, 0) << theirs.err;
  int leaves = 0;
  compare(json::parse(ours.out), json::parse(theirs.out), "", leaves);
  EXPECT_GT(leaves, 100) << "too few fields compared";
}

std::vector<std::string> plan_files() {
  std::vector<std::string> files{"/usr/lib/python3/dist-packages/pydicom/data/test_files/rtplan.dcm"};
  for (const auto& entry : fs::directory_iterator(source_dir() / "testdata/plans")) {
    if (entry.path().extension() == ".dcm") files.push_back(entry.path().string());
  }
  std::sort(files.begin() + 1, files.end());
  return files;
}

INSTANTIATE_TEST_SUITE_P(Plans, ShowMatchesPydicom, ::testing::ValuesIn(plan_files()),
                         [](const ::testing::TestParamInfo<std::string>& plan) {
                           std::string name = fs::path(plan.param).stem().string();
                           for (char& c : name) {
                             if (!std::isalnum(static_cast<unsigned char>(c))) c = '_';
                           }
                           return name;
                         });

}  // namespace
}  // namespace countersign::test
