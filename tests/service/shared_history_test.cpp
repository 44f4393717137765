// Two services on different machines share one history on PostgreSQL (issue 15): given the same
// plans, each plan is checked by one of them, exactly once, and recorded once. The server is a
// throwaway PostgreSQL on a Unix socket in a temporary folder (tests/support/postgres); the test
// fails, never skips, when PostgreSQL is missing. Plans are the invented fake plans of the services'
// tests (Fernhollow Radiotherapy Unit demo scenario).

#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/store/audit.hpp>

#include "service/fake_plans.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"
#include "support/postgres.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <set>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

// One service: its own inbox and results folder (its own machine), the shared store.
struct Station {
  fs::path inbox;
  fs::path results;
  std::ostringstream log_text;
  ServiceLog log{log_text};
  std::optional<PlanIntake> intake;
  std::optional<FolderWatcher> watcher;
  StopSignal stop;
  std::thread thread;
  WatchSummary summary;
};

std::size_t files_in(const fs::path& dir) {
  std::size_t n = 0;
  for (const auto& entry : fs::directory_iterator{dir}) n += entry.is_regular_file() ? 1U : 0U;
  return n;
}

TEST(SharedHistory, TwoWatchersOnOnePostgresqlDatabaseCheckTheSame200PlansEachExactlyOnce) {
  const fs::path dir = test::make_temp_dir("countersign-shared");
  std::string error;
  const std::string url = test::fresh_store_location("postgresql", dir, error);
  ASSERT_FALSE(url.empty()) << error;
  constexpr int plans = 200;
  auto calls = std::make_shared<test::ProcessorCalls>();
  std::vector<std::unique_ptr<Station>> stations;
  for (const char* name : {"site-a", "site-b"}) {
    auto station = std::make_unique<Station>();
    station->inbox = dir / name / "inbox";
    station->results = dir / name / "results";
    ASSERT_TRUE(ensure_private_directory(station->inbox));
    // Both are given the same 200 plans (the planning system exports to both sites).
    for (int i = 0; i < plans; ++i) {
      test::write_text(station->inbox / ("RP" + std::to_string(i) + ".dcm"),
                       test::fake_plan_text(test::demo_uid(2000 + i), "FERN-DEMO-" + std::to_string(i)));
    }
    stations.push_back(std::move(station));
  }
  for (auto& station : stations) {
    auto folders = ServiceFolders::prepare(station->inbox, station->results, std::nullopt);
    ASSERT_TRUE(folders) << folders.error().message();
    auto store = store::Store::open(store::StoreLocation::parse(url), store::Access::read_write);
    ASSERT_TRUE(store) << store.error().message();
    IntakeOptions options;
    options.quiet_period = 0ms;
    options.busy_retry = 20ms;
    // A little computing time per plan, so that both services really work on the plans at once.
    station->intake.emplace(folders.value(), std::move(store.value()), test::fake_processor(calls, 2ms),
                            station->log, options);
    auto watcher = FolderWatcher::open(*station->intake);
    ASSERT_TRUE(watcher) << watcher.error().message();
    station->watcher.emplace(std::move(watcher.value()));
  }
  for (auto& station : stations) {
    station->thread = std::thread([s = station.get()] {
      const int fds[] = {s->stop.fd()};
      if (auto summary = s->watcher->run(RunUntil::stopped, fds)) s->summary = summary.value();
    });
  }
  const auto deadline = std::chrono::steady_clock::now() + 120s;
  while (std::chrono::steady_clock::now() < deadline &&
         (files_in(stations[0]->inbox) > 0 || files_in(stations[1]->inbox) > 0)) {
    std::this_thread::sleep_for(50ms);
  }
  for (auto& station : stations) {
    station->stop.request();
    station->thread.join();
  }
  const std::string logs = stations[0]->log_text.str() + stations[1]->log_text.str();
  ASSERT_EQ(files_in(stations[0]->inbox) + files_in(stations[1]->inbox), 0U) << logs.substr(0, 4000);

  // Each plan computed once (not merely recorded once), by one of the two.
  for (int i = 0; i < plans; ++i) EXPECT_EQ(calls->count(test::demo_uid(2000 + i)), 1) << i;
  EXPECT_EQ(calls->total.load(), plans);
  EXPECT_EQ(stations[0]->summary.checked + stations[1]->summary.checked, static_cast<std::size_t>(plans));
  EXPECT_EQ(stations[0]->summary.duplicates + stations[1]->summary.duplicates,
            static_cast<std::size_t>(plans));
  EXPECT_GT(stations[0]->summary.checked, 0U) << "one site did all the work: the test shows no sharing";
  EXPECT_GT(stations[1]->summary.checked, 0U) << "one site did all the work: the test shows no sharing";

  auto reader = store::Store::open(store::StoreLocation::parse(url), store::Access::read_only);
  ASSERT_TRUE(reader) << reader.error().message();
  auto all = reader.value()->list_checks({});
  ASSERT_TRUE(all) << all.error().message();
  EXPECT_EQ(all->size(), static_cast<std::size_t>(plans));
  std::set<std::string> uids;
  for (const auto& check : *all) uids.insert(check.sop_instance_uid);
  EXPECT_EQ(uids.size(), static_cast<std::size_t>(plans));
  // Every check's files are where its station wrote them, and the shared trail is whole.
  std::size_t files = 0;
  for (const auto& station : stations) files += test::count_results(station->results, ".json");
  EXPECT_EQ(files, static_cast<std::size_t>(plans));
  auto trail = reader.value()->read_audit_trail();
  ASSERT_TRUE(trail);
  EXPECT_EQ(trail->entries.size(), static_cast<std::size_t>(plans));
  EXPECT_TRUE(store::verify_trail(*trail, std::nullopt, std::nullopt).intact());
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
