#include <countersign/service/follow_ups.hpp>

#include <countersign/service/private_files.hpp>

#include <algorithm>
#include <charconv>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

// The check id a marker file is named after; nullopt for any other name (temporaries, notes).
std::optional<std::int64_t> marker_id(const fs::path& file) {
  const std::string name = file.filename().string();
  std::int64_t id = 0;
  const auto [end, error] = std::from_chars(name.data(), name.data() + name.size(), id);
  if (error != std::errc{} || end != name.data() + name.size() || id <= 0) return std::nullopt;
  return id;
}

std::vector<std::int64_t> markers_in(const fs::path& folder) {
  std::vector<std::int64_t> ids;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{folder, ec}) {
    if (const auto id = marker_id(entry.path()); id && entry.is_regular_file(ec)) ids.push_back(*id);
  }
  return ids;
}

}  // namespace

Expected<std::unique_ptr<ServiceFollowUps>> ServiceFollowUps::start(FollowUpSettings settings,
                                                                    const fs::path& results,
                                                                    ServiceLog& log) {
  std::unique_ptr<ServiceFollowUps> follow_ups{new ServiceFollowUps(results, log)};
  const fs::path failed = follow_ups->folder() / "failed";
  for (const char* kind : {"alert", "send"}) {
    if (auto made = ensure_private_directory(follow_ups->folder() / kind); !made) return made.error();
  }
  if (settings.alerts)
    follow_ups->alerts_ = std::make_unique<FlagAlerts>(std::move(*settings.alerts), failed, log);
  if (settings.delivery) {
    auto delivery = ResultDelivery::start(std::move(*settings.delivery), results,
                                          follow_ups->folder() / "work", failed, log);
    if (!delivery) return delivery.error();
    follow_ups->delivery_ = std::move(delivery.value());
  }
  return follow_ups;
}

ServiceFollowUps::~ServiceFollowUps() {
  // Alerts first: a program still running is stopped, and its marker brings it back next time.
  alerts_.reset();
  delivery_.reset();
}

void ServiceFollowUps::wait_idle(std::chrono::steady_clock::time_point deadline) {
  if (alerts_) alerts_->wait_idle(deadline);
  if (delivery_) delivery_->wait_idle(deadline);
}

fs::path ServiceFollowUps::alert_marker(std::int64_t check_id) const {
  return folder() / "alert" / std::to_string(check_id);
}

fs::path ServiceFollowUps::send_marker(std::int64_t check_id) const {
  return folder() / "send" / std::to_string(check_id);
}

std::vector<std::pair<fs::path, std::string>> ServiceFollowUps::markers(const store::NewCheck& check) {
  std::vector<std::pair<fs::path, std::string>> files;
  const std::string content = check.sop_instance_uid + "\n";
  if (alerts_ && store::is_flagged(check.verdict)) files.emplace_back(alert_marker(check.id), content);
  if (delivery_) files.emplace_back(send_marker(check.id), content);
  return files;
}

void ServiceFollowUps::follow(const store::CheckRecord& check, bool alert, bool send) {
  if (alert && alerts_) {
    alerts_->add(AlertJob{check.id, check.sop_instance_uid, std::string{store::to_string(check.verdict)},
                          fs::absolute(results_ / check.files.result_json), alert_marker(check.id)});
  }
  if (send && delivery_) delivery_->add(DeliveryJob{check, send_marker(check.id)});
}

void ServiceFollowUps::recorded(const std::vector<store::CheckRecord>& checks) {
  for (const store::CheckRecord& check : checks) follow(check, store::is_flagged(check.verdict), true);
}

std::size_t ServiceFollowUps::resume(store::Store& store) {
  const std::vector<std::int64_t> alerts = markers_in(folder() / "alert");
  const std::vector<std::int64_t> sends = markers_in(folder() / "send");
  std::vector<std::int64_t> ids = alerts;
  ids.insert(ids.end(), sends.begin(), sends.end());
  if (ids.empty()) return 0;
  auto checks = store.get_checks(ids);
  if (!checks) {
    log_.line("follow-ups of an earlier run not resumed: " + checks.error().message());
    return 0;
  }
  std::size_t resumed = 0;
  const auto resume_kind = [&](const std::vector<std::int64_t>& wanted, bool alert) {
    for (const std::int64_t id : wanted) {
      const auto found = std::find_if(checks->begin(), checks->end(),
                                      [id](const store::CheckRecord& check) { return check.id == id; });
      if (found == checks->end()) {
        // Written with the files of a batch that was never recorded: that plan is checked again.
        [[maybe_unused]] const auto removed = remove_file_durably(alert ? alert_marker(id) : send_marker(id));
        continue;
      }
      follow(*found, alert, !alert);
      ++resumed;
    }
  };
  resume_kind(alerts, true);
  resume_kind(sends, false);
  if (resumed > 0)
    log_.line("resumed " + std::to_string(resumed) + " follow-up(s) (alerts, sending) of an earlier run");
  return resumed;
}

}  // namespace countersign::service
