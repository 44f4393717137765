// Loading beam-data libraries (beamdata/FORMAT.md): a small library written by hand in library_fixture.hpp
// (invented data, not the demo), matching, the fingerprint, and errors that name file and place.
#include <countersign/beamdata/library.hpp>

#include "beamdata/library_fixture.hpp"
#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <regex>

namespace countersign::beamdata {
namespace {

using testing::TempDir;

TEST(LoadLibrary, HandWrittenLibraryLoads) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  ASSERT_EQ(library->machines.size(), 1u);
  const Machine& m = library->machines.front();
  EXPECT_EQ(m.name, "TEST-LINAC-H");
  EXPECT_DOUBLE_EQ(m.sad_cm, 100.0);  // written as an integer in TOML
  EXPECT_EQ(m.manifest, dir.path() / "TEST-LINAC-H" / "machine.toml");
  ASSERT_EQ(m.beams.size(), 1u);
  const BeamData& b = m.beams.front();
  EXPECT_EQ(b.id, "X6");
  EXPECT_EQ(b.radiation, "PHOTON");
  EXPECT_DOUBLE_EQ(b.energy_mv, 6.0);
  EXPECT_DOUBLE_EQ(b.dmax_cm, 1.5);
  EXPECT_DOUBLE_EQ(b.pdd_ssd_cm, 100.0);
  EXPECT_DOUBLE_EQ(b.calibration.output_cgy_per_mu, 0.998);
  EXPECT_DOUBLE_EQ(b.calibration.source_to_point_cm(), 101.5);
  // The blank line inside pdd.csv is ignored; the CRLF line ends of sp.csv are accepted.
  ASSERT_EQ(b.pdd.rows().size(), 5u);
  EXPECT_DOUBLE_EQ(b.pdd.cell(3, 1), 66.74);
  EXPECT_EQ(b.pdd.file(), "x6/pdd.csv");
  EXPECT_DOUBLE_EQ(b.tmr.at(10.0, 10.0).value, 0.7747);
  EXPECT_DOUBLE_EQ(b.sp.at(20.0).value, 1.0276);
  EXPECT_DOUBLE_EQ(b.sc.at(4.0).value, 0.9586);
  EXPECT_FALSE(b.oar.has_value());
  EXPECT_FALSE(b.mlc_transmission.has_value());
  ASSERT_NE(b.wedge("WX30"), nullptr);
  EXPECT_DOUBLE_EQ(*b.wedge("WX30")->factor, 0.7);
  EXPECT_EQ(b.wedge("WX30")->kind, WedgeKind::physical);
  ASSERT_NE(b.wedge("WX60"), nullptr);
  EXPECT_EQ(b.wedge("WX60")->kind, WedgeKind::dynamic);
  ASSERT_TRUE(b.wedge("WX60")->table.has_value());
  EXPECT_NEAR(b.wedge("WX60")->table->at(1.5, 12.5).value, 0.505, 1e-12);
  EXPECT_EQ(b.wedge("W30"), nullptr);
  ASSERT_NE(b.tray("TRAY-H"), nullptr);
  EXPECT_DOUBLE_EQ(b.tray("TRAY-H")->factor, 0.96);
  EXPECT_TRUE(library->warnings.empty());
  EXPECT_TRUE(std::regex_match(library->sha256_hex, std::regex{"[0-9a-f]{64}"}));
}

TEST(LoadLibrary, MachineFolderGivesTheSameLibraryAndFingerprint) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto whole = load_library(dir.path());
  const auto single = load_library(dir.path() / "TEST-LINAC-H");
  ASSERT_TRUE(whole);
  ASSERT_TRUE(single) << single.error().message();
  EXPECT_EQ(single->machines.size(), 1u);
  EXPECT_EQ(whole->sha256_hex, single->sha256_hex);
  // However the path is spelt.
  const auto slash = load_library((dir.path() / "TEST-LINAC-H").string() + "/");
  ASSERT_TRUE(slash);
  EXPECT_EQ(slash->sha256_hex, whole->sha256_hex);
  const auto dotted = load_library(dir.path() / "TEST-LINAC-H" / "x6" / "..");
  ASSERT_TRUE(dotted);
  EXPECT_EQ(dotted->sha256_hex, whole->sha256_hex);
}

TEST(LoadLibrary, FingerprintIsTheDocumentedStreamHashedBySha256sum) {
  // beamdata/FORMAT.md "Library fingerprint": manifest, then pdd, tmr, sc, sp, then wedge tables, each as
  // "<machine>/<path>\n<size>\n<bytes>". GNU coreutils sha256sum is the independent hasher.
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto machine = dir.path() / "TEST-LINAC-H";
  std::string stream;
  for (const std::string rel :
       {"machine.toml", "x6/pdd.csv", "x6/tmr.csv", "x6/sc.csv", "x6/sp.csv", "x6/wf_wx60.csv"}) {
    const std::string bytes = testing::read_text(machine / rel);
    stream += "TEST-LINAC-H/" + rel + "\n" + std::to_string(bytes.size()) + "\n" + bytes;
  }
  const TempDir out;
  testing::write_text(out.path() / "stream", stream);
  const auto result = countersign::test::run_command(
      "sha256sum " + countersign::test::quote((out.path() / "stream").string()));
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library);
  EXPECT_EQ(result.out.substr(0, 64), library->sha256_hex);
}

TEST(LoadLibrary, FingerprintFollowsTheBytesNotThePlace) {
  const TempDir a;
  const TempDir b;
  testing::write_hand_library(a.path());
  testing::write_hand_library(b.path());
  const auto first = load_library(a.path());
  ASSERT_TRUE(first);
  EXPECT_EQ(load_library(b.path())->sha256_hex, first->sha256_hex);
  testing::set_cell(b.path() / "TEST-LINAC-H/x6/tmr.csv", "10", 2, "0.7310");
  const auto changed = load_library(b.path());
  ASSERT_TRUE(changed) << changed.error().message();
  EXPECT_NE(changed->sha256_hex, first->sha256_hex);
}

TEST(LibraryMatch, ByExactMachineRadiationAndEnergy) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library);

  const BeamMatch ok = library->match("TEST-LINAC-H", "PHOTON", 6.0);
  ASSERT_NE(ok.beam, nullptr);
  EXPECT_EQ(ok.beam->id, "X6");
  EXPECT_FALSE(ok.failure.has_value());
  EXPECT_NE(library->match("TEST-LINAC-H", "PHOTON", 6.005).beam, nullptr);  // within 0.01 MV

  const BeamMatch case_differs = library->match("test-linac-h", "PHOTON", 6.0);
  EXPECT_EQ(case_differs.machine, nullptr);
  EXPECT_EQ(case_differs.failure, MatchFailure::unknown_machine);
  EXPECT_NE(case_differs.explanation.find("test-linac-h"), std::string::npos);

  const BeamMatch electron = library->match("TEST-LINAC-H", "ELECTRON", 6.0);
  EXPECT_NE(electron.machine, nullptr);
  EXPECT_EQ(electron.beam, nullptr);
  EXPECT_EQ(electron.failure, MatchFailure::unknown_radiation);

  const BeamMatch energy = library->match("TEST-LINAC-H", "PHOTON", 10.0);
  EXPECT_EQ(energy.beam, nullptr);
  EXPECT_EQ(energy.failure, MatchFailure::unknown_energy);
  EXPECT_EQ(library->match("TEST-LINAC-H", "PHOTON", 6.02).failure, MatchFailure::unknown_energy);
}

TEST(LoadLibrary, DemoLibraryLoads) {
  const auto library = load_library(testing::demo_library());
  ASSERT_TRUE(library) << library.error().message();
  const Machine* m = library->machine("FERN-LINAC-1");
  ASSERT_NE(m, nullptr);
  EXPECT_DOUBLE_EQ(m->sad_cm, 100.0);
  ASSERT_EQ(m->beams.size(), 2u);
  for (const auto& beam : m->beams) {
    for (const char* wedge : {"W15", "W30", "W45", "W60"})
      EXPECT_NE(beam.wedge(wedge), nullptr) << beam.id << wedge;
    EXPECT_NE(beam.tray("TRAY-A"), nullptr);
    EXPECT_TRUE(beam.oar.has_value());
    ASSERT_TRUE(beam.mlc_transmission.has_value());
    EXPECT_GT(*beam.mlc_transmission, 0.0);
  }
  EXPECT_TRUE(library->warnings.empty());
  EXPECT_NE(library->match("FERN-LINAC-1", "PHOTON", 10.0).beam, nullptr);
}

TEST(LoadLibrary, UnsupportedRadiationIsLeftOutWithAWarning) {
  // Protons (or any type the format does not describe) are left out: plans using them are not checked.
  const TempDir dir;
  testing::write_hand_library(dir.path());
  testing::write_text(dir.path() / "TEST-LINAC-H/machine.toml",
                      testing::read_text(dir.path() / "TEST-LINAC-H/machine.toml") +
                          "\n[[beam]]\nid = \"P150\"\nradiation = \"PROTON\"\nenergy_mv = 150\n");
  const auto library = load_library(dir.path());
  ASSERT_TRUE(library) << library.error().message();
  EXPECT_EQ(library->machines.front().beams.size(), 1u);
  ASSERT_EQ(library->warnings.size(), 1u);
  EXPECT_NE(library->warnings.front().text().find("PROTON"), std::string::npos);
  EXPECT_EQ(library->match("TEST-LINAC-H", "PROTON", 150.0).failure, MatchFailure::unknown_radiation);
}

TEST(LoadLibrary, AnIncompleteElectronBeamIsAnErrorNotSilentlyDropped) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  testing::write_text(dir.path() / "TEST-LINAC-H/machine.toml",
                      testing::read_text(dir.path() / "TEST-LINAC-H/machine.toml") +
                          "\n[[beam]]\nid = \"E9\"\nradiation = \"ELECTRON\"\nenergy_mv = 9\n");
  const auto library = load_library(dir.path());
  ASSERT_FALSE(library);
  EXPECT_NE(library.error().message().find("beam[2]."), std::string::npos) << library.error().message();
}

TEST(LoadLibrary, MissingFolderOrManifestIsAnError) {
  const TempDir dir;
  const auto missing = load_library(dir.path() / "nowhere");
  ASSERT_FALSE(missing);
  EXPECT_EQ(missing.error().kind, ErrorKind::bad_beamdata);
  const auto empty = load_library(dir.path());
  ASSERT_FALSE(empty);
  EXPECT_NE(empty.error().message().find("machine.toml"), std::string::npos);
}

TEST(LoadLibrary, BadCellErrorNamesFileRowAndColumn) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto pdd = dir.path() / "TEST-LINAC-H/x6/pdd.csv";
  const std::size_t row = testing::set_cell(pdd, "10", 3, "6x.74");
  const auto library = load_library(dir.path());
  ASSERT_FALSE(library);
  EXPECT_EQ(library.error().kind, ErrorKind::bad_beamdata);
  const std::string message = library.error().message();
  EXPECT_NE(message.find(pdd.string()), std::string::npos) << message;
  EXPECT_NE(message.find("row " + std::to_string(row) + ", column 3"), std::string::npos) << message;
  EXPECT_NE(message.find("'6x.74' is not a number"), std::string::npos) << message;
}

TEST(LoadLibrary, TomlSyntaxErrorNamesTheLine) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const auto manifest = dir.path() / "TEST-LINAC-H/machine.toml";
  testing::replace_in_file(manifest, "sad_cm = 100", "sad_cm = = 100");
  const auto library = load_library(dir.path());
  ASSERT_FALSE(library);
  EXPECT_NE(library.error().message().find("line 3"), std::string::npos) << library.error().message();
}

TEST(LoadLibrary, MissingKeyNamesTheKeyPath) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  testing::replace_in_file(dir.path() / "TEST-LINAC-H/machine.toml", "\nssd_cm = 100.0\n", "\n");
  const auto library = load_library(dir.path());
  ASSERT_FALSE(library);
  EXPECT_NE(library.error().message().find("beam[1].calibration.ssd_cm"), std::string::npos)
      << library.error().message();
}

}  // namespace
}  // namespace countersign::beamdata
