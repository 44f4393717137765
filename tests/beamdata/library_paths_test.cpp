// Table paths stay inside the library (no "..", no absolute paths, no symbolic links leading out),
// beam ids are unique, and files written with CRLF line ends load like LF ones.
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

namespace countersign::beamdata {
namespace {

namespace fs = std::filesystem;
using testing::TempDir;

std::string problems_of(const ValidationReport& report) {
  std::string all;
  for (const auto& p : report.problems) all += p.text() + "\n";
  return all;
}

// The hand library with its tmr path replaced; the loader must refuse it naming the key.
void expect_refused_path(const std::string& path, const std::string& reason) {
  SCOPED_TRACE(path);
  const TempDir dir;
  testing::write_hand_library(dir.path());
  testing::replace_in_file(dir.path() / "TEST-LINAC-H/machine.toml", "tmr = \"x6/tmr.csv\"",
                           "tmr = \"" + path + "\"");
  const auto library = load_library(dir.path());
  ASSERT_FALSE(library);
  EXPECT_NE(library.error().message().find("beam[1].tables.tmr"), std::string::npos)
      << library.error().message();
  EXPECT_NE(library.error().message().find(reason), std::string::npos) << library.error().message();
}

TEST(LibraryPaths, TablePathsMayNotLeaveTheMachineFolder) {
  expect_refused_path("../../../../etc/passwd", "leads out of the folder with '..'");
  expect_refused_path("x6/../../TEST-LINAC-H/x6/tmr.csv", "leads out of the folder with '..'");
  expect_refused_path("/etc/passwd", "is an absolute path");
  expect_refused_path("x6\\\\tmr.csv", "contains '\\'");
  expect_refused_path("", "not a non-empty string");
}

TEST(LibraryPaths, ASymbolicLinkLeadingOutIsRefusedOneInsideIsAccepted) {
  const TempDir outside;
  testing::write_text(outside.path() / "tmr.csv",
                      testing::read_text(testing::demo_library() / "FERN-LINAC-1/6X/tmr.csv"));
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const fs::path machine = dir.path() / "TEST-LINAC-H";
  fs::create_symlink(outside.path() / "tmr.csv", machine / "x6/linked_tmr.csv");
  testing::replace_in_file(machine / "machine.toml", "tmr = \"x6/tmr.csv\"", "tmr = \"x6/linked_tmr.csv\"");
  const auto refused = load_library(dir.path());
  ASSERT_FALSE(refused);
  EXPECT_NE(refused.error().message().find("is a symbolic link to " +
                                           fs::canonical(outside.path() / "tmr.csv").string()),
            std::string::npos)
      << refused.error().message();
  // A link that stays inside the machine folder is fine (the bytes are what is hashed).
  fs::remove(machine / "x6/linked_tmr.csv");
  fs::create_symlink("tmr.csv", machine / "x6/linked_tmr.csv");
  const auto accepted = load_library(dir.path());
  ASSERT_TRUE(accepted) << accepted.error().message();
  // CT tables in ct/ may not link out of the library either.
  fs::create_directory(dir.path() / "ct");
  testing::write_text(outside.path() / "ct.csv", "hu,relative_electron_density\n-1000,0\n0,1\n");
  fs::create_symlink(outside.path() / "ct.csv", dir.path() / "ct/default.csv");
  const auto ct = validate_library(dir.path());
  EXPECT_NE(problems_of(ct).find("ct/default.csv: ct: 'default.csv' is a symbolic link to"),
            std::string::npos)
      << problems_of(ct);
}

TEST(LibraryPaths, DuplicateBeamIdsAreRefused) {
  const TempDir dir;
  testing::write_hand_library(dir.path());
  const fs::path manifest = dir.path() / "TEST-LINAC-H/machine.toml";
  // A second beam with the same id (another energy, so only the id clashes).
  std::string text = testing::read_text(manifest);
  const auto beam = text.find("[[beam]]");
  const auto wedge = text.find("[[beam.wedge]]");
  std::string second = text.substr(beam, wedge - beam);
  second.replace(second.find("energy_mv = 6"), 13, "energy_mv = 10");
  testing::write_text(manifest, text + "\n" + second);
  const auto report = validate_library(dir.path());
  EXPECT_NE(problems_of(report).find("beam[2].id: beam id 'X6' appears twice"), std::string::npos)
      << problems_of(report);
  EXPECT_FALSE(load_library(dir.path()));
}

TEST(LibraryPaths, CrlfManifestAndTablesLoadLikeLf) {
  const TempDir lf;
  const TempDir crlf;
  testing::write_hand_library(lf.path());
  testing::write_hand_library(crlf.path());
  for (const auto& entry : fs::recursive_directory_iterator(crlf.path())) {
    if (!entry.is_regular_file()) continue;
    std::string text = testing::read_text(entry.path()), out;
    for (const char c : text) {
      if (c == '\n' && (out.empty() || out.back() != '\r')) out += '\r';
      out += c;
    }
    testing::write_text(entry.path(), out);
  }
  const auto a = load_library(lf.path());
  const auto b = load_library(crlf.path());
  ASSERT_TRUE(a) << a.error().message();
  ASSERT_TRUE(b) << b.error().message();
  const BeamData& x = a->machines.front().beams.front();
  const BeamData& y = b->machines.front().beams.front();
  EXPECT_EQ(x.pdd.rows(), y.pdd.rows());
  EXPECT_EQ(x.pdd.columns(), y.pdd.columns());
  EXPECT_DOUBLE_EQ(x.tmr.at(10.0, 10.0).value, y.tmr.at(10.0, 10.0).value);
  EXPECT_DOUBLE_EQ(x.calibration.output_cgy_per_mu, y.calibration.output_cgy_per_mu);
  EXPECT_TRUE(b->warnings.empty());
  // The fingerprint is over the bytes, so the two spellings differ.
  EXPECT_NE(a->sha256_hex, b->sha256_hex);
}

}  // namespace
}  // namespace countersign::beamdata
