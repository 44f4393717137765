// Logs that cannot be forged (issue 10, item 4): one event per line with a UTC time, control
// characters of any value escaped, and DCMTK's own messages in the same log.

#include <countersign/service/dcmtk_log.hpp>
#include <countersign/service/service_log.hpp>

#include <dcmtk/config/osconfig.h>
#include <dcmtk/oflog/oflog.h>

#include <gtest/gtest.h>

#include <regex>
#include <sstream>

namespace countersign::service {
namespace {

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in{text};
  for (std::string line; std::getline(in, line);) lines.push_back(line);
  return lines;
}

const std::regex stamped_line{R"(^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z [^\n]*$)"};

TEST(ServiceLog, ANewlineInAValueCannotStartAnotherLine) {
  std::ostringstream out;
  ServiceLog log{out};
  log.line("checked RP1.dcm: patient ABC\n2026-12-02T08:15:00Z checked FAKE.dcm verdict within_tolerance");
  log.line("quarantined x\r\x1b[2Ky.dcm");
  const auto lines = lines_of(out.str());
  ASSERT_EQ(lines.size(), 2U) << out.str();
  for (const auto& line : lines) EXPECT_TRUE(std::regex_match(line, stamped_line)) << line;
  EXPECT_NE(lines[0].find("ABC\\n2026-12-02T08:15:00Z checked FAKE.dcm"), std::string::npos) << lines[0];
  EXPECT_NE(lines[1].find("x\\r\\x1b[2Ky.dcm"), std::string::npos) << lines[1];
}

TEST(DcmtkLogRoute, DcmtkMessagesBecomeLinesOfTheServiceLogWhileTheRouteLives) {
  std::ostringstream out;
  ServiceLog log{out};
  const OFLogger network = OFLog::getLogger("dcmtk.dcmnet");
  {
    const DcmtkLogRoute route{log};
    OFLOG_WARN(network, "association refused\nforged line");
    OFLOG_DEBUG(network, "below the threshold");
  }
  const auto lines = lines_of(out.str());
  ASSERT_EQ(lines.size(), 1U) << out.str();
  EXPECT_TRUE(std::regex_match(lines[0], stamped_line)) << lines[0];
  EXPECT_NE(lines[0].find("dcmtk WARN dcmtk.dcmnet: association refused\\nforged line"), std::string::npos)
      << lines[0];
  // Once the route is gone, the service log hears nothing more.
  OFLOG_WARN(network, "after the route");
  EXPECT_EQ(lines_of(out.str()).size(), 1U);
}

}  // namespace
}  // namespace countersign::service
