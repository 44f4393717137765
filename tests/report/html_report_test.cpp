// The HTML record: what it must say, that it stays self-contained, and that Debian's headless
// Chromium renders it without complaint and prints it to the expected number of A4 pages.
// The plans here are hand-built (tests/engine/fixtures.hpp, INVENTED test machine).

#include <countersign/report/html_pdf.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/version.hpp>

#include <engine/fixtures.hpp>
#include <support/paths.hpp>

#include <gtest/gtest.h>

#include <fstream>
#include <regex>
#include <sstream>

namespace countersign::report {
namespace {

namespace fx = test_fixtures;

struct Checked {
  plan::Plan plan;
  beamdata::Library library;
  check::PlanCheck check;
};

// Two static beams at the isocentre, depth 100 mm; beam 2's planned dose 10 % low so it is outside.
Checked two_beam_check() {
  Checked c;
  c.library = fx::test_library();
  fx::BeamSpec a{fx::static_beam(1, 0.0), 100.0, 0.0, 100.0};
  fx::BeamSpec b{fx::static_beam(2, 180.0, 40.0, 60.0), 100.0, 0.0, 100.0};
  fx::set_ssd(a.beam, 900.0);
  fx::set_ssd(b.beam, 900.0);
  b.beam.control_points[0].collimator_deg = 30.0;
  b.beam.control_points[1].collimator_deg = 30.0;
  c.plan = fx::make_plan({a, b});
  c.plan.patient_id = "FERN-TEST-01";
  c.plan.patient_name = "PHANTOM^CUBE";
  c.plan.approval_status = "APPROVED";
  // Planned doses from the engine itself, then beam 2 made 10 % low.
  check::PlanCheck first = check::check_plan(c.plan, c.library, {});
  for (auto& ref : c.plan.fraction_groups[0].beams) {
    for (const auto& b2 : first.beams) {
      if (b2.beam_number == ref.beam_number && b2.computed_dose_gy) ref.dose_gy = *b2.computed_dose_gy;
    }
  }
  c.plan.fraction_groups[0].beams[1].dose_gy = *c.plan.fraction_groups[0].beams[1].dose_gy * 0.9;
  c.check = check::check_plan(c.plan, c.library, {});
  c.check.beamdata_sha256 = std::string(64, 'a');
  return c;
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + what.size())) ++n;
  return n;
}

TEST(HtmlReport, CarriesIdentityPolicyVerdictsSignOffAndCaution) {
  const Checked c = two_beam_check();
  ASSERT_EQ(c.check.beams.size(), 2u);
  ASSERT_EQ(c.check.beams[0].status, check::Status::within_tolerance) << c.check.beams[0].reason.sentence;
  ASSERT_EQ(c.check.beams[1].status, check::Status::outside_tolerance) << c.check.beams[1].reason.sentence;
  HtmlOptions options;
  options.generated_at = "2026-12-02 09:15:00 +0000";
  const std::string page = html_report(c.check, options);

  for (const std::string& expected :
       {std::string("FERN-TEST-01"), std::string("PHANTOM, CUBE"), std::string("APPROVED"),
        std::string("2.25.1"), std::string("TEST"), std::string(64, 'a'),
        std::string("countersign ") + version_string, std::string("2026-12-02 09:15:00 +0000"),
        std::string("built-in defaults"), std::string("TEST-LINAC"), std::string("Checked by (name)"),
        std::string("Signature"), std::string("does not replace")}) {
    EXPECT_NE(page.find(expected), std::string::npos) << "missing: " << expected;
  }
  EXPECT_EQ(count(page, "<svg "), 2u);  // one beam's-eye view per beam
  EXPECT_EQ(count(page, "<section class=\"beam\""), 2u);
  EXPECT_NE(page.find("Outside tolerance"), std::string::npos);
  EXPECT_NE(page.find("beyond the \u00B12.0 % allowed for a simple field"), std::string::npos);
  EXPECT_NE(page.find("coll. 30.0\u00B0"), std::string::npos);
  EXPECT_NE(page.find("Sc(s_c)"), std::string::npos);
  EXPECT_NE(page.find("test/tmr.csv"), std::string::npos);  // provenance of the TMR
}

TEST(HtmlReport, IsSelfContained) {
  const Checked c = two_beam_check();
  const std::string page = html_report(c.check, {});
  // No links, scripts, images or style sheets from anywhere; the only URL is the SVG namespace name.
  for (const char* forbidden : {"<script", "<link", "<img", "<iframe", "src=", "href=", "url(", "@import"}) {
    EXPECT_EQ(page.find(forbidden), std::string::npos) << forbidden;
  }
  const std::regex url("https?://[^\"' <]*");
  for (auto it = std::sregex_iterator(page.begin(), page.end(), url); it != std::sregex_iterator(); ++it) {
    EXPECT_EQ(it->str(), "http://www.w3.org/2000/svg");
  }
  EXPECT_NE(page.find("Content-Security-Policy"), std::string::npos);
}

TEST(HtmlReport, EscapesWhatThePlanSays) {
  Checked c = two_beam_check();
  c.check.patient_name = "<script>alert(1)</script>^X";
  c.check.plan_label = "A&B \"quoted\"";
  const std::string page = html_report(c.check, {});
  EXPECT_EQ(page.find("<script>"), std::string::npos);
  EXPECT_NE(page.find("&lt;script&gt;alert(1)&lt;/script&gt;, X"), std::string::npos);
  EXPECT_NE(page.find("A&amp;B &quot;quoted&quot;"), std::string::npos);
}

TEST(HtmlReport, NotCheckedBeamSaysWhyAndIsNeverShownAsAPass) {
  check::PlanCheck c;
  c.patient_id = "FERN-TEST-02";
  c.status = check::Status::not_checked;
  c.reason = {check::Reason::unknown_machine, "beam 1 (B1): machine \"OTHER\" is not in the library"};
  check::BeamCheck b;
  b.beam_number = 1;
  b.beam_name = "B1";
  b.status = check::Status::not_checked;
  b.reason = {check::Reason::unknown_machine,
              "Treatment Machine Name (300A,00B2) \"OTHER\" is not in the library"};
  b.meterset_mu = 100.0;
  b.planned_dose_gy = 1.0;
  c.beams.push_back(b);
  check::BeamCheck setup;
  setup.beam_number = 9;
  setup.beam_name = "SETUP";
  setup.status = check::Status::skipped;
  setup.reason = {check::Reason::setup_beam,
                  "Treatment Delivery Type (300A,00CE) is SETUP: listed, not judged"};
  c.beams.push_back(setup);
  const std::string page = html_report(c, {});
  EXPECT_NE(page.find("This beam was not checked: Treatment Machine Name (300A,00B2) &quot;OTHER&quot;"),
            std::string::npos)
      << page;
  EXPECT_EQ(page.find("Within tolerance"), std::string::npos);
  EXPECT_EQ(page.find("within tolerance</div>"), std::string::npos);
  EXPECT_EQ(count(page, "<section class=\"beam\""), 1u);  // the skipped setup beam is listed, not detailed
  EXPECT_NE(page.find("Listed and skipped"), std::string::npos);
  EXPECT_EQ(count(page, "<svg "), 0u);  // no geometry, no drawing
}

TEST(HtmlReport, WriteHtmlNamesTheFileOnError) {
  const Checked c = two_beam_check();
  const auto result = write_html(c.check, "/nonexistent-folder/record.html");
  ASSERT_FALSE(result);
  EXPECT_NE(result.error().message().find("/nonexistent-folder/record.html"), std::string::npos);
}

TEST(HtmlReport, ChromiumArgumentsKeepTheBrowserOffTheNetwork) {
  const auto args =
      chromium_print_arguments("/usr/bin/chromium", "/tmp/a b.html", "/tmp/o.pdf", "/tmp/profile");
  for (const char* flag :
       {"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync"}) {
    EXPECT_NE(std::find(args.begin(), args.end(), flag), args.end()) << flag;
  }
  EXPECT_EQ(args.back(), "file:///tmp/a%20b.html");
  EXPECT_NE(std::find(args.begin(), args.end(), "--user-data-dir=/tmp/profile"), args.end());
}

// --- Rendering in Debian's headless Chromium (tools/install-deps installs it) ---

std::string slurp(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

// Pages of a PDF: pdfinfo (poppler-utils) when present, else the page objects in the file.
int pdf_pages(const std::filesystem::path& pdf) {
  const auto info = test::run_command("pdfinfo " + test::quote(pdf.string()) + " 2>/dev/null");
  std::smatch m;
  const std::regex pages("Pages:\\s+(\\d+)");
  if (info.exit_code == 0 && std::regex_search(info.out, m, pages)) return std::stoi(m[1]);
  const std::string bytes = slurp(pdf);
  const std::regex page_object("/Type\\s*/Page[^s]");
  return static_cast<int>(
      std::distance(std::sregex_iterator(bytes.begin(), bytes.end(), page_object), std::sregex_iterator()));
}

TEST(HtmlReportInChromium, RendersWithoutConsoleErrorsAndPrintsOnePagePerBeamPlusTheCover) {
  const auto chromium = find_chromium();
  // tools/install-deps installs Chromium: without it this test fails, it does not skip.
  ASSERT_TRUE(chromium) << "no Chromium on this machine (tools/install-deps installs Debian's chromium)";
  const Checked c = two_beam_check();
  HtmlOptions options;
  const auto dir = test::make_temp_dir("countersign-html-test");
  const auto html = write_html(c.check, dir / "record.html", options);
  ASSERT_TRUE(html) << html.error().message();

  // Rendering: no message from the page (a blocked request, a CSS or SVG error) in Chromium's log.
  const auto profile = dir / "profile";
  std::filesystem::create_directory(profile);
  const auto shot = test::run_command(
      test::quote(chromium->string()) +
      " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking"
      " --disable-component-update --disable-sync --enable-logging=stderr --v=0 --hide-scrollbars"
      " --window-size=800,1200 --user-data-dir=" +
      test::quote(profile.string()) + " --screenshot=" + test::quote((dir / "record.png").string()) + " " +
      test::quote(file_url(*html)));
  EXPECT_EQ(shot.exit_code, 0) << shot.err;
  EXPECT_TRUE(std::filesystem::exists(dir / "record.png")) << shot.err;
  EXPECT_EQ(shot.err.find("CONSOLE"), std::string::npos) << shot.err;
  EXPECT_EQ(shot.err.find("Refused to"), std::string::npos) << shot.err;

  const auto pdf = print_pdf(*html, dir / "record.pdf", *chromium);
  ASSERT_TRUE(pdf) << pdf.error().message();
  EXPECT_EQ(pdf_pages(*pdf), 3);  // the cover page, then one page per beam
  const auto info = test::run_command("pdfinfo " + test::quote(pdf->string()) + " 2>/dev/null");
  if (info.exit_code == 0) {
    EXPECT_NE(info.out.find("(A4)"), std::string::npos) << info.out;
  }
  std::filesystem::remove_all(dir);
}

}  // namespace
}  // namespace countersign::report
