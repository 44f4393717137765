#include <countersign/service/flag_alerts.hpp>

#include <countersign/service/private_files.hpp>
#include <countersign/service/program_runner.hpp>

#include <algorithm>

namespace countersign::service {

namespace fs = std::filesystem;
using SteadyClock = std::chrono::steady_clock;

namespace {

std::string seconds_text(std::chrono::milliseconds wait) {
  return std::to_string((wait.count() + 500) / 1000) + " s";
}

// The program's first line of output, for the log.
std::string first_line(const std::string& output) {
  const std::string line = output.substr(0, output.find('\n'));
  return line.empty() ? std::string{} : ": \"" + line.substr(0, 200) + "\"";
}

}  // namespace

FlagAlerts::FlagAlerts(AlertSettings settings, fs::path failed_folder, ServiceLog& log)
    : settings_(std::move(settings)), failed_folder_(std::move(failed_folder)), log_(log) {
  thread_ = std::thread{[this] { loop(); }};
}

FlagAlerts::~FlagAlerts() {
  {
    const std::scoped_lock lock{mutex_};
    stopping_ = true;
  }
  wake_.notify_all();
  thread_.join();
}

void FlagAlerts::add(AlertJob job) {
  {
    const std::scoped_lock lock{mutex_};
    queue_.push_back(Pending{std::move(job), 1, SteadyClock::now()});
  }
  wake_.notify_all();
}

void FlagAlerts::wait_idle(SteadyClock::time_point deadline) {
  std::unique_lock lock{mutex_};
  const auto idle = [&] {
    return !busy_ &&
           std::all_of(queue_.begin(), queue_.end(), [&](const Pending& p) { return p.due > deadline; });
  };
  while (!idle() && SteadyClock::now() < deadline)
    wake_.wait_until(lock, std::min(deadline, SteadyClock::now() + std::chrono::milliseconds{100}));
}

void FlagAlerts::loop() {
  std::unique_lock lock{mutex_};
  while (!stopping_) {
    const auto due = std::min_element(queue_.begin(), queue_.end(),
                                      [](const Pending& a, const Pending& b) { return a.due < b.due; });
    if (due == queue_.end()) {
      wake_.wait(lock);
      continue;
    }
    if (due->due > SteadyClock::now()) {
      wake_.wait_until(lock, due->due);
      continue;
    }
    Pending pending = std::move(*due);
    queue_.erase(due);
    busy_ = true;
    lock.unlock();
    raise(pending);  // the program runs without the lock: new alerts queue meanwhile
    lock.lock();
    busy_ = false;
    if (pending.attempt > 0) queue_.push_back(std::move(pending));  // to be tried again
    wake_.notify_all();
  }
}

// Runs the program once; on return `pending.attempt` is 0 when nothing more is to be done.
void FlagAlerts::raise(Pending& pending) {
  const AlertJob& job = pending.job;
  std::vector<std::string> argv = settings_.command;
  argv.push_back(job.result_file.string());
  const ProgramOutcome outcome = run_program(argv,
                                             {{"COUNTERSIGN_CHECK_ID", std::to_string(job.check_id)},
                                              {"COUNTERSIGN_SOP_INSTANCE_UID", job.sop_instance_uid},
                                              {"COUNTERSIGN_VERDICT", job.verdict},
                                              {"COUNTERSIGN_RESULT_FILE", job.result_file.string()}},
                                             settings_.timeout, &stopping_);
  const std::string what = "alert for check #" + std::to_string(job.check_id) + " (" + job.sop_instance_uid +
                           ", " + job.verdict + ")";
  if (outcome.succeeded) {
    log_.line(what + " raised: " + settings_.command.front() + " ended with " + outcome.how);
    [[maybe_unused]] const auto removed = remove_file_durably(job.marker);
    pending.attempt = 0;
    return;
  }
  if (stopping_) {  // stopped with the service: not an attempt; the marker brings it back at the next start
    log_.line(what + " interrupted by the service stopping; it is raised again at the next start");
    pending.attempt = 0;
    return;
  }
  if (pending.attempt >= settings_.attempts) {
    const fs::path kept = failed_folder_ / job.marker.filename();
    const auto moved = ensure_private_directory(failed_folder_)
                           ? move_file_durably(job.marker, kept, OnExisting::pick_free_name)
                           : Expected<fs::path>{Error{}};
    log_.line(what + " failed (attempt " + std::to_string(pending.attempt) + " of " +
              std::to_string(settings_.attempts) + ", " + outcome.how + first_line(outcome.output) +
              "); given up" + (moved ? ": see " + moved.value().string() : std::string{}));
    pending.attempt = 0;
    return;
  }
  auto wait = settings_.first_retry;
  for (int i = 1; i < pending.attempt && wait < settings_.max_retry; ++i) wait *= 2;
  wait = std::min(wait, settings_.max_retry);
  log_.line(what + " failed (attempt " + std::to_string(pending.attempt) + " of " +
            std::to_string(settings_.attempts) + ", " + outcome.how + first_line(outcome.output) +
            "); next attempt in " + seconds_text(wait));
  ++pending.attempt;
  pending.due = SteadyClock::now() + wait;
}

}  // namespace countersign::service
