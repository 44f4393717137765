// The web view's parts without a server: users file, sessions, login throttle, page safety.
// Patients and plans are invented (Fernhollow Radiotherapy Unit demo scenario).

#include <countersign/web/pages.hpp>
#include <countersign/web/server.hpp>
#include <countersign/web/sessions.hpp>
#include <countersign/web/users.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <sys/stat.h>

#include <filesystem>

namespace countersign::web {
namespace {

namespace fs = std::filesystem;

TEST(WebUsers, PasswordsAreKeptAsArgon2idHashesInAPrivateFile) {
  const fs::path dir = test::make_temp_dir("countersign-web-users");
  const fs::path file = default_users_file(dir);
  UserList list;
  ASSERT_TRUE(list.add("alice", Role::reviewer, "correct horse battery"));
  EXPECT_FALSE(list.add("alice", Role::viewer, "another long password"));  // exists
  EXPECT_FALSE(list.add("bob", Role::viewer, "short"));                    // under 12 characters
  EXPECT_FALSE(list.add("<b>", Role::viewer, "a long enough password"));   // not a name
  ASSERT_TRUE(list.save(file));
  struct stat info {};
  ASSERT_EQ(::stat(file.c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777U, 0600U);

  const auto loaded = UserList::load(file);
  ASSERT_TRUE(loaded) << loaded.error().message();
  const User* alice = loaded->find("alice");
  ASSERT_NE(alice, nullptr);
  EXPECT_EQ(alice->role, Role::reviewer);
  EXPECT_EQ(alice->password_hash.rfind("$argon2id$", 0), 0U) << alice->password_hash;
  EXPECT_EQ(alice->password_hash.find("correct horse"), std::string::npos);
  EXPECT_TRUE(password_matches("correct horse battery", alice->password_hash));
  EXPECT_FALSE(password_matches("correct horse battery!", alice->password_hash));
  EXPECT_FALSE(password_matches("", ""));

  // A file others may read is refused, naming it.
  fs::permissions(file, fs::perms::group_read, fs::perm_options::add);
  const auto refused = UserList::load(file);
  ASSERT_FALSE(refused);
  EXPECT_NE(refused.error().message().find(file.string()), std::string::npos);
  fs::remove_all(dir);
}

TEST(WebSessions, TokensAreRandom256BitAndSessionsExpire) {
  const std::string a = random_token();
  EXPECT_EQ(a.size(), 64U);  // 32 bytes as hex
  EXPECT_NE(a, random_token());
  SessionTable table{SessionLimits{std::chrono::minutes(30), std::chrono::hours(12)}};
  const auto start = Clock::now();
  const std::string token = table.open("alice", Role::reviewer, start);
  const auto found = table.find(token, start + std::chrono::minutes(10));
  ASSERT_TRUE(found);
  EXPECT_EQ(found->user, "alice");
  EXPECT_EQ(found->csrf_token.size(), 64U);
  EXPECT_NE(found->csrf_token, token);
  EXPECT_FALSE(table.find(token + "0", start));
  // Idle for more than 30 minutes after the last request: gone.
  EXPECT_FALSE(table.find(token, start + std::chrono::minutes(41)));
  EXPECT_EQ(table.size(), 0U);
  // Used every 20 minutes, but no session outlives 12 hours.
  const std::string busy = table.open("bob", Role::viewer, start);
  for (int minutes = 20; minutes < 12 * 60; minutes += 20) {
    ASSERT_TRUE(table.find(busy, start + std::chrono::minutes(minutes))) << minutes;
  }
  EXPECT_FALSE(table.find(busy, start + std::chrono::minutes(12 * 60 + 5)));
}

TEST(WebSessions, FailedLoginsLockTheNameForTheWindow) {
  LoginThrottle throttle{ThrottleLimits{5, 20, std::chrono::minutes(15)}};
  const auto t = Clock::now();
  for (int i = 0; i < 4; ++i) throttle.record_failure("alice", "192.0.2.7", t);
  EXPECT_FALSE(throttle.locked("alice", "192.0.2.7", t));
  EXPECT_EQ(throttle.record_failure("alice", "192.0.2.7", t), 5U);
  EXPECT_TRUE(throttle.locked("alice", "198.51.100.1", t));  // the name, from anywhere
  EXPECT_FALSE(throttle.locked("bob", "192.0.2.7", t));      // the address allows more
  EXPECT_FALSE(throttle.locked("alice", "192.0.2.7", t + std::chrono::minutes(16)));
  for (int i = 0; i < 20; ++i) throttle.record_failure("user" + std::to_string(i), "203.0.113.9", t);
  EXPECT_TRUE(throttle.locked("carol", "203.0.113.9", t));
  // Made-up names do not pile up: counts older than the window go at the next failure.
  EXPECT_EQ(throttle.tracked_names(), 21U);
  throttle.record_failure("dave", "192.0.2.8", t + std::chrono::minutes(20));
  EXPECT_EQ(throttle.tracked_names(), 1U);
}

TEST(WebServerOptions, ListenAddressesAndLoopback) {
  const auto v4 = parse_listen("127.0.0.1:8470");
  ASSERT_TRUE(v4);
  EXPECT_EQ(v4->first, "127.0.0.1");
  EXPECT_EQ(v4->second, 8470);
  const auto v6 = parse_listen("[::1]:0");
  ASSERT_TRUE(v6);
  EXPECT_EQ(v6->first, "::1");
  EXPECT_FALSE(parse_listen("8470"));
  EXPECT_FALSE(parse_listen("127.0.0.1:99999"));
  EXPECT_FALSE(parse_listen("127.0.0.1:80x"));
  EXPECT_TRUE(is_loopback("127.0.0.1"));
  EXPECT_TRUE(is_loopback("::1"));
  EXPECT_FALSE(is_loopback("0.0.0.0"));
  // Beyond loopback without TLS the log says a TLS reverse proxy is required.
  const auto warning = exposure_warning("0.0.0.0", false);
  ASSERT_TRUE(warning);
  EXPECT_NE(warning->find("TLS reverse proxy"), std::string::npos);
  EXPECT_FALSE(exposure_warning("0.0.0.0", true));
  EXPECT_FALSE(exposure_warning("127.0.0.1", false));
}

store::CheckRecord record(std::int64_t id, std::string when, store::PlanVerdict verdict,
                          store::ReviewStatus review) {
  store::CheckRecord c;
  c.id = id;
  c.checked_at_utc = std::move(when);
  c.verdict = verdict;
  c.review_status = review;
  c.patient_id = "FERN-DEMO-00" + std::to_string(id);  // invented
  return c;
}

TEST(WebPages, WorklistPutsOpenChecksFirstAndEscapesPlanStrings) {
  std::vector<store::CheckRecord> checks{
      record(4, "2026-12-02T10:00:00Z", store::PlanVerdict::within_tolerance,
             store::ReviewStatus::not_needed),
      record(3, "2026-12-02T09:00:00Z", store::PlanVerdict::outside_tolerance, store::ReviewStatus::open),
      record(2, "2026-12-02T08:00:00Z", store::PlanVerdict::not_checked, store::ReviewStatus::accepted),
      record(1, "2026-12-01T08:00:00Z", store::PlanVerdict::not_checked, store::ReviewStatus::open)};
  checks[0].plan_label = "<script>alert(1)</script>";
  order_for_worklist(checks);
  ASSERT_EQ(checks.size(), 4U);
  EXPECT_EQ(checks[0].id, 3);
  EXPECT_EQ(checks[1].id, 1);
  EXPECT_EQ(checks[2].id, 4);
  EXPECT_EQ(checks[3].id, 2);
  const std::string html =
      worklist_page(checks, 200, WorklistQuery{}, "2026-12-02", Viewer{"alice", Role::viewer, "t"});
  EXPECT_EQ(html.find("<script>"), std::string::npos);
  EXPECT_NE(html.find("&lt;script&gt;alert(1)&lt;/script&gt;"), std::string::npos);
  EXPECT_NE(html.find("supports, and does not replace"), std::string::npos);
  // "Not checked" has its own badge, never the one of a pass.
  EXPECT_NE(html.find("class=\"badge not-checked\""), std::string::npos);
  EXPECT_EQ(html.find("<script"), std::string::npos);
}

TEST(WebPages, AMalformedFilterIsAnErrorNotAnEmptyList) {
  EXPECT_FALSE(worklist_filter(WorklistQuery{"2026-13-01", "", "", ""}));
  EXPECT_FALSE(worklist_filter(WorklistQuery{"", "", "fine", ""}));
  EXPECT_FALSE(worklist_filter(WorklistQuery{"", "", "", "maybe"}));
  const auto day = worklist_filter(WorklistQuery{"2026-12-02", "FERN-LINAC-1", "outside_tolerance", "open"});
  ASSERT_TRUE(day);
  EXPECT_EQ(day->since_utc, "2026-12-02");
  EXPECT_EQ(day->until_utc, "2026-12-02");
  EXPECT_EQ(day->review, store::ReviewFilter::open);
}

}  // namespace
}  // namespace countersign::web
