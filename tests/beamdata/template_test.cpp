// `beamdata new`: the template is complete (every table with its axes, every key present or
// commented) and `validate` reports it incomplete, every missing value and cell accounted for.
#include <countersign/beamdata/library_template.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

TemplateRequest request_in(const TempDir& dir) {
  TemplateRequest r;
  r.library_folder = dir.path();
  r.machine = "ALDER-LINAC-2";  // an invented machine
  r.photon_energies_mv = {6.0, 15.0};
  r.wedges = {"W30"};
  return r;
}

TEST(LibraryTemplate, WritesEveryFileAndRefusesToOverwrite) {
  const TempDir dir;
  const auto written = write_library_template(request_in(dir));
  ASSERT_TRUE(written) << written.error().message();
  const fs::path m = dir.path() / "ALDER-LINAC-2";
  for (const auto* f : {"machine.toml", "README.md", "6X/pdd.csv", "6X/tmr.csv", "6X/sc.csv", "6X/sp.csv",
                        "6X/oar.csv", "15X/pdd.csv", "15X/oar.csv"})
    EXPECT_TRUE(fs::is_regular_file(m / f)) << f;
  EXPECT_TRUE(fs::is_regular_file(dir.path() / "ct/default.csv"));
  EXPECT_EQ(written->size(), 13u);
  const std::string manifest = testing::read_text(m / "machine.toml");
  // Every key of the format is there: required ones as placeholders, optional ones commented.
  for (const auto* key :
       {"machine = \"ALDER-LINAC-2\"", "# aliases", "sad_cm = nan", "dmax_cm = nan", "pdd_ssd_cm = nan",
        "# mlc_transmission", "# mlc_leaf_end_offset_mm", "# head_scatter_field", "# ssd_range_cm",
        "# block_transmission", "output_cgy_per_mu = nan", "# geometry", "pdd = \"6X/pdd.csv\"",
        "id = \"W30\"", "kind = \"?\"", "# table = \"6X/wf_w30.csv\"",
        "# orientation_table = \"6X/w30_profile.csv\"", "# [[beam.tray]]",
        "equivalent square of the irradiated field at the isocentre plane"})
    EXPECT_NE(manifest.find(key), std::string::npos) << key;
  EXPECT_NE(testing::read_text(m / "README.md").find("does not replace, the physicist's review"),
            std::string::npos);
  const auto again = write_library_template(request_in(dir));
  ASSERT_FALSE(again);
  EXPECT_NE(again.error().message().find("exists already"), std::string::npos);
  TemplateRequest bad = request_in(dir);
  bad.machine = "../escape";
  EXPECT_FALSE(write_library_template(bad));
}

TEST(LibraryTemplate, ValidateReportsItIncompleteCellByCell) {
  const TempDir dir;
  ASSERT_TRUE(write_library_template(request_in(dir)));
  const ValidationReport report = validate_library(dir.path());
  EXPECT_EQ(report.machine_count, 1u);
  EXPECT_EQ(report.beam_count, 2u);
  const TemplateGrid g = default_template_grid();
  const std::size_t cells_per_beam = 2 * g.depths_cm.size() * g.fields_cm.size() + 2 * g.fields_cm.size() +
                                     g.oar_depths_cm.size() * g.off_axis_cm.size();
  std::size_t missing_cells = 0, placeholders = 0;
  for (const auto& p : report.problems) {
    if (p.rule == "missing value") {
      ++missing_cells;
      EXPECT_TRUE(p.row && p.column) << p.text();  // each names its row and column
    }
    if (p.rule == "not filled in yet (template placeholder)") ++placeholders;
  }
  EXPECT_EQ(missing_cells, 2 * cells_per_beam + g.ct_hu.size());
  // sad_cm; per beam dmax, pdd_ssd, output, field, ssd, depth; per wedge angle, kind, factor.
  EXPECT_EQ(placeholders, 1u + 2u * (6u + 3u));
  // Grouped, each table is one line that says which rows and columns are empty.
  bool pdd_line = false;
  for (const auto& group : group_problems(report.problems)) {
    pdd_line = pdd_line || group.text().find("6X/pdd.csv: pdd: missing value: " +
                                             std::to_string(g.depths_cm.size() * g.fields_cm.size()) +
                                             " cells: rows 4-" + std::to_string(3 + g.depths_cm.size()) +
                                             ", columns 2-15") != std::string::npos;
  }
  EXPECT_TRUE(pdd_line);
}

}  // namespace
}  // namespace countersign::beamdata
