// The SQLite history as a file: a damaged file is refused when a service opens it, with the reason
// (not one failing batch after another), and a history of the first version is upgraded with its
// checks kept and covered by the audit trail.

#include <countersign/store/audit.hpp>
#include <countersign/store/store.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <fstream>

namespace countersign::store {
namespace {

namespace fs = std::filesystem;

TEST(SqliteFile, ADamagedFileIsRefusedAtOpeningWithTheReason) {
  const fs::path dir = test::make_temp_dir("countersign-sqlite");
  const fs::path file = dir / "history.sqlite";
  {
    auto store = Store::open(StoreLocation::parse(file.string()), Access::read_write);
    ASSERT_TRUE(store) << store.error().message();
  }
  // Overwrite the middle of the file (its tables' pages) with garbage.
  const auto size = fs::file_size(file);
  ASSERT_GT(size, 8192U);
  {
    std::fstream out(file, std::ios::in | std::ios::out | std::ios::binary);
    out.seekp(4096);
    const std::string garbage(4096, '\x5a');
    out.write(garbage.data(), static_cast<std::streamsize>(garbage.size()));
  }
  auto damaged = Store::open(StoreLocation::parse(file.string()), Access::read_write);
  ASSERT_FALSE(damaged);
  EXPECT_EQ(damaged.error().kind, ErrorKind::io);
  EXPECT_NE(damaged.error().message().find("damaged"), std::string::npos) << damaged.error().message();
  EXPECT_NE(damaged.error().message().find(file.string()), std::string::npos) << damaged.error().message();

  // Not a database at all.
  std::ofstream(dir / "notes.sqlite") << std::string(8192, 'x');
  auto not_history = Store::open(StoreLocation::parse((dir / "notes.sqlite").string()), Access::read_write);
  ASSERT_FALSE(not_history);
  EXPECT_NE(not_history.error().message().find("not a countersign history"), std::string::npos)
      << not_history.error().message();
  fs::remove_all(dir);
}

TEST(SqliteFile, AFirstVersionHistoryIsUpgradedWithItsChecksInTheTrail) {
  const fs::path dir = test::make_temp_dir("countersign-sqlite");
  const fs::path file = dir / "history.sqlite";
  // The first version's schema and two of its rows (a re-export marked superseded in place).
  const std::string legacy =
      "CREATE TABLE checks (id INTEGER PRIMARY KEY, sop_instance_uid TEXT NOT NULL, content_sha256 TEXT NOT "
      "NULL, "
      "patient_id TEXT NOT NULL, plan_label TEXT NOT NULL, verdict TEXT NOT NULL, beamdata_sha256 TEXT NOT "
      "NULL, "
      "software_version TEXT NOT NULL, checked_at_utc TEXT NOT NULL, source_name TEXT NOT NULL, result_file "
      "TEXT "
      "NOT NULL, replaces_check_id INTEGER REFERENCES checks(id), superseded_by_check_id INTEGER REFERENCES "
      "checks(id), UNIQUE (sop_instance_uid, content_sha256));"
      "CREATE TABLE beams (check_id INTEGER NOT NULL REFERENCES checks(id), position INTEGER NOT NULL, "
      "beam_number "
      "INTEGER NOT NULL, beam_name TEXT NOT NULL, machine TEXT NOT NULL, energy_mv REAL, technique TEXT NOT "
      "NULL, "
      "verdict TEXT NOT NULL, deviation_percent REAL, tolerance_percent REAL, reason TEXT NOT NULL, PRIMARY "
      "KEY "
      "(check_id, position));"
      "INSERT INTO checks VALUES (1, '2.25.5', 'a', 'FERN-DEMO-001', 'DEMO', 'outside_tolerance', 'b', "
      "'0.1.0', "
      "'2026-11-01T08:00:00Z', 'RP.dcm', '/r/2.25.5.json', NULL, 2);"
      "INSERT INTO checks VALUES (2, '2.25.5', 'c', 'FERN-DEMO-001', 'DEMO', 'within_tolerance', 'b', "
      "'0.1.0', "
      "'2026-11-01T09:00:00Z', 'RP.dcm', '/r/2.25.5.json', 1, NULL);"
      "INSERT INTO beams VALUES (1, 0, 1, 'AP', 'FERN-LINAC-1', 6.0, 'simple/tmr', 'outside_tolerance', 7.5, "
      "2.0, "
      "'');"
      "PRAGMA user_version = 1;";
  const auto made = test::run_command("sqlite3 " + test::quote(file.string()) + " " + test::quote(legacy));
  ASSERT_EQ(made.exit_code, 0) << made.err << " (sqlite3: bash tools/install-deps)";

  auto store = Store::open(StoreLocation::parse(file.string()), Access::read_write);
  ASSERT_TRUE(store) << store.error().message();
  auto all = store.value()->list_checks({});
  ASSERT_TRUE(all) << all.error().message();
  ASSERT_EQ(all->size(), 2U);
  EXPECT_EQ(all->back().superseded_by_check_id, 2);
  EXPECT_EQ(all->back().beams.size(), 1U);
  EXPECT_EQ(all->back().review_status, ReviewStatus::open);  // a caught error of the old history, to review
  auto ids = store.value()->reserve_check_ids(1);
  ASSERT_TRUE(ids);
  EXPECT_EQ(ids->front(), 3);  // never an id the old history used
  auto trail = store.value()->read_audit_trail();
  ASSERT_TRUE(trail);
  ASSERT_EQ(trail->entries.size(), 1U);
  EXPECT_EQ(trail->entries[0].kind, AuditKind::import);
  EXPECT_TRUE(verify_trail(*trail, std::nullopt, std::nullopt).intact());
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::store
