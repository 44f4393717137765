#pragma once

// A results folder with a history of checks of the INVENTED demo plans (tests/cli does the same):
// fern_half_beam.dcm raised to 240 MU (outside tolerance), fern_box_4field.dcm, and a copy of
// fern_half_beam.dcm under a new SOP Instance UID whose Patient's Name, Patient ID and RT Plan Label
// carry markup (<script>), all checked by `countersign watch --once`; and the users alice (reviewer)
// and victor (viewer). Made once per test program.

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <string>

namespace countersign::web {

inline constexpr const char* reviewer_password = "alice's long passphrase";  // invented
inline constexpr const char* viewer_password = "victor's long passphrase";   // invented
inline constexpr const char* script_patient_id = "<script>alert(7)</script>";

class WebHistory : public ::testing::Test {
 protected:
  static void SetUpTestSuite();
  static void TearDownTestSuite();

  static test::CommandOutput countersign(const std::string& arguments);
  [[nodiscard]] static std::string results_option();

  static std::filesystem::path dir_;
  static std::filesystem::path results_;
  static std::string setup_problem_;
};

}  // namespace countersign::web
