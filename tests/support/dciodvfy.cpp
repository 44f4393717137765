#include "support/dciodvfy.hpp"

#include "support/paths.hpp"

#include <algorithm>
#include <sstream>

namespace countersign::test {

IodReport verify_iod(const std::filesystem::path& file) {
  IodReport report;
  if (run_command("command -v dciodvfy").exit_code != 0) return report;
  report.ran = true;
  const auto result = run_command("dciodvfy " + quote(file.string()));
  report.output = result.out + result.err;
  std::istringstream lines(report.output);
  std::string line;
  while (std::getline(lines, line)) {
    if (line.rfind("Error", 0) == 0) report.errors.push_back(line);
    if (line.rfind("Warning", 0) == 0) report.warnings.push_back(line);
  }
  return report;
}

std::vector<std::string> unjustified(const std::vector<std::string>& warnings,
                                     const std::vector<std::regex>& justified) {
  std::vector<std::string> left;
  for (const auto& warning : warnings) {
    const bool known = std::any_of(justified.begin(), justified.end(), [&](const std::regex& pattern) {
      return std::regex_search(warning, pattern);
    });
    if (!known) left.push_back(warning);
  }
  return left;
}

}  // namespace countersign::test
