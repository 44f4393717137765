#include <countersign/service/result_delivery.hpp>

#include <countersign/service/private_files.hpp>
#include <countersign/service/record_objects.hpp>

#include <algorithm>

namespace countersign::service {

namespace fs = std::filesystem;
using SteadyClock = std::chrono::steady_clock;

namespace {

// The longest the thread sleeps between looks at the outbox: entries another process queued (a
// `countersign send`, another service sharing the outbox) are found within this.
constexpr std::chrono::seconds longest_sleep{5};

std::string event_line(const net::DeliveryEvent& event, const fs::path& outbox) {
  const std::string what = event.entry.description + " to " + event.entry.destination.text();
  switch (event.status) {
    case net::DeliveryStatus::delivered:
      return "sent " + what;
    case net::DeliveryStatus::rejected:
      return "REJECTED " + what + ": " + event.detail + "; kept in " +
             (outbox / "failed" / event.entry.id).string();
    case net::DeliveryStatus::queued:
      break;
  }
  return "not yet sent " + what + " (attempt " + std::to_string(event.entry.attempts) + "): " + event.detail +
         "; kept in the outbox, tried again later";
}

}  // namespace

ResultDelivery::ResultDelivery(DeliverySettings settings, net::Outbox outbox, fs::path results, fs::path work,
                               fs::path failed_folder, ServiceLog& log)
    : settings_(std::move(settings)),
      outbox_(std::move(outbox)),
      results_(std::move(results)),
      work_(std::move(work)),
      failed_folder_(std::move(failed_folder)),
      log_(log) {}

Expected<std::unique_ptr<ResultDelivery>> ResultDelivery::start(DeliverySettings settings, fs::path results,
                                                                fs::path work, fs::path failed_folder,
                                                                ServiceLog& log) {
  const fs::path folder = settings.outbox.empty() ? results / "outbox" : settings.outbox;
  auto outbox = net::Outbox::open(folder, settings.retry);
  if (!outbox) return outbox.error();
  if (auto made = ensure_private_directory(work); !made) return made.error();
  std::unique_ptr<ResultDelivery> delivery{new ResultDelivery(std::move(settings), std::move(outbox.value()),
                                                              std::move(results), std::move(work),
                                                              std::move(failed_folder), log)};
  delivery->thread_ = std::thread{[raw = delivery.get()] { raw->loop(); }};
  return delivery;
}

ResultDelivery::~ResultDelivery() {
  {
    const std::scoped_lock lock{mutex_};
    stopping_ = true;
  }
  wake_.notify_all();
  if (thread_.joinable()) thread_.join();
}

void ResultDelivery::add(DeliveryJob job) {
  {
    const std::scoped_lock lock{mutex_};
    jobs_.push_back(std::move(job));
  }
  wake_.notify_all();
}

// The objects of one check into the outbox, for every destination; the job's marker goes once they
// are all there (a crash before leaves the marker, and the next start queues them again: an archive
// receiving the same instance twice keeps one).
void ResultDelivery::queue_objects(const DeliveryJob& job) {
  const store::CheckRecord& check = job.check;
  const std::string what =
      "results of check #" + std::to_string(check.id) + " (" + check.sop_instance_uid + ")";
  auto objects = record_objects(check, results_, settings_.chromium, work_, KeepPdf::yes);
  if (!objects) {
    const bool kept =
        ensure_private_directory(failed_folder_) &&
        move_file_durably(job.marker, failed_folder_ / job.marker.filename(), OnExisting::pick_free_name);
    log_.line("the " + what + " cannot be sent: " + objects.error().message() +
              (kept ? "; its marker is in " + failed_folder_.string() : std::string{}));
    return;
  }
  for (const std::string& note : objects->notes) log_.line(note);
  for (const RecordObject& object : objects->objects) {
    for (const net::Destination& destination : settings_.destinations) {
      auto queued = outbox_.enqueue(object.file, destination, object.sop_instance_uid, object.description);
      if (!queued) {
        log_.line("the " + what + " could not be queued for " + destination.text() + ": " +
                  queued.error().message() + "; tried again at the next start");
        return;
      }
    }
  }
  // A PDF made in the work folder only (the record's folder was not writable) has been copied.
  for (const RecordObject& object : objects->objects) {
    if (object.file.parent_path() == work_) {
      std::error_code ec;
      fs::remove(object.file, ec);
    }
  }
  [[maybe_unused]] const auto removed = remove_file_durably(job.marker);
}

void ResultDelivery::deliver_due() {
  const net::ScuSettings scu = settings_.scu;
  const net::Sender sender = [scu](const net::Destination& destination, const fs::path& file) {
    return net::send_file(destination, file, scu);
  };
  for (const net::DeliveryEvent& event : outbox_.deliver_due(sender))
    log_.line(event_line(event, outbox_.folder()));
}

SteadyClock::time_point ResultDelivery::next_wake() const {
  const auto now_steady = SteadyClock::now();
  auto wake = now_steady + longest_sleep;
  const auto now_wall = net::WallClock::now();
  for (const net::OutboxEntry& entry : outbox_.pending()) {
    const auto in = std::chrono::duration_cast<SteadyClock::duration>(entry.next_attempt - now_wall);
    wake = std::min(wake, now_steady + std::max(in, SteadyClock::duration::zero()));
  }
  return wake;
}

void ResultDelivery::wait_idle(SteadyClock::time_point deadline) {
  const auto wall_deadline = net::WallClock::now() + std::chrono::duration_cast<net::WallClock::duration>(
                                                         deadline - SteadyClock::now());
  for (;;) {
    {
      const std::scoped_lock lock{mutex_};
      const std::vector<net::OutboxEntry> pending = outbox_.pending();
      const bool nothing_due =
          std::all_of(pending.begin(), pending.end(),
                      [&](const net::OutboxEntry& entry) { return entry.next_attempt > wall_deadline; });
      if (!busy_ && jobs_.empty() && nothing_due) return;
    }
    if (SteadyClock::now() >= deadline) return;
    std::this_thread::sleep_for(std::chrono::milliseconds{100});
  }
}

void ResultDelivery::loop() {
  std::unique_lock lock{mutex_};
  while (!stopping_) {
    std::vector<DeliveryJob> jobs;
    jobs.swap(jobs_);
    busy_ = true;
    lock.unlock();
    for (const DeliveryJob& job : jobs) queue_objects(job);
    deliver_due();
    const auto wake = next_wake();
    lock.lock();
    busy_ = false;
    if (jobs_.empty() && !stopping_)
      wake_.wait_until(lock, wake, [this] { return stopping_ || !jobs_.empty(); });
  }
}

}  // namespace countersign::service
