// `countersign check --html/--pdf` end to end on the INVENTED demo plan fern_box_4field.dcm with the
// INVENTED demo library: the record is written, self-contained, one page per beam after the cover,
// and a missing Chromium gives a clear message and exit code 4 before anything is checked.

#include <support/paths.hpp>

#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

namespace countersign::test {
namespace {

std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::filesystem::path box_plan() { return source_dir() / "testdata" / "plans" / "fern_box_4field.dcm"; }

TEST(RecordCli, HtmlRecordOfTheDemoPlan) {
  ASSERT_TRUE(std::filesystem::exists(box_plan())) << "committed demo plan missing: " << box_plan();
  const auto dir = make_temp_dir("countersign-record");
  const auto html = dir / "box.html";
  const auto r = run_command(quote(program().string()) + " check " + quote(box_plan().string()) + " --html " +
                             quote(html.string()));
  EXPECT_EQ(r.exit_code, 1) << r.err;  // beam 2 of the demo plan is outside tolerance
  const std::string page = slurp(html);
  std::size_t svgs = 0;
  for (auto at = page.find("<svg "); at != std::string::npos; at = page.find("<svg ", at + 1)) ++svgs;
  EXPECT_EQ(svgs, 4u);
  EXPECT_NE(page.find("FERN-PH-0101"), std::string::npos);
  EXPECT_NE(page.find("FERN-LINAC-1"), std::string::npos);
  EXPECT_NE(page.find("Outside tolerance"), std::string::npos);
  EXPECT_EQ(page.find("<script"), std::string::npos);
  std::filesystem::remove_all(dir);
}

TEST(RecordCli, PdfRecordHasACoverAndOnePagePerBeam) {
  ASSERT_TRUE(std::filesystem::exists(box_plan())) << "committed demo plan missing: " << box_plan();
  // tools/install-deps installs Chromium: without it this test fails, it does not skip.
  ASSERT_EQ(run_command("command -v chromium || command -v chromium-browser").exit_code, 0)
      << "no Chromium on this machine (tools/install-deps installs Debian's chromium)";
  const auto dir = make_temp_dir("countersign-record");
  const auto pdf = dir / "box.pdf";
  const auto r = run_command(quote(program().string()) + " check " + quote(box_plan().string()) + " --pdf " +
                             quote(pdf.string()));
  EXPECT_EQ(r.exit_code, 1) << r.err;
  const std::string bytes = slurp(pdf);
  ASSERT_EQ(bytes.rfind("%PDF-", 0), 0u) << r.err;
  const std::regex page_object("/Type\\s*/Page[^s]");
  const auto pages =
      std::distance(std::sregex_iterator(bytes.begin(), bytes.end(), page_object), std::sregex_iterator());
  const auto info = run_command("pdfinfo " + quote(pdf.string()) + " 2>/dev/null");
  if (info.exit_code == 0) {
    EXPECT_NE(info.out.find("Pages:           5"), std::string::npos) << info.out;
  } else {
    EXPECT_EQ(pages, 5);
  }
  std::filesystem::remove_all(dir);
}

TEST(RecordCli, MissingChromiumIsExitFourWithAClearMessage) {
  ASSERT_TRUE(std::filesystem::exists(box_plan())) << "committed demo plan missing: " << box_plan();
  const auto dir = make_temp_dir("countersign-record");
  const auto pdf = dir / "box.pdf";
  const auto r = run_command("COUNTERSIGN_CHROMIUM=/nonexistent/chromium " + quote(program().string()) +
                             " check " + quote(box_plan().string()) + " --pdf " + quote(pdf.string()));
  EXPECT_EQ(r.exit_code, 4);
  EXPECT_NE(r.err.find("no Chromium found"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find(pdf.string()), std::string::npos) << r.err;
  EXPECT_FALSE(std::filesystem::exists(pdf));
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace countersign::test
