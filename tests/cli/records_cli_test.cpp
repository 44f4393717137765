// Records that are never lost, reviews and the audit trail, end to end through the program, on both
// history stores (an SQLite file in the results folder; a throwaway PostgreSQL server on a Unix
// socket, tests/support/postgres: the test fails, never skips, without PostgreSQL). The plans are the
// INVENTED demo plan fern_half_beam.dcm and a copy of it with the meterset of its beam raised to
// 240 MU (outside tolerance): the "caught error" exported first, then the corrected plan with the
// same SOP Instance UID.

#include "support/paths.hpp"
#include "support/postgres.hpp"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <fstream>
#include <sstream>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;
using nlohmann::json;

std::string slurp(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

class RecordsCli : public ::testing::TestWithParam<std::string> {
 protected:
  void SetUp() override {
    dir_ = make_temp_dir("countersign-records");
    fs::create_directories(dir_ / "inbox");
    if (GetParam() == "postgresql") {
      std::string error;
      url_ = fresh_store_location("postgresql", dir_, error);
      ASSERT_FALSE(url_.empty()) << error;
    }
    const fs::path plan = source_dir() / "testdata" / "plans" / "fern_half_beam.dcm";
    ASSERT_TRUE(fs::exists(plan));
    fs::copy_file(plan, dir_ / "corrected.dcm");
    fs::copy_file(plan, dir_ / "flagged.dcm");
    // The caught error: 240 MU instead of 213.1 for the same dose (same SOP Instance UID).
    const auto modified = run_command("dcmodify -nb -m \"(300a,0070)[0].(300c,0004)[0].(300a,0086)=240.0\" " +
                                      quote((dir_ / "flagged.dcm").string()));
    ASSERT_EQ(modified.exit_code, 0) << "dcmodify (DCMTK) is needed: " << modified.err;
    std::ofstream script(dir_ / "alert.sh");
    script << "#!/bin/sh\necho \"$COUNTERSIGN_VERDICT $COUNTERSIGN_CHECK_ID $1\" >> "
           << quote((dir_ / "alerts.txt").string()) << "\n";
    script.close();
    fs::permissions(dir_ / "alert.sh", fs::perms::owner_all);
  }
  void TearDown() override { fs::remove_all(dir_); }

  [[nodiscard]] std::string store_options() const {
    std::string options = " --results " + quote((dir_ / "results").string());
    if (!url_.empty()) options += " --db " + quote(url_);
    return options;
  }

  CommandOutput countersign(const std::string& arguments) const {
    return run_command(quote(program().string()) + " " + arguments);
  }

  CommandOutput watch_once(const std::string& extra = "") const {
    return countersign("watch " + quote((dir_ / "inbox").string()) + " --study-wait 0 --out " +
                       quote((dir_ / "results").string()) + " --once" +
                       (url_.empty() ? "" : " --db " + quote(url_)) + " " + extra);
  }

  json history(const std::string& filters = "") const {
    const auto listed = countersign("history --json" + store_options() + " " + filters);
    EXPECT_EQ(listed.exit_code, 0) << listed.err;
    return json::parse(listed.out, nullptr, false);
  }

  // Changes the store behind the program's back, as someone with write access to the database could.
  void tamper(const std::string& sql) const {
    const auto done = url_.empty()
                          ? run_command("sqlite3 " + quote((dir_ / "results" / "history.sqlite").string()) +
                                        " " + quote(sql))
                          : run_command("psql -X -q -v ON_ERROR_STOP=1 " + quote(url_) + " -c " + quote(sql));
    ASSERT_EQ(done.exit_code, 0) << done.err
                                 << " (sqlite3 and psql are Debian packages: bash tools/install-deps)";
  }

  CommandOutput verify() const { return countersign("audit verify" + store_options()); }

  fs::path dir_;
  std::string url_;
};

TEST_P(RecordsCli, AReExportKeepsBothRecordsAndTheFlaggedOneStaysVisibleUntilReviewed) {
  // A different tolerance policy for the corrected export: its check shows what changed.
  std::string policy = slurp(source_dir() / "config" / "tolerance-policy.toml");
  policy.replace(policy.find("simple = 2.0"), 12, "simple = 2.5");
  std::ofstream(dir_ / "policy.toml") << policy;

  fs::copy_file(dir_ / "flagged.dcm", dir_ / "inbox" / "RP1.dcm");
  const auto first = watch_once("--on-flag " + quote(quote((dir_ / "alert.sh").string())));
  ASSERT_EQ(first.exit_code, 0) << first.out << first.err;
  fs::copy_file(dir_ / "corrected.dcm", dir_ / "inbox" / "RP1.dcm");
  const auto second = watch_once("--policy " + quote((dir_ / "policy.toml").string()));
  ASSERT_EQ(second.exit_code, 0) << second.out << second.err;
  EXPECT_NE(second.out.find("inputs changed: tolerance policy"), std::string::npos) << second.out;

  // Every check listed by default, the caught error included; both records kept, never replaced.
  const json all = history();
  ASSERT_EQ(all["checks"].size(), 2U) << all.dump(1);
  const json& corrected = all["checks"][0];
  const json& flagged = all["checks"][1];
  EXPECT_EQ(flagged["status"], "outside_tolerance");
  EXPECT_EQ(corrected["status"], "within_tolerance");
  EXPECT_EQ(corrected["replaces_check_id"], flagged["check_id"]);
  EXPECT_EQ(flagged["superseded_by_check_id"], corrected["check_id"]);
  EXPECT_EQ(corrected["inputs_changed"][0]["input"], "tolerance_policy");
  EXPECT_EQ(flagged["review_status"], "open");
  const std::string flagged_json = slurp(flagged["result_file"].get<std::string>());
  const std::string corrected_json = slurp(corrected["result_file"].get<std::string>());
  EXPECT_NE(flagged_json.find("outside_tolerance"), std::string::npos);
  EXPECT_NE(flagged_json, corrected_json);
  EXPECT_NE(flagged["result_file"], corrected["result_file"]);
  EXPECT_TRUE(fs::exists(dir_ / "results" / flagged["files"]["result_sr"].get<std::string>()));

  // The alert ran once, for the flagged plan, with its result file.
  const std::string alerts = slurp(dir_ / "alerts.txt");
  EXPECT_EQ(alerts, "outside_tolerance " + std::to_string(flagged["check_id"].get<int>()) + " " +
                        flagged["result_file"].get<std::string>() + "\n")
      << first.out;

  // Open until reviewed; a review is recorded with its reviewer and shown with the check.
  ASSERT_EQ(history("--open")["checks"].size(), 1U);
  const std::string id = std::to_string(flagged["check_id"].get<int>());
  EXPECT_EQ(countersign("review " + std::to_string(corrected["check_id"].get<int>()) +
                        " --accept --reason 'nothing to review'" + store_options())
                .exit_code,
            3);
  const auto reviewed = countersign(
      "review " + id + " --reject --reason 'MU typed in twice; corrected export checked'" + store_options());
  ASSERT_EQ(reviewed.exit_code, 0) << reviewed.err;
  EXPECT_TRUE(history("--open")["checks"].empty());
  const auto shown = countersign("history --check " + id + store_options());
  EXPECT_EQ(shown.exit_code, 0) << shown.err;
  EXPECT_NE(shown.out.find("Review: rejected"), std::string::npos) << shown.out;
  EXPECT_NE(shown.out.find("MU typed in twice; corrected export checked"), std::string::npos) << shown.out;
  EXPECT_NE(shown.out.find("(os_user)"), std::string::npos) << shown.out;

  const auto intact = verify();
  EXPECT_EQ(intact.exit_code, 0) << intact.out << intact.err;
  EXPECT_NE(intact.out.find("INTACT"), std::string::npos) << intact.out;
}

TEST_P(RecordsCli, AuditVerifyNamesAChangedResultFileAChangedRowAndADeletedEntry) {
  fs::copy_file(dir_ / "flagged.dcm", dir_ / "inbox" / "RP1.dcm");
  ASSERT_EQ(watch_once().exit_code, 0);
  fs::copy_file(dir_ / "corrected.dcm", dir_ / "inbox" / "RP1.dcm");
  ASSERT_EQ(watch_once().exit_code, 0);
  const json all = history();
  ASSERT_EQ(all["checks"].size(), 2U);
  const std::string flagged_id = std::to_string(all["checks"][1]["check_id"].get<int>());
  ASSERT_EQ(verify().exit_code, 0) << verify().out;

  // 1. A result file edited: the entry, the check and the file are named.
  const fs::path result = all["checks"][1]["result_file"].get<std::string>();
  const std::string original = slurp(result);
  std::ofstream(result, std::ios::app) << " ";
  auto found = verify();
  EXPECT_EQ(found.exit_code, 1) << found.out;
  EXPECT_NE(found.out.find("check #" + flagged_id), std::string::npos) << found.out;
  EXPECT_NE(found.out.find(result.string() + " differs"), std::string::npos) << found.out;
  std::ofstream(result, std::ios::binary | std::ios::trunc) << original;
  EXPECT_EQ(verify().exit_code, 0);

  // 2. A history row edited (the append-only trigger removed first): the caught error made to pass.
  tamper(url_.empty()
             ? "DROP TRIGGER checks_no_update; UPDATE checks SET verdict = 'within_tolerance' WHERE id = " +
                   flagged_id
             : "ALTER TABLE checks DISABLE TRIGGER checks_append_only; UPDATE checks SET verdict = "
               "'within_tolerance' WHERE id = " +
                   flagged_id);
  found = verify();
  EXPECT_EQ(found.exit_code, 1) << found.out;
  EXPECT_NE(found.out.find("check #" + flagged_id), std::string::npos) << found.out;
  EXPECT_NE(found.out.find("verdict is now \"within_tolerance\", recorded \"outside_tolerance\""),
            std::string::npos)
      << found.out;

  // 3. An entry deleted from the trail.
  tamper(url_.empty() ? "DROP TRIGGER audit_entries_no_delete; DELETE FROM audit_entries WHERE seq = 1"
                      : "ALTER TABLE audit_entries DISABLE TRIGGER audit_entries_append_only; DELETE FROM "
                        "audit_entries WHERE seq = 1");
  found = verify();
  EXPECT_EQ(found.exit_code, 1) << found.out;
  EXPECT_NE(found.out.find("entry 1 is missing"), std::string::npos) << found.out;
}

TEST_P(RecordsCli, BadFilterValuesAreErrorsNotEmptyLists) {
  fs::copy_file(dir_ / "corrected.dcm", dir_ / "inbox" / "RP1.dcm");
  ASSERT_EQ(watch_once().exit_code, 0);
  for (const char* bad :
       {"--since 2026-13-01", "--until yesterday", "--technique isocentric", "--energy -6"}) {
    const auto listed = countersign(std::string{"history"} + store_options() + " " + bad);
    EXPECT_EQ(listed.exit_code, 3) << bad << ": " << listed.out;
    EXPECT_FALSE(listed.err.empty()) << bad;
  }
  EXPECT_EQ(history("--technique complex/tmr --since 2000")["checks"].size(), 1U);
}

INSTANTIATE_TEST_SUITE_P(Stores, RecordsCli, ::testing::Values("sqlite", "postgresql"),
                         [](const ::testing::TestParamInfo<std::string>& backend) { return backend.param; });

}  // namespace
}  // namespace countersign::test
