// From measured columns to a validated, plotted, hashed library with four commands (new, import,
// validate, report), through the built program; the review page renders in Debian's headless
// Chromium (tools/install-deps installs it; the test fails without it) with one plot per table.
#include <countersign/beamdata/library.hpp>
#include <countersign/report/html_pdf.hpp>

#include "beamdata/library_fixture.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <regex>
#include <string>

namespace countersign::cli {
namespace {

namespace fs = std::filesystem;
using countersign::test::quote;
using countersign::test::run_command;
namespace bt = countersign::beamdata::testing;

countersign::test::CommandOutput beamdata(const std::string& arguments) {
  return run_command(quote(countersign::test::program().string()) + " beamdata " + arguments);
}

fs::path measured_set() {
  return countersign::test::source_dir() / "testdata/measured/fern_linac_1_measured.csv";
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + 1)) ++n;
  return n;
}

// Every table of a library: the plots the review page must draw.
std::size_t table_count(const beamdata::Library& library) {
  std::size_t n = library.ct.tables.size();
  for (const auto& m : library.machines) {
    for (const auto& b : m.beams) {
      n += 4 + (b.oar ? 1 : 0);
      for (const auto& w : b.wedges) n += (w.table ? 1 : 0) + (w.orientation_table ? 1 : 0);
    }
    for (const auto& e : m.electron_beams)
      for (const auto& a : e.applicators) n += 1 + (a.cutout ? 1 : 0);
  }
  return n;
}

// The DOM of a page after headless Chromium has loaded it, with no network and a fresh profile.
std::string rendered_dom(const fs::path& html, const fs::path& scratch) {
  const auto chromium = report::find_chromium();
  EXPECT_TRUE(chromium)
      << "no Chromium: tools/install-deps installs Debian's chromium, which this test needs";
  if (!chromium) return {};
  fs::create_directories(scratch / "profile");
  const auto result = run_command(
      quote(chromium->string()) +
      " --headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking "
      "--disable-component-update --disable-sync --user-data-dir=" +
      quote((scratch / "profile").string()) + " --dump-dom " + quote(report::file_url(fs::absolute(html))) +
      " 2>" + quote((scratch / "chromium.log").string()));
  EXPECT_EQ(result.exit_code, 0) << bt::read_text(scratch / "chromium.log");
  return result.out;
}

TEST(BeamdataOnboardingCli, FourCommandsFromMeasuredColumnsToAReviewedLibrary) {
  const bt::TempDir dir;
  const fs::path library = dir.path() / "library";
  // 1. new: a template for an invented machine, which validate reports incomplete.
  const auto created =
      beamdata("new " + quote(library.string()) + " --machine ALDER-LINAC-2 --energies 6 --wedges W30");
  ASSERT_EQ(created.exit_code, 0) << created.err;
  const auto incomplete = beamdata("validate " + quote(library.string()));
  EXPECT_EQ(incomplete.exit_code, 3);
  EXPECT_TRUE(std::regex_search(incomplete.out,
                                std::regex{"incomplete: 10 manifest value\\(s\\) not filled in, [0-9]+ "
                                           "table cell\\(s\\) empty\n"}))
      << incomplete.out;
  // The physicist fills in the manifest (values of the INVENTED demo linac) and the CT table.
  const fs::path manifest = library / "ALDER-LINAC-2/machine.toml";
  for (const auto& [from, to] : std::vector<std::pair<std::string, std::string>>{
           {"sad_cm = nan", "sad_cm = 100.0"},
           {"dmax_cm = nan", "dmax_cm = 1.5"},
           {"pdd_ssd_cm = nan", "pdd_ssd_cm = 100.0"},
           {"output_cgy_per_mu = nan", "output_cgy_per_mu = 1.0"},
           {"field_cm = nan", "field_cm = 10.0"},
           {"ssd_cm = nan", "ssd_cm = 100.0"},
           {"depth_cm = nan", "depth_cm = 1.5"},
           {"angle_deg = nan", "angle_deg = 30.0"},
           {"kind = \"?\"", "kind = \"PHYSICAL\""},
           {"factor = nan", "factor = 0.66"},
           {"# orientation_table =", "orientation_table ="}})
    bt::replace_in_file(manifest, from, to);
  bt::write_text(library / "ct/default.csv", bt::read_text(bt::demo_library() / "ct/default.csv"));
  // 2. import the measured columns.
  const auto imported =
      beamdata("import " + quote(library.string()) + " --machine ALDER-LINAC-2 --beam 6X --measured " +
               quote(measured_set().string()));
  ASSERT_EQ(imported.exit_code, 0) << imported.err;
  EXPECT_NE(imported.out.find("wrote 6X/w30_profile.csv (wedge_oar"), std::string::npos) << imported.out;
  // 3. validate: clean, with the fingerprint.
  const auto validated = beamdata("validate " + quote(library.string()));
  EXPECT_EQ(validated.exit_code, 0) << validated.out;
  std::smatch sha;
  ASSERT_TRUE(std::regex_search(validated.out, sha, std::regex{"library SHA-256: ([0-9a-f]{64})\n"}))
      << validated.out;
  // 4. report: one plot per table, rendered by Chromium, carrying the same fingerprint.
  const fs::path page = dir.path() / "review.html";
  const auto reported = beamdata("report " + quote(library.string()) + " --html " + quote(page.string()));
  ASSERT_EQ(reported.exit_code, 0) << reported.err;
  const auto loaded = beamdata::load_library(library);
  ASSERT_TRUE(loaded) << loaded.error().message();
  EXPECT_EQ(table_count(*loaded), 7u);  // pdd, tmr, sc, sp, oar, the W30 orientation table, ct/default.csv
  const std::string dom = rendered_dom(page, dir.path());
  EXPECT_EQ(count(dom, "<svg class=\"table-plot\""), table_count(*loaded)) << dom.substr(0, 2000);
  EXPECT_EQ(count(dom, "<svg class=\"consistency-plot\""), 2u);
  for (const auto* table : {"ALDER-LINAC-2/6X/pdd.csv", "ALDER-LINAC-2/6X/tmr.csv", "ALDER-LINAC-2/6X/sc.csv",
                            "ALDER-LINAC-2/6X/sp.csv", "ALDER-LINAC-2/6X/oar.csv",
                            "ALDER-LINAC-2/6X/w30_profile.csv", "ct/default.csv"})
    EXPECT_NE(dom.find("data-table=\"" + std::string{table} + "\""), std::string::npos) << table;
  EXPECT_NE(dom.find(sha[1].str()), std::string::npos);
  EXPECT_NE(dom.find("supports, and does not replace, the review"), std::string::npos);
}

TEST(BeamdataReportCli, DemoLibraryPageIsSelfContainedAndMarksInconsistencies) {
  const bt::TempDir dir;
  const fs::path machine = bt::copy_demo_library(dir.path());
  bt::set_cell(machine / "6X/tmr.csv", "10", 8, "0.7979");  // +3 % at depth 10 cm, field 10 cm
  const fs::path page = dir.path() / "review.html";
  const auto result = beamdata("report " + quote(dir.path().string()) + " --html " + quote(page.string()));
  EXPECT_EQ(result.exit_code, 3) << result.err;  // written, and the library has a finding (a warning)
  const std::string html = bt::read_text(page);
  // No scripts and nothing fetched: the only URL is the SVG namespace.
  EXPECT_EQ(html.find("<script"), std::string::npos);
  EXPECT_EQ(html.find("src="), std::string::npos);
  EXPECT_EQ(count(html, "http://") + count(html, "https://"), count(html, "http://www.w3.org/2000/svg"));
  EXPECT_NE(html.find("Content-Security-Policy"), std::string::npos);
  // The inconsistent node is circled, and the finding is listed.
  EXPECT_NE(
      html.find(
          "r=\"5\" fill=\"none\" stroke=\"#c00\" stroke-width=\"2\"><title>depth 10 cm, field 10 cm: +3."),
      std::string::npos);
  EXPECT_NE(html.find("<li>" + (machine / "6X/tmr.csv").string() + ": warning: row "), std::string::npos);
  EXPECT_NE(html.find("PDD-&gt;TMR relation: tmr 0.7979 at depth 10 cm, field 10 cm"), std::string::npos);
  const auto loaded = beamdata::load_library(dir.path());
  ASSERT_TRUE(loaded);
  EXPECT_EQ(count(html, "<svg class=\"table-plot\""), table_count(*loaded));
  // 2 photon beams x (pdd, tmr, sc, sp, oar, W30 orientation) + ct/default.csv, and 3 electron
  // beams x 4 applicators x (pdd, cutout factors)
  EXPECT_EQ(table_count(*loaded), 37u);
}

TEST(BeamdataValidateCli, RepeatedProblemsAreGroupedAndAllListsEachOne) {
  const bt::TempDir dir;
  const fs::path machine = bt::copy_demo_library(dir.path());
  for (const auto* field : {"3", "4", "5", "6"}) bt::set_cell(machine / "10X/sc.csv", field, 2, "95.5");
  const auto grouped = beamdata("validate " + quote(dir.path().string()));
  EXPECT_EQ(grouped.exit_code, 3);
  EXPECT_NE(grouped.out.find(
                "10X/sc.csv: sc: looks like a percentage (about 100 where about 1 is expected): 4 cells: "
                "rows 5-8, column 2 (first: row 5, column 2: sc 95.5 outside the plausible range [0.7, "
                "1.3]: looks like a percentage"),
            std::string::npos)
      << grouped.out;
  const auto all = beamdata("validate --all " + quote(dir.path().string()));
  EXPECT_EQ(count(all.out, "sc 95.5 outside the plausible range"), 4u) << all.out;
  EXPECT_NE(grouped.out.find("machines: 'FERN-LINAC-1'\n"), std::string::npos);
}

TEST(BeamdataCompareTmrCli, SummaryComesFirstAndEveryNodeGoesToTheFile) {
  const bt::TempDir dir;
  const fs::path six = bt::demo_library() / "FERN-LINAC-1/6X";
  bt::write_text(dir.path() / "tmr.csv", bt::read_text(six / "tmr.csv"));
  bt::set_cell(dir.path() / "tmr.csv", "10", 8, "0.7979");
  const fs::path out = dir.path() / "comparison.csv";
  const auto result =
      beamdata("compare-tmr --pdd " + quote((six / "pdd.csv").string()) + " --sp " +
               quote((six / "sp.csv").string()) + " --tmr " + quote((dir.path() / "tmr.csv").string()) +
               " --ssd-cm 100 --dmax-cm 1.5 -o " + quote(out.string()));
  EXPECT_EQ(result.exit_code, 1);
  const auto first_lines = result.out.substr(0, result.out.find("# outside"));
  EXPECT_TRUE(std::regex_search(first_lines,
                                std::regex{"\n# summary: [0-9]+ node\\(s\\) compared, 1 outside tolerance"}))
      << result.out;
  EXPECT_NE(result.out.find("# outside: depth 10.00 cm, field 10.0 cm: +3.0"), std::string::npos)
      << result.out;
  EXPECT_LT(count(result.out, "\n"), 6u);  // the summary only; the nodes are in the file
  const std::string csv = bt::read_text(out);
  EXPECT_EQ(csv.rfind("depth_cm,field_cm,measured_tmr,derived_tmr,difference_percent,status\n", 0), 0u);
  EXPECT_GT(count(csv, ",within\n"), 400u);
}

TEST(BeamdataRescalePddCli, AGridBeyondTheTableLeavesCellsEmptyUnlessAllowed) {
  const bt::TempDir dir;
  const fs::path pdd = bt::demo_library() / "FERN-LINAC-1/6X/pdd.csv";
  const fs::path out = dir.path() / "pdd120.csv";
  const std::string args =
      "rescale-pdd --pdd " + quote(pdd.string()) +
      " --from-ssd-cm 100 --to-ssd-cm 120 --dmax-cm 1.5 --depths-cm 1.5,10,35 --fields-cm 10,45 -o " +
      quote(out.string());
  const auto refused = beamdata(args);
  EXPECT_EQ(refused.exit_code, 3);
  EXPECT_NE(refused.err.find("4 cell(s) left empty"), std::string::npos) << refused.err;
  const std::string text = bt::read_text(out);
  EXPECT_NE(text.find("\n35,,\n"), std::string::npos) << text;
  EXPECT_NE(
      text.find(
          "# EMPTY (would need extrapolation) at depth_cm 35.00, field_cm 10.0: pdd depth_cm 35 beyond the "
          "table's end node 30"),
      std::string::npos)
      << text;
  const auto allowed = beamdata(args + " --allow-extrapolation");
  EXPECT_EQ(allowed.exit_code, 0) << allowed.err;
  const std::string note = bt::read_text(dir.path() / "pdd120.csv.provenance.toml");
  EXPECT_EQ(count(note, "[[cell]]"), 4u) << note;  // the 45 cm column at three depths, and 35 cm x 10 cm
  EXPECT_NE(note.find("method = \"Mayneord F factor"), std::string::npos);
}

TEST(BeamdataImportCli, RefusalPrintsTheGroupedCellsAndWritesNothing) {
  const bt::TempDir dir;
  const fs::path machine = bt::copy_demo_library(dir.path());
  const auto result = beamdata("import " + quote(machine.string()) + " --beam 6X --measured " +
                               quote(measured_set().string()) + " --max-gap pdd:field_cm=1");
  EXPECT_EQ(result.exit_code, 3);
  EXPECT_NE(result.err.find("pdd: a gap between measured points is wider than the limit: "),
            std::string::npos)
      << result.err;
  EXPECT_NE(result.err.find("across field_cm, the measured points 6 and 8 around it are 2 apart (limit 1)"),
            std::string::npos)
      << result.err;
  EXPECT_NE(result.err.find("nothing written"), std::string::npos);
  EXPECT_EQ(
      beamdata("import " + quote(machine.string()) + " --beam 6X --measured x.csv --max-gap pdd=1").exit_code,
      3);
}

}  // namespace
}  // namespace countersign::cli
