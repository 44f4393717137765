// Crash safety: a service killed with SIGKILL in the middle of a stream of arriving plans, then
// restarted, loses no plan and records none twice. The service runs in a child process so that the
// kill is real: no destructor, no flush, no rollback runs.

#include <countersign/service/folder_watcher.hpp>
#include <countersign/service/stop_signals.hpp>

#include "service/fake_plans.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <fcntl.h>
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <fstream>
#include <functional>
#include <map>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

std::size_t count_suffix(const fs::path& dir, const std::string& suffix) {
  std::size_t n = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{dir, ec}) {
    const std::string name = entry.path().filename().string();
    if (name.front() != '.' && name.size() >= suffix.size() &&
        name.compare(name.size() - suffix.size(), suffix.size(), suffix) == 0) {
      ++n;
    }
  }
  return n;
}

// The service as the child runs it: every call of the processor is appended to calls_log first.
int run_service(const fs::path& dir, RunUntil until) {
  std::ostringstream sink;
  ServiceLog log{sink};
  auto folders = ServiceFolders::prepare(dir / "inbox", dir / "results", std::nullopt);
  auto history = test::open_history(dir / "results" / "history.sqlite", store::Access::read_write);
  if (!folders || !history) return 10;
  const fs::path calls_log = dir / "calls.log";
  auto inner = test::fake_processor(nullptr, 3ms);
  PlanProcessor processor = [inner, calls_log](const fs::path& file, std::span<const std::byte> bytes,
                                               const StudyContext& study) {
    auto outcome = inner(file, bytes, study);
    if (outcome) {
      const std::string line = outcome->sop_instance_uid + "\n";
      const int fd = ::open(calls_log.c_str(), O_WRONLY | O_APPEND | O_CREAT, 0600);
      [[maybe_unused]] const auto written = ::write(fd, line.data(), line.size());
      ::close(fd);
    }
    return outcome;
  };
  IntakeOptions options;
  options.quiet_period = 2s;
  PlanIntake intake{folders.value(), std::move(history.value()), processor, log, options};
  auto watcher = FolderWatcher::open(intake);
  if (!watcher) return 11;
  const StopSignal never;
  const int fds[] = {never.fd()};
  return watcher->run(until, fds) ? 0 : 12;
}

std::size_t lines_in(const fs::path& file) {
  std::ifstream in(file);
  std::size_t n = 0;
  for (std::string line; std::getline(in, line);) ++n;
  return n;
}

// Starts the service in a child, waits until the processor has been called `kill_after` times in
// total (while `feed` keeps plans arriving), and kills it with SIGKILL: no destructor, no rollback.
void kill_service_after(const fs::path& dir, std::size_t kill_after, const std::function<void()>& feed) {
  const pid_t child = ::fork();
  ASSERT_GE(child, 0);
  if (child == 0) ::_exit(run_service(dir, RunUntil::stopped));
  const auto deadline = std::chrono::steady_clock::now() + 30s;
  while (lines_in(dir / "calls.log") < kill_after && std::chrono::steady_clock::now() < deadline) {
    feed();
    std::this_thread::sleep_for(1ms);
  }
  ASSERT_EQ(::kill(child, SIGKILL), 0);
  int status = 0;
  ASSERT_EQ(::waitpid(child, &status, 0), child);
  ASSERT_TRUE(WIFSIGNALED(status));
}

// Every plan recorded exactly once, every result written, the inbox empty, nothing quarantined; and
// the computations repeated because a kill came before their batch's commit, at most one batch per kill.
void expect_each_plan_exactly_once(const fs::path& dir, int plans, std::size_t kills) {
  auto history = test::open_history(dir / "results" / "history.sqlite", store::Access::read_only);
  ASSERT_TRUE(history);
  auto records = history.value()->list_checks({});
  ASSERT_TRUE(records);
  std::map<std::string, int> recorded;
  for (const auto& record : *records) ++recorded[record.sop_instance_uid];
  EXPECT_EQ(records->size(), static_cast<std::size_t>(plans));
  for (int i = 0; i < plans; ++i) EXPECT_EQ(recorded[test::demo_uid(i)], 1) << "plan " << i;
  EXPECT_EQ(test::count_results(dir / "results", ".json"), static_cast<std::size_t>(plans));
  EXPECT_EQ(count_suffix(dir / "inbox", ".dcm"), 0U);
  EXPECT_EQ(count_suffix(dir / "results" / "quarantine", ""), 0U);

  std::map<std::string, int> computed;
  std::ifstream in(dir / "calls.log");
  for (std::string line; std::getline(in, line);) ++computed[line];
  std::size_t extra = 0;
  for (const auto& [uid, n] : computed) extra += static_cast<std::size_t>(n - 1);
  EXPECT_EQ(computed.size(), static_cast<std::size_t>(plans));
  EXPECT_LE(extra, kills * WatchOptions{}.max_batch);
  std::cout << "[ measured ] " << plans << " plans, " << kills << " kills: " << extra
            << " plan(s) computed twice, each recorded once\n";
}

TEST(CrashRestart, KilledMidStreamThenRestartedLosesNoPlanAndChecksNoneTwice) {
  const fs::path dir = test::make_temp_dir("countersign-crash");
  fs::create_directories(dir / "inbox");
  constexpr int plans = 120;
  int written = 0;
  const auto write_plans = [&](int up_to) {
    for (; written < up_to; ++written) {
      const fs::path temporary = dir / ("staging-" + std::to_string(written));
      test::write_text(temporary, test::fake_plan_text(test::demo_uid(written), "FERN-DEMO-020"));
      fs::rename(temporary, dir / "inbox" / ("RP" + std::to_string(written) + ".dcm"));  // arrives whole
    }
  };
  // Two crashes, each while plans are still arriving and being checked.
  for (const std::size_t kill_after : {std::size_t{25}, std::size_t{70}}) {
    kill_service_after(dir, kill_after, [&] { write_plans(std::min(plans, written + 5)); });
  }
  write_plans(plans);
  // The restart finishes the stream.
  ASSERT_EQ(run_service(dir, RunUntil::one_pass), 0);
  expect_each_plan_exactly_once(dir, plans, 2);
  fs::remove_all(dir);
}

TEST(CrashRestart, ABacklogKilledInTheMiddleOfBatchesLosesNothingAndRecordsEachOnce) {
  // A backlog is taken in batches of up to WatchOptions::max_batch plans, each batch committed at
  // once: kills at several points inside batches (while checking, or while results are flushed and
  // recorded) must leave every plan either recorded or still in the inbox.
  const fs::path dir = test::make_temp_dir("countersign-crash-batch");
  fs::create_directories(dir / "inbox");
  constexpr int plans = 300;
  for (int i = 0; i < plans; ++i) {
    const fs::path temporary = dir / ("staging-" + std::to_string(i));
    test::write_text(temporary, test::fake_plan_text(test::demo_uid(i), "FERN-DEMO-021"));
    fs::rename(temporary, dir / "inbox" / ("RP" + std::to_string(i) + ".dcm"));
  }
  // Backlog files count as written in place: make them older than the quiet period.
  for (const auto& entry : fs::directory_iterator{dir / "inbox"}) {
    fs::last_write_time(entry.path(), fs::file_time_type::clock::now() - std::chrono::minutes{1});
  }
  const std::vector<std::size_t> kill_points{10, 63, 64, 65, 130, 200};
  for (const std::size_t kill_after : kill_points) kill_service_after(dir, kill_after, [] {});
  ASSERT_EQ(run_service(dir, RunUntil::one_pass), 0);
  expect_each_plan_exactly_once(dir, plans, kill_points.size());
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
