#pragma once

// DICOM's IOD checker from Debian's dicom3tools (dciodvfy), as an outside judge of the objects we
// write. Every line it prints that starts with "Error" or "Warning" is collected.

#include <filesystem>
#include <regex>
#include <string>
#include <vector>

namespace countersign::test {

struct IodReport {
  bool ran = false;  // false: dciodvfy is not installed
  std::vector<std::string> errors;
  std::vector<std::string> warnings;
  std::string output;
};

[[nodiscard]] IodReport verify_iod(const std::filesystem::path& file);

// Warnings not matched by any of `justified` (each a regular expression searched in the line).
[[nodiscard]] std::vector<std::string> unjustified(const std::vector<std::string>& warnings,
                                                   const std::vector<std::regex>& justified);

}  // namespace countersign::test
