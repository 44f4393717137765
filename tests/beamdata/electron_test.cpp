// Electron beams (beamdata/FORMAT.md "Electron beams"): an invented electron manifest loads into the
// plain value types and every electron rule of the format is checked. No dose physics here.
#include <countersign/beamdata/electron.hpp>
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <functional>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

fs::path fixture() { return countersign::test::source_dir() / "tests/beamdata/fixtures/electron"; }

fs::path copy_fixture(const TempDir& dir) {
  fs::copy(fixture(), dir.path(), fs::copy_options::recursive);
  return dir.path() / "TEST-LINAC-E";
}

std::string problems_of(const ValidationReport& report) {
  std::string all;
  for (const auto& p : report.problems) all += p.text() + "\n";
  return all;
}

TEST(ElectronBeams, TheInventedFixtureLoadsAndValidatesClean) {
  const ValidationReport report = validate_library(fixture());
  EXPECT_TRUE(report.clean()) << problems_of(report);
  EXPECT_EQ(report.beam_count, 1u);
  const auto library = load_library(fixture());
  ASSERT_TRUE(library) << library.error().message();
  const Machine& m = library->machines.front();
  EXPECT_TRUE(m.beams.empty());
  ASSERT_EQ(m.electron_beams.size(), 1u);
  const ElectronBeamData* e = m.electron_beam(9.0);
  ASSERT_NE(e, nullptr);
  EXPECT_EQ(e->id, "9E");
  EXPECT_DOUBLE_EQ(e->dmax_cm, 2.0);
  EXPECT_DOUBLE_EQ(e->pdd_ssd_cm, 100.0);
  EXPECT_EQ(e->calibration.applicator, "A10");
  EXPECT_DOUBLE_EQ(e->calibration.output_cgy_per_mu, 1.0);
  ASSERT_EQ(e->applicators.size(), 3u);
  const ApplicatorData* a10 = e->applicator("A10");
  ASSERT_NE(a10, nullptr);
  EXPECT_DOUBLE_EQ(a10->field_cm, 10.0);
  EXPECT_DOUBLE_EQ(a10->effective_ssd_cm, 96.5);
  EXPECT_EQ(a10->pdd.columns(), (std::vector<double>{4, 6, 8, 10}));
  EXPECT_DOUBLE_EQ(a10->pdd.at(2.0, 10.0).value, 100.0);
  ASSERT_TRUE(a10->cutout);
  EXPECT_DOUBLE_EQ(a10->cutout->at(10.0).value, 1.0);
  EXPECT_EQ(a10->cutout->quantity(), "cutout_factor");
  // Electron beams never match a photon request; the engine reports them as not supported.
  EXPECT_EQ(library->match("TEST-LINAC-E", "ELECTRON", 9.0).beam, nullptr);
  EXPECT_EQ(m.electron_beam(12.0), nullptr);
}

TEST(ElectronBeams, TheirTablesBelongToTheFingerprint) {
  const TempDir dir;
  const fs::path machine = copy_fixture(dir);
  const auto before = load_library(dir.path());
  ASSERT_TRUE(before);
  testing::set_cell(machine / "9E/cutout_a6.csv", "3", 2, "0.956");
  const auto after = load_library(dir.path());
  ASSERT_TRUE(after) << after.error().message();
  EXPECT_NE(after->sha256_hex, before->sha256_hex);
}

TEST(ElectronBeams, EveryElectronRuleIsChecked) {
  struct Case {
    std::function<void(const fs::path&)> damage;
    std::string file;
    std::string expected;
  };
  const std::vector<Case> cases = {
      {[](const fs::path& m) { testing::set_cell(m / "9E/pdd_a10.csv", "2", 3, "98.00"); }, "9E/pdd_a10.csv",
       "pdd: 100 at dmax of each column: the maximum of field 6 cm is 99.24 (at depth_cm 1.5), expected 100 "
       "within "
       "0.5 %"},
      {[](const fs::path& m) { testing::set_cell(m / "9E/cutout_a10.csv", "10", 2, "0.990"); },
       "9E/cutout_a10.csv",
       "cutout factor of the open applicator field (10 cm) = 0.99, expected 1 within 0.5 %"},
      {[](const fs::path& m) {
         testing::replace_in_file(m / "machine.toml", "effective_ssd_cm = 92.0", "effective_ssd_cm = 80.0");
       },
       "machine.toml",
       "applicator A6.effective_ssd_cm: 80 cm differs by -20 % from the standard SSD 100 cm (limit 15 %)"},
      {[](const fs::path& m) {
         testing::replace_in_file(m / "machine.toml", "applicator = \"A10\"", "applicator = \"A12\"");
       },
       "machine.toml",
       "beam[1].calibration.applicator: names applicator 'A12', which this beam does not define"},
      {[](const fs::path& m) { testing::replace_in_file(m / "machine.toml", "id = \"A15\"", "id = \"A6\""); },
       "machine.toml", "applicator id 'A6' appears twice"},
      {[](const fs::path& m) { testing::replace_in_file(m / "machine.toml", "field_cm = 15.0\n", ""); },
       "machine.toml", "beam[1].applicator[3].field_cm: missing"},
      {[](const fs::path& m) {
         testing::replace_in_file(m / "machine.toml", "pdd = \"9E/pdd_a6.csv\"\n", "");
       },
       "machine.toml", "beam[1].applicator[1].pdd: missing"},
      {[](const fs::path& m) { testing::set_cell(m / "9E/pdd_a6.csv", "3", 2, "150"); }, "9E/pdd_a6.csv",
       "pdd: pdd 150 outside the plausible range [0, 100.5]"},
  };
  for (const auto& c : cases) {
    SCOPED_TRACE(c.expected);
    const TempDir dir;
    const fs::path machine = copy_fixture(dir);
    c.damage(machine);
    const auto report = validate_library(dir.path());
    const std::string all = problems_of(report);
    EXPECT_NE(all.find((machine / c.file).string()), std::string::npos) << all;
    EXPECT_NE(all.find(c.expected), std::string::npos) << all;
    EXPECT_FALSE(load_library(dir.path()));
  }
}

TEST(ElectronBeams, AMissingCutoutTableIsAbsentNotAssumed) {
  const TempDir dir;
  const fs::path machine = copy_fixture(dir);
  testing::replace_in_file(machine / "machine.toml", "cutout = \"9E/cutout_a15.csv\"\n", "");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  EXPECT_FALSE(library->machines.front().electron_beams.front().applicator("A15")->cutout);
}

// The optional keys of the electron calculation (FORMAT.md "Electron beams"): an electron beam's
// ssd_range_cm and the machine's [[bolus]] sheets; absent they stay absent, a repeated bolus id is
// refused (the plan's Bolus ID would be ambiguous).
TEST(ElectronBeams, SsdRangeAndBolusSheetsAreReadWhenStated) {
  const TempDir dir;
  const fs::path machine = copy_fixture(dir);
  {
    const auto plain = load_library(dir.path());
    ASSERT_TRUE(plain) << plain.error().message();
    EXPECT_FALSE(plain->machines.front().electron_beams.front().ssd_range_cm);
    EXPECT_TRUE(plain->machines.front().boli.empty());
  }
  testing::replace_in_file(machine / "machine.toml", "pdd_ssd_cm = 100.0\n",
                           "pdd_ssd_cm = 100.0\nssd_range_cm = [95.0, 115.0]\n");
  testing::replace_in_file(machine / "machine.toml", "sad_cm = 100.0\n",
                           "sad_cm = 100.0\n\n[[bolus]]\nid = \"SHEET-5\"\nthickness_cm = 0.5\n");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  const Machine& m = library->machines.front();
  ASSERT_TRUE(m.electron_beams.front().ssd_range_cm);
  EXPECT_DOUBLE_EQ(m.electron_beams.front().ssd_range_cm->min_cm, 95.0);
  EXPECT_DOUBLE_EQ(m.electron_beams.front().ssd_range_cm->max_cm, 115.0);
  ASSERT_NE(m.bolus("SHEET-5"), nullptr);
  EXPECT_DOUBLE_EQ(m.bolus("SHEET-5")->thickness_cm, 0.5);
  EXPECT_EQ(m.bolus("SHEET-9"), nullptr);

  testing::replace_in_file(machine / "machine.toml", "thickness_cm = 0.5\n",
                           "thickness_cm = 0.5\n\n[[bolus]]\nid = \"SHEET-5\"\nthickness_cm = 1.0\n");
  const auto report = validate_library(dir.path());
  EXPECT_NE(problems_of(report).find("bolus id 'SHEET-5' appears twice"), std::string::npos)
      << problems_of(report);
  EXPECT_FALSE(load_library(dir.path()));
}

}  // namespace
}  // namespace countersign::beamdata
