#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>

#include <countersign/util/sha256.hpp>
#include <countersign/util/version.hpp>

#include <countersign/service/unique_fd.hpp>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <exception>
#include <sstream>
#include <vector>

namespace countersign::service {

namespace fs = std::filesystem;
using Clock = std::chrono::system_clock;

namespace {

// A plan is at most a few megabytes; anything far larger is not one (and must not exhaust memory).
constexpr std::size_t max_plan_bytes = std::size_t{256} << 20;

enum class ReadState { ok, vanished, not_regular, busy, changed_while_reading, too_large, io_error };

struct FileRead {
  ReadState state = ReadState::io_error;
  std::vector<std::byte> bytes;
  Clock::time_point modified{};
  std::string detail;  // for io_error
};

Clock::time_point to_time_point(const struct timespec& ts) {
  return Clock::time_point{std::chrono::duration_cast<Clock::duration>(std::chrono::seconds{ts.tv_sec} +
                                                                       std::chrono::nanoseconds{ts.tv_nsec})};
}

bool same_version(const struct stat& a, const struct stat& b) {
  return a.st_size == b.st_size && a.st_mtim.tv_sec == b.st_mtim.tv_sec &&
         a.st_mtim.tv_nsec == b.st_mtim.tv_nsec && a.st_ino == b.st_ino;
}

// True when some process holds the file open for writing. A read lease cannot be granted then; where
// leases are not permitted (another owner, no CAP_LEASE) the answer is "not known" and the settle time
// and the parse decide.
bool open_for_writing_elsewhere(int fd) {
  if (::fcntl(fd, F_SETLEASE, F_RDLCK) == 0) {
    ::fcntl(fd, F_SETLEASE, F_UNLCK);
    return false;
  }
  return errno == EAGAIN;
}

FileRead read_whole_file(const fs::path& file) {
  FileRead result;
  const UniqueFd fd{::open(file.c_str(), O_RDONLY | O_NOFOLLOW | O_NONBLOCK | O_CLOEXEC)};
  if (!fd.valid()) {
    result.state = (errno == ENOENT) ? ReadState::vanished
                                     : (errno == ELOOP ? ReadState::not_regular : ReadState::io_error);
    result.detail = std::strerror(errno);
    return result;
  }
  struct stat before {};
  if (::fstat(fd.get(), &before) != 0) {
    result.detail = std::strerror(errno);
    return result;
  }
  if (!S_ISREG(before.st_mode)) {
    result.state = ReadState::not_regular;
    return result;
  }
  result.modified = to_time_point(before.st_mtim);
  if (open_for_writing_elsewhere(fd.get())) {
    result.state = ReadState::busy;
    return result;
  }
  if (static_cast<std::size_t>(before.st_size) > max_plan_bytes) {
    result.state = ReadState::too_large;
    return result;
  }
  result.bytes.resize(static_cast<std::size_t>(before.st_size) + 1);  // one more: notices growth
  std::size_t filled = 0;
  for (;;) {
    if (filled == result.bytes.size()) {
      if (result.bytes.size() > max_plan_bytes) {
        result.state = ReadState::too_large;
        return result;
      }
      result.bytes.resize(result.bytes.size() * 2);
    }
    const ssize_t got = ::read(fd.get(), result.bytes.data() + filled, result.bytes.size() - filled);
    if (got < 0 && errno == EINTR) continue;
    if (got < 0) {
      result.detail = std::strerror(errno);
      return result;
    }
    if (got == 0) break;
    filled += static_cast<std::size_t>(got);
  }
  result.bytes.resize(filled);
  struct stat after {};
  if (::fstat(fd.get(), &after) != 0 || !same_version(before, after) ||
      filled != static_cast<std::size_t>(after.st_size)) {
    result.state = ReadState::changed_while_reading;
    return result;
  }
  result.state = ReadState::ok;
  return result;
}

std::string format_milliseconds(Clock::duration elapsed) {
  return std::to_string(std::chrono::duration_cast<std::chrono::milliseconds>(elapsed).count()) + " ms";
}

bool ends_with(std::string_view text, std::string_view suffix) {
  return text.size() >= suffix.size() && text.substr(text.size() - suffix.size()) == suffix;
}

}  // namespace

bool is_candidate_name(std::string_view file_name) {
  if (file_name.empty() || file_name.front() == '.') return false;
  for (const std::string_view suffix : {".part", ".partial", ".tmp", ".reason.txt"}) {
    if (ends_with(file_name, suffix)) return false;
  }
  return true;
}

bool is_safe_uid(std::string_view uid) {
  if (uid.empty() || uid.size() > 64 || uid.front() == '.' || uid.back() == '.') return false;
  for (const char c : uid) {
    if (!(c == '.' || (c >= '0' && c <= '9'))) return false;
  }
  return uid.find("..") == std::string_view::npos;
}

Expected<ServiceFolders> ServiceFolders::prepare(const fs::path& inbox, const fs::path& results,
                                                 const std::optional<fs::path>& quarantine) {
  ServiceFolders folders;
  folders.inbox = inbox;
  folders.results = results;
  folders.quarantine = quarantine.value_or(results / "quarantine");
  folders.checked_plans = results / "plans";
  // The inbox must not be one of our own output folders: results and reason notes would be taken
  // for arriving plans and quarantined.
  const auto same = [](const fs::path& a, const fs::path& b) {
    std::error_code ec;
    return fs::weakly_canonical(a, ec) == fs::weakly_canonical(b, ec);
  };
  for (const auto& output : {folders.results, folders.quarantine, folders.checked_plans}) {
    if (same(folders.inbox, output)) {
      return Error{ErrorKind::usage, inbox.string(), "", "",
                   "the inbox must be a folder of its own, not the results, quarantine or plans folder"};
    }
  }
  for (const auto& dir : {folders.inbox, folders.results, folders.quarantine, folders.checked_plans}) {
    if (auto made = ensure_private_directory(dir); !made) return made.error();
  }
  return folders;
}

PlanIntake::PlanIntake(ServiceFolders folders, History history, PlanProcessor processor, ServiceLog& log,
                       IntakeOptions options)
    : folders_(std::move(folders)),
      history_(std::move(history)),
      processor_(std::move(processor)),
      log_(log),
      options_(options) {}

IntakeResult PlanIntake::fail(const fs::path& file, const std::string& reason) {
  IntakeResult result;
  result.status = IntakeStatus::failed;
  result.retry_at = Clock::now() + options_.failure_retry;
  result.message =
      "error " + file.filename().string() + ": " + reason + "; the file stays in the inbox, retry in " +
      std::to_string(std::chrono::duration_cast<std::chrono::seconds>(options_.failure_retry).count()) + " s";
  log_.line(result.message);
  return result;
}

IntakeResult PlanIntake::quarantine(const fs::path& file, std::string_view content_sha256,
                                    const std::string& reason) {
  const fs::path wanted = folders_.quarantine / file.filename();
  auto moved = move_file_durably(file, wanted, OnExisting::pick_free_name);
  if (!moved) return fail(file, "cannot quarantine: " + moved.error().message());

  std::ostringstream text;
  text << "countersign did not check this file. It was moved here at " << utc_timestamp_now() << ".\n"
       << "file: " << file.filename().string() << " (arrived in " << folders_.inbox.string() << ")\n";
  if (!content_sha256.empty()) text << "content_sha256: " << content_sha256 << "\n";
  text << "reason: " << reason << "\n";
  fs::path reason_file = moved.value();
  reason_file += ".reason.txt";
  // The file is already safe in quarantine; a missing reason note is logged, not retried.
  const auto written = write_file_atomically(reason_file, text.str());

  IntakeResult result;
  result.status = IntakeStatus::quarantined;
  result.message =
      "quarantined " + file.filename().string() + " as " + moved.value().string() + ": " + reason;
  if (!written) result.message += " (reason note not written: " + written.error().message() + ")";
  log_.line(result.message);
  return result;
}

Expected<fs::path> PlanIntake::move_to_checked(const fs::path& file, const std::string& uid,
                                               const std::string& content_sha256) {
  const fs::path destination = folders_.checked_plans / (uid + "." + content_sha256.substr(0, 16) + ".dcm");
  std::error_code ec;
  // No directory fsync here: the history record is the commit point, so if a power cut undoes this
  // move, the file is found in the inbox again, recognised by its hash and only moved.
  // The same name means the same bytes (the hash is in it): a copy already kept is enough.
  if (fs::exists(destination, ec)) {
    if (auto removed = remove_file_durably(file, DirectorySync::deferred); !removed) return removed.error();
    return destination;
  }
  return move_file_durably(file, destination, OnExisting::replace, DirectorySync::deferred);
}

IntakeResult PlanIntake::take(const fs::path& file) {
  const auto started = Clock::now();
  const std::string name = file.filename().string();
  IntakeResult result;
  if (!is_candidate_name(name)) return result;

  FileRead read = read_whole_file(file);
  switch (read.state) {
    case ReadState::vanished:
    case ReadState::not_regular:
      return result;
    case ReadState::busy:
    case ReadState::changed_while_reading:
      result.status = IntakeStatus::not_ready;
      result.retry_at = started + options_.busy_retry;
      return result;
    case ReadState::too_large:
      return quarantine(file, "",
                        "larger than " + std::to_string(max_plan_bytes >> 20) + " MiB: not an RT Plan");
    case ReadState::io_error:
      return fail(file, "cannot read: " + read.detail);
    case ReadState::ok:
      break;
  }
  const bool may_be_growing = started - read.modified < options_.settle_time;

  const std::string content_sha256 =
      util::sha256_hex(std::string_view{reinterpret_cast<const char*>(read.bytes.data()), read.bytes.size()});

  // Exactly once: these bytes were checked before (a second copy, or a restart after a crash that
  // came between the record and the move).
  auto earlier = history_.find_by_content(content_sha256);
  if (!earlier) return fail(file, earlier.error().message());
  if (earlier.value()) {
    const CheckRecord& record = *earlier.value();
    auto moved = move_to_checked(file, record.sop_instance_uid, content_sha256);
    if (!moved) return fail(file, moved.error().message());
    result.status = IntakeStatus::duplicate;
    result.message = "already checked " + name + ": same content as check #" + std::to_string(record.id) +
                     " of " + record.sop_instance_uid + " (" + std::string{to_string(record.verdict)} +
                     "), not checked again";
    result.record = record;
    log_.line(result.message);
    return result;
  }

  if (read.bytes.empty()) {
    if (may_be_growing) {
      result.status = IntakeStatus::not_ready;
      result.retry_at = read.modified + options_.settle_time;
      return result;
    }
    return quarantine(file, content_sha256, "empty file: not an RT Plan");
  }

  std::optional<Expected<PlanOutcome>> processed;
  try {
    processed.emplace(processor_(file, std::span<const std::byte>{read.bytes}));
  } catch (const std::exception& e) {
    // A defect in the checking code must not stop the service; the file is kept for investigation.
    processed.emplace(Error{ErrorKind::internal, file.string(), "", "",
                            std::string{"internal error while checking: "} + e.what()});
  }
  if (!processed->has_value()) {
    if (may_be_growing) {
      result.status = IntakeStatus::not_ready;
      result.retry_at = read.modified + options_.settle_time + std::chrono::milliseconds{50};
      return result;
    }
    return quarantine(file, content_sha256, processed->error().message());
  }
  const PlanOutcome& outcome = processed->value();
  if (!is_safe_uid(outcome.sop_instance_uid)) {
    return quarantine(file, content_sha256,
                      file.string() + ": SOPInstanceUID (0008,0018): \"" + outcome.sop_instance_uid +
                          "\" is not a UID of digits and dots (at most 64 characters)");
  }

  // 1. Results, atomically. A crash after this and before the record redoes the check, which
  //    writes the same results again and records once.
  const fs::path json_file = folders_.results / (outcome.sop_instance_uid + ".json");
  if (auto written = write_file_atomically(json_file, outcome.json_text, DirectorySync::deferred); !written) {
    return fail(file, written.error().message());
  }
  if (outcome.html_text) {
    if (auto written = write_file_atomically(folders_.results / (outcome.sop_instance_uid + ".html"),
                                             *outcome.html_text, DirectorySync::deferred);
        !written) {
      return fail(file, written.error().message());
    }
  }
  // Both names durable before the record says they exist.
  if (auto synced = sync_directory(folders_.results); !synced) return fail(file, synced.error().message());

  // 2. The record: the commit point of the check.
  NewCheck check;
  check.content_sha256 = content_sha256;
  check.source_name = name;
  check.result_file = json_file.string();
  check.software_version = version_string;
  check.outcome = outcome;
  check.outcome.json_text.clear();
  check.outcome.html_text.reset();
  auto recorded = history_.record(check, utc_timestamp_now());
  if (!recorded) return fail(file, recorded.error().message());

  // 3. Out of the inbox. A crash before this finds the record on restart and only moves the file.
  auto moved = move_to_checked(file, outcome.sop_instance_uid, content_sha256);

  result.status = IntakeStatus::checked;
  result.record = std::move(recorded.value());
  std::size_t outside = 0;
  std::size_t not_checked = 0;
  for (const auto& beam : outcome.beams) {
    outside += beam.verdict == BeamVerdict::outside_tolerance ? 1 : 0;
    not_checked += beam.verdict == BeamVerdict::not_checked ? 1 : 0;
  }
  result.message = "checked " + name + ": " + outcome.sop_instance_uid + " patient " + outcome.patient_id +
                   " verdict " + std::string{to_string(outcome.verdict)} + " (" +
                   std::to_string(outcome.beams.size()) + " beams, " + std::to_string(outside) +
                   " outside, " + std::to_string(not_checked) + " not checked) check #" +
                   std::to_string(result.record->id);
  if (result.record->replaces_check_id) {
    result.message += " replaces #" + std::to_string(*result.record->replaces_check_id);
  }
  result.message += " -> " + json_file.string() + " in " + format_milliseconds(Clock::now() - started);
  if (!moved)
    result.message += "; the plan file could not be moved out of the inbox: " + moved.error().message();
  log_.line(result.message);
  return result;
}

}  // namespace countersign::service
