// The web view in a real browser: Debian's headless Chromium (tools/install-deps installs it; the
// test fails without it) logs in through the form, reads the worklist and a record, signs a flagged
// check off through the review form, and takes a screenshot; `history` and `audit verify` then see
// the review. The login page is also loaded with --dump-dom, as the report tests load the record.

#include <countersign/report/html_pdf.hpp>

#include "support/browser_pipe.hpp"
#include "support/serve_process.hpp"
#include "web_fixture.hpp"

#include <regex>

namespace countersign::web {
namespace {

namespace fs = std::filesystem;
using test::quote;

// Width and height of a PNG from its IHDR chunk (bytes 16..23, big-endian).
std::pair<unsigned, unsigned> png_size(const std::string& png) {
  if (png.size() < 24 || png.compare(1, 3, "PNG") != 0) return {0, 0};
  const auto at = [&](std::size_t i) {
    return (static_cast<unsigned>(static_cast<unsigned char>(png[i])) << 24U) |
           (static_cast<unsigned>(static_cast<unsigned char>(png[i + 1])) << 16U) |
           (static_cast<unsigned>(static_cast<unsigned char>(png[i + 2])) << 8U) |
           static_cast<unsigned>(static_cast<unsigned char>(png[i + 3]));
  };
  return {at(16), at(20)};
}

class WebBrowser : public WebHistory {
 protected:
  void SetUp() override {
    ASSERT_TRUE(setup_problem_.empty()) << setup_problem_;
    chromium_ = report::find_chromium();
    ASSERT_TRUE(chromium_) << "no Chromium on this machine (tools/install-deps installs Debian's chromium)";
    server_ = std::make_unique<test::ServeProcess>(
        test::program(), std::vector<std::string>{"--results", results_.string()}, dir_);
    ASSERT_TRUE(server_->running()) << server_->output();
  }
  void TearDown() override { server_.reset(); }

  std::optional<fs::path> chromium_;
  std::unique_ptr<test::ServeProcess> server_;
};

TEST_F(WebBrowser, TheLoginPageRendersWithoutASession) {
  const fs::path profile = dir_ / "dump-profile";
  fs::create_directories(profile);
  const auto dumped = test::run_command(
      quote(chromium_->string()) +
      " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking "
      "--disable-component-update --disable-sync --user-data-dir=" +
      quote(profile.string()) + " --dump-dom " + quote(server_->url() + "/") + " 2>/dev/null");
  EXPECT_EQ(dumped.exit_code, 0);
  EXPECT_NE(dumped.out.find("<form method=\"post\" action=\"/login\" id=\"login\">"), std::string::npos)
      << dumped.out;
  EXPECT_NE(dumped.out.find("supports, and does not replace"), std::string::npos);
  EXPECT_EQ(dumped.out.find("FERN-LINAC-1"), std::string::npos);
}

TEST_F(WebBrowser, APhysicistLogsInSeesFlaggedPlansFirstAndSignsOneOff) {
  const fs::path profile = dir_ / "pipe-profile";
  fs::create_directories(profile);
  test::BrowserPipe browser(*chromium_, profile, 1280, 900);
  ASSERT_TRUE(browser.ready()) << browser.problem();

  // Log in through the form, as a person would.
  ASSERT_TRUE(browser.navigate(server_->url() + "/login")) << browser.problem();
  ASSERT_TRUE(browser.evaluate_and_wait(std::string{"document.getElementById('name').value='alice';"
                                                    "document.getElementById('password').value="} +
                                        nlohmann::json(reviewer_password).dump() +
                                        ";document.querySelector('#login button').click();true"))
      << browser.problem();
  EXPECT_EQ(browser.evaluate("location.pathname"), "/");

  // The worklist: open checks first (outside tolerance or not checked, unreviewed), then the others.
  const std::string worklist = browser.dom();
  EXPECT_NE(worklist.find("alice (reviewer)"), std::string::npos);
  EXPECT_NE(worklist.find("supports, and does not replace"), std::string::npos);
  std::vector<std::pair<std::string, bool>> rows;  // check id, open
  const std::regex row{R"re(<tr class="check( open)?" data-check="(\d+)" data-verdict="([a-z_]+)")re"};
  for (auto it = std::sregex_iterator(worklist.begin(), worklist.end(), row); it != std::sregex_iterator();
       ++it) {
    rows.emplace_back((*it)[2], (*it)[1].matched);
  }
  ASSERT_GE(rows.size(), 3U) << worklist;
  EXPECT_TRUE(rows.front().second) << worklist;
  EXPECT_TRUE(std::is_partitioned(rows.begin(), rows.end(), [](const auto& r) { return r.second; }));
  EXPECT_EQ(worklist.find("<script>alert"), std::string::npos);

  // A screenshot of the worklist at 1280 x 900.
  const std::string png = browser.screenshot_png();
  const auto [width, height] = png_size(png);
  EXPECT_EQ(width, 1280U);
  EXPECT_EQ(height, 900U);
  EXPECT_GT(png.size(), 20000U);  // a page with text and tables, not a blank frame

  // Open the first (flagged) check and sign it off with a reason.
  const std::string id = rows.front().first;
  ASSERT_TRUE(browser.navigate(server_->url() + "/checks/" + id)) << browser.problem();
  const std::string record = browser.dom();
  EXPECT_NE(record.find("id=\"review-form\""), std::string::npos);
  EXPECT_NE(record.find("<iframe class=\"record\""), std::string::npos);
  EXPECT_NE(record.find("id=\"audit\""), std::string::npos);
  ASSERT_TRUE(browser.evaluate_and_wait(
      "document.querySelector('input[name=decision][value=accept]').checked=true;"
      "document.getElementById('reason').value='Hand-edited MU confirmed with the planner (browser test)';"
      "document.getElementById('review-submit').click();true"))
      << browser.problem();
  const std::string after = browser.dom();
  EXPECT_NE(after.find("id=\"notice\""), std::string::npos) << after;
  EXPECT_NE(after.find("browser test"), std::string::npos);

  const auto detail = countersign("history --json --check " + id + results_option());
  EXPECT_NE(detail.out.find("\"reviewer_kind\": \"web_user\""), std::string::npos) << detail.out;
  EXPECT_NE(detail.out.find("browser test"), std::string::npos) << detail.out;
  const auto verified = countersign("audit verify" + results_option());
  EXPECT_EQ(verified.exit_code, 0) << verified.out << verified.err;
}

}  // namespace
}  // namespace countersign::web
