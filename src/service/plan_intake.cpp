#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>

#include "intake_pending.hpp"

#include <countersign/dicom/canonical_dataset.hpp>
#include <countersign/dicom/plan_files.hpp>
#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/service/object_classes.hpp>
#include <countersign/util/assert.hpp>
#include <countersign/util/sha256.hpp>
#include <countersign/util/text.hpp>
#include <countersign/util/version.hpp>

#include <countersign/service/unique_fd.hpp>
#include <countersign/store/audit.hpp>
#include <countersign/util/text.hpp>
#include <countersign/util/version.hpp>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <cerrno>
#include <cstring>
#include <exception>
#include <set>
#include <sstream>
#include <vector>

namespace countersign::service {

namespace fs = std::filesystem;
using Clock = std::chrono::system_clock;
using store::CheckRecord;
using store::utc_timestamp_now;

namespace {

// A plan is at most a few megabytes; anything far larger is not one (and must not exhaust memory).
constexpr std::size_t max_plan_bytes = std::size_t{256} << 20;
// A modification time this far ahead of our clock is not trusted for the quiet period.
constexpr auto future_tolerance = std::chrono::seconds{1};

enum class ReadState { ok, vanished, not_regular, busy, changed_while_reading, too_large, io_error };

struct FileRead {
  ReadState state = ReadState::io_error;
  std::vector<std::byte> bytes;
  Clock::time_point modified{};
  Clock::time_point changed{};  // status change: when the file came into the inbox (a rename sets it)
  std::string signature;        // size, modification and change times, inode: any write changes it
  std::string detail;           // for io_error
};

Clock::time_point to_time_point(const struct timespec& ts) {
  return Clock::time_point{std::chrono::duration_cast<Clock::duration>(std::chrono::seconds{ts.tv_sec} +
                                                                       std::chrono::nanoseconds{ts.tv_nsec})};
}

std::string signature_of(const struct stat& s) {
  return std::to_string(s.st_size) + ":" + std::to_string(s.st_mtim.tv_sec) + "." +
         std::to_string(s.st_mtim.tv_nsec) + ":" + std::to_string(s.st_ctim.tv_sec) + "." +
         std::to_string(s.st_ctim.tv_nsec) + ":" + std::to_string(s.st_ino);
}

// True when some process holds the file open for writing. A read lease cannot be granted then; where
// leases are not permitted (another owner, no CAP_LEASE) the answer is "not known" and the quiet
// period and the before/after comparison decide.
bool open_for_writing_elsewhere(int fd) {
  if (::fcntl(fd, F_SETLEASE, F_RDLCK) == 0) {
    ::fcntl(fd, F_SETLEASE, F_UNLCK);
    return false;
  }
  return errno == EAGAIN;
}

// Reads into `result.bytes` until end of file; false (with detail) on a read error or when the file
// outgrows the limit.
bool read_to_end(int fd, FileRead& result) {
  std::size_t filled = 0;
  for (;;) {
    if (filled == result.bytes.size()) {
      if (result.bytes.size() > max_plan_bytes) {
        result.state = ReadState::too_large;
        return false;
      }
      result.bytes.resize(result.bytes.size() * 2);
    }
    const ssize_t got = ::read(fd, result.bytes.data() + filled, result.bytes.size() - filled);
    if (got < 0 && errno == EINTR) continue;
    if (got < 0) {
      result.detail = std::strerror(errno);
      return false;
    }
    if (got == 0) break;
    filled += static_cast<std::size_t>(got);
  }
  result.bytes.resize(filled);
  return true;
}

// The whole file, with the guarantee that nothing changed it while it was read: the size, times
// and inode are compared before and after.
FileRead read_whole_file(const fs::path& file) {
  FileRead result;
  const UniqueFd fd{::open(file.c_str(), O_RDONLY | O_NOFOLLOW | O_NONBLOCK | O_CLOEXEC)};
  if (!fd.valid()) {
    result.state = (errno == ENOENT)        ? ReadState::vanished
                   : (errno == ELOOP)       ? ReadState::not_regular
                   : (errno == EWOULDBLOCK) ? ReadState::busy  // a writer holds a lease
                                            : ReadState::io_error;
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
  result.changed = to_time_point(before.st_ctim);
  result.signature = signature_of(before);
  if (open_for_writing_elsewhere(fd.get())) {
    result.state = ReadState::busy;
    return result;
  }
  if (static_cast<std::size_t>(before.st_size) > max_plan_bytes) {
    result.state = ReadState::too_large;
    return result;
  }
  result.bytes.resize(static_cast<std::size_t>(before.st_size) + 1);  // one more: notices growth
  if (!read_to_end(fd.get(), result)) return result;
  struct stat after {};
  if (::fstat(fd.get(), &after) != 0 || signature_of(after) != result.signature ||
      result.bytes.size() != static_cast<std::size_t>(after.st_size)) {
    result.state = ReadState::changed_while_reading;
    return result;
  }
  result.state = ReadState::ok;
  return result;
}

std::string format_milliseconds(Clock::duration elapsed) {
  return std::to_string(std::chrono::duration_cast<std::chrono::milliseconds>(elapsed).count()) + " ms";
}

std::string format_seconds(std::chrono::milliseconds wait) {
  const auto tenths = (wait.count() + 50) / 100;
  return std::to_string(tenths / 10) + (tenths % 10 != 0 ? "." + std::to_string(tenths % 10) : "") + " s";
}

// The name as logged: relative to the inbox (a subfolder shows), never with the folder's own path.
std::string shown_name(const fs::path& inbox, const fs::path& file) {
  const fs::path relative = file.lexically_relative(inbox);
  return relative.empty() || *relative.begin() == ".." ? file.filename().string() : relative.string();
}

// The key of "checked exactly once": the SHA-256 of the dataset in one canonical encoding, so that
// the same plan sent again in another transfer syntax is recognised. Bytes that do not read as
// DICOM (to be retried or quarantined) are hashed as they are.
std::string content_sha256_of(const std::vector<std::byte>& bytes, const fs::path& file) {
  if (const auto canonical = dicom::canonical_dataset_bytes(bytes, file.string())) {
    return util::sha256_hex(*canonical);
  }
  return util::sha256_hex(std::string_view{reinterpret_cast<const char*>(bytes.data()), bytes.size()});
}

}  // namespace

std::string station_name() {
  char name[256] = {};
  if (::gethostname(name, sizeof name - 1) != 0 || name[0] == '\0') return "unknown-station";
  return name;
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

PlanIntake::PlanIntake(ServiceFolders folders, std::unique_ptr<store::Store> store, PlanProcessor processor,
                       ServiceLog& log, IntakeOptions options)
    : folders_(std::move(folders)),
      store_(std::move(store)),
      processor_(std::move(processor)),
      log_(log),
      options_(options),
      station_(station_name()) {
  std::error_code ec;
  results_folder_ = fs::weakly_canonical(fs::absolute(folders_.results, ec), ec).string();
}

std::chrono::milliseconds PlanIntake::back_off(int attempt) const {
  auto wait = options_.first_retry;
  for (int i = 1; i < attempt && wait < options_.max_retry; ++i) wait *= 2;
  return std::min(wait, options_.max_retry);
}

IntakeResult PlanIntake::fail(const fs::path& file, const std::string& reason, int attempt) {
  IntakeResult result;
  result.status = IntakeStatus::failed;
  const auto wait = back_off(attempt);
  result.retry_at = Clock::now() + wait;
  result.message = "error " + shown_name(folders_.inbox, file) + ": " + reason +
                   "; the file stays in the inbox (attempt " + std::to_string(attempt) + ", next in " +
                   format_seconds(wait) + ")";
  log_.line(result.message);
  return result;
}

IntakeResult PlanIntake::quarantine(const fs::path& file, std::string_view content_sha256,
                                    const std::string& reason) {
  const std::string name = shown_name(folders_.inbox, file);
  const fs::path wanted = folders_.quarantine / file.filename();
  auto moved = move_file_durably(file, wanted, OnExisting::pick_free_name);
  if (!moved) return fail(file, "cannot quarantine: " + moved.error().message(), 1);

  // The note is read by people: one value per line, none able to add a line of its own.
  std::ostringstream text;
  text << "countersign did not check this file. It was moved here at " << utc_timestamp_now() << ".\n"
       << "file: " << escape_control_characters(name) << " (arrived in "
       << escape_control_characters(folders_.inbox.string()) << ")\n";
  if (!content_sha256.empty()) text << "content_sha256: " << content_sha256 << "\n";
  text << "reason: " << escape_control_characters(reason) << "\n";
  fs::path reason_file = moved.value();
  reason_file += ".reason.txt";
  // The file is already safe in quarantine; a missing reason note is logged, not retried.
  const auto written = write_file_atomically(reason_file, text.str());

  IntakeResult result;
  result.status = IntakeStatus::quarantined;
  result.message = "quarantined " + name + " as " + moved.value().string() + ": " + reason;
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

IntakeResult PlanIntake::finish_duplicate(const fs::path& file, const CheckRecord& record,
                                          const std::string& content_sha256, std::string_view how) {
  auto moved = move_to_checked(file, record.sop_instance_uid, content_sha256);
  if (!moved) return fail(file, moved.error().message(), 1);
  IntakeResult result;
  result.status = IntakeStatus::duplicate;
  result.message = "already checked " + shown_name(folders_.inbox, file) + ": same content as check #" +
                   std::to_string(record.id) + " of " + record.sop_instance_uid + " (" +
                   std::string{to_string(record.verdict)} +
                   (record.station != station_ ? ", at " + record.station : "") + ")" + std::string{how} +
                   ", not checked again";
  result.record = record;
  log_.line(result.message);
  return result;
}

std::optional<IntakeResult> PlanIntake::wait_for_quiet(const IntakeCandidate& candidate,
                                                       const std::string& signature,
                                                       Clock::time_point modified) {
  if (candidate.arrival == Arrival::complete) return std::nullopt;
  const auto now = Clock::now();
  Clock::time_point changed = modified;
  if (modified > now + future_tolerance) {
    auto& seen = observed_[candidate.file];
    if (seen.signature != signature) seen = Observed{signature, now};
    changed = seen.since;
  }
  if (now - changed >= options_.quiet_period) return std::nullopt;
  IntakeResult result;
  result.status = IntakeStatus::not_ready;
  result.retry_at = changed + options_.quiet_period + std::chrono::milliseconds{20};
  result.message =
      "still being written (changed less than " + format_seconds(options_.quiet_period) + " ago)";
  return result;
}

// Everything up to the commit: a final result for this file, or nullopt when it is settled at the
// commit (checked and added to `pending`, or a copy of a file checked earlier in the batch).
std::optional<IntakeResult> PlanIntake::examine(const IntakeCandidate& candidate, std::size_t index,
                                                std::vector<Pending>& pending) {
  const auto started = Clock::now();
  const fs::path& file = candidate.file;
  if (!dicom::is_candidate_name(file.filename().string())) return IntakeResult{};

  FileRead read = read_whole_file(file);
  switch (read.state) {
    case ReadState::vanished:
    case ReadState::not_regular:
      return IntakeResult{};
    case ReadState::busy:
    case ReadState::changed_while_reading: {
      IntakeResult result;
      result.status = IntakeStatus::not_ready;
      result.retry_at = started + options_.busy_retry;
      result.message = read.state == ReadState::busy ? "held open for writing by another program"
                                                     : "changed while it was read";
      return result;
    }
    case ReadState::too_large:
      return quarantine(file, "",
                        "larger than " + std::to_string(max_plan_bytes >> 20) + " MiB: not an RT Plan");
    case ReadState::io_error:
      if (candidate.attempt >= options_.read_attempts) {
        return quarantine(
            file, "",
            "could not be read in " + std::to_string(candidate.attempt) + " attempts: " + read.detail);
      }
      return fail(file, "cannot read (" + read.detail + ")", candidate.attempt);
    case ReadState::ok:
      break;
  }
  if (auto waiting = wait_for_quiet(candidate, read.signature, read.modified)) return waiting;

  if (study_store_ != nullptr) {
    study_store_->purge_if_due(started);
    if (auto routed = route_study_object(file)) return routed;
  }
  const std::string content_sha256 = content_sha256_of(read.bytes, file);
  // The same content earlier in this batch: settled once the batch is committed.
  for (const Pending& earlier : pending) {
    if (earlier.content_sha256 == content_sha256) return std::nullopt;
  }
  // Exactly once: these bytes were checked before (a second copy, or a restart after a crash that
  // came between the record and the move).
  auto earlier = store_->find_by_content(content_sha256);
  if (!earlier) return fail(file, earlier.error().message(), candidate.attempt);
  if (earlier.value()) return finish_duplicate(file, *earlier.value(), content_sha256);

  if (read.bytes.empty()) return quarantine(file, content_sha256, "empty file: not an RT Plan");
  StudyContext study;
  if (study_store_ != nullptr) {
    if (auto waiting = wait_for_study(file, read.bytes, read.changed, study)) return waiting;
  }
  // Another service sharing the store may be checking the same content right now: it is left to
  // that one, and looked at again shortly (it is then found recorded).
  auto claimed = store_->try_claim(content_sha256);
  if (!claimed) return fail(file, claimed.error().message(), candidate.attempt);
  if (!claimed.value()) {
    IntakeResult result;
    result.status = IntakeStatus::not_ready;
    result.retry_at = started + options_.busy_retry;
    result.message = "being checked by another service sharing the history";
    return result;
  }
  // Claimed now; another service may have recorded it between the look above and the claim (claims
  // are released only after the commit), so look once more before computing it again.
  auto recorded_meanwhile = store_->find_by_content(content_sha256);
  if (!recorded_meanwhile) return fail(file, recorded_meanwhile.error().message(), candidate.attempt);
  if (recorded_meanwhile.value()) return finish_duplicate(file, *recorded_meanwhile.value(), content_sha256);

  std::optional<Expected<PlanOutcome>> processed;
  try {
    processed.emplace(processor_(file, std::span<const std::byte>{read.bytes}, study));
  } catch (const std::exception& e) {
    // A defect in the checking code must not stop the service; the file is kept for investigation.
    processed.emplace(Error{ErrorKind::internal, file.string(), "", "",
                            std::string{"internal error while checking: "} + e.what()});
  }
  if (!processed->has_value()) return quarantine(file, content_sha256, processed->error().message());
  PlanOutcome& outcome = processed->value();
  if (!is_safe_uid(outcome.sop_instance_uid)) {
    return quarantine(file, content_sha256,
                      file.string() + ": SOPInstanceUID (0008,0018): \"" + outcome.sop_instance_uid +
                          "\" is not a UID of digits and dots (at most 64 characters)");
  }
  Pending checked;
  checked.candidate = candidate;
  checked.name = shown_name(folders_.inbox, file);
  checked.content_sha256 = content_sha256;
  checked.plan_sha256 =
      util::sha256_hex(std::string_view{reinterpret_cast<const char*>(read.bytes.data()), read.bytes.size()});
  checked.outcome = std::move(outcome);
  checked.started = started;
  checked.index = index;
  checked.study_note = study.folders.empty() ? std::string{"without a CT study"} : "with its CT study";
  if (study_store_ == nullptr) checked.study_note.clear();
  checked.awaited_structure_set_uid = study.awaited_structure_set_uid;
  waiting_logged_.erase(file);
  pending.push_back(std::move(checked));
  return std::nullopt;
}

std::vector<IntakeResult> PlanIntake::take_batch(std::span<const IntakeCandidate> candidates,
                                                 const std::function<bool()>& stop_requested) {
  const auto batch_started = Clock::now();
  std::vector<IntakeResult> results(candidates.size());
  std::vector<Pending> pending;
  std::vector<std::size_t> copies;  // candidates with the bytes of a plan checked earlier in the batch
  for (std::size_t i = 0; i < candidates.size(); ++i) {
    const bool out_of_time = i > 0 && Clock::now() - batch_started > options_.batch_time_budget;
    if (out_of_time || (stop_requested && stop_requested())) {
      for (std::size_t j = i; j < candidates.size(); ++j) results[j].status = IntakeStatus::deferred;
      break;
    }
    const std::size_t pending_before = pending.size();
    auto result = examine(candidates[i], i, pending);
    if (result) {
      results[i] = std::move(*result);
    } else if (pending.size() == pending_before) {
      copies.push_back(i);
    }
    if (results[i].status != IntakeStatus::not_ready) observed_.erase(candidates[i].file);
  }
  if (!pending.empty()) commit(pending, results);
  store_->release_claims();
  // Copies: their plan is now recorded (or not, if the commit failed), so each is decided as any
  // other file is, normally as already checked.
  for (const std::size_t i : copies)
    results[i] = take(candidates[i].file, Arrival::complete, candidates[i].attempt);
  // A study object arrived (or the service has just started): plans checked without their study
  // may now have it.
  const bool study_arrived = std::any_of(results.begin(), results.end(), [](const IntakeResult& r) {
    return r.status == IntakeStatus::kept_for_study;
  });
  if (study_store_ != nullptr && (study_arrived || !late_studies_looked_at_)) {
    late_studies_looked_at_ = true;
    recheck_late_studies();
  }
  return results;
}

// The record of a pending check under the id reserved for it: its files, their hashes, the inputs.
store::NewCheck PlanIntake::new_check(const Pending& p, std::int64_t id) const {
  const PlanOutcome& outcome = p.outcome;
  store::NewCheck check;
  check.id = id;
  check.sop_instance_uid = outcome.sop_instance_uid;
  check.content_sha256 = p.content_sha256;
  check.patient_id = outcome.patient_id;
  check.plan_label = outcome.plan_label;
  check.verdict = outcome.verdict;
  check.beams = outcome.beams;
  check.software_version = version_string;
  check.source_name = p.name;
  check.station = station_;
  check.results_folder = results_folder_;
  const std::string stem = outcome.sop_instance_uid + "/" + std::to_string(id);
  check.files.result_json = stem + ".json";
  check.hashes.result_sha256 = util::sha256_hex(outcome.json_text);
  if (outcome.html_text) {
    check.files.record_html = stem + ".html";
    check.hashes.record_sha256 = util::sha256_hex(*outcome.html_text);
  }
  if (outcome.sr_bytes) {
    check.files.result_sr = stem + ".sr.dcm";
    check.hashes.sr_sha256 = util::sha256_hex(*outcome.sr_bytes);
  }
  check.files.plan = p.kept_plan_file.empty()
                         ? "plans/" + outcome.sop_instance_uid + "." + p.content_sha256.substr(0, 16) + ".dcm"
                         : p.kept_plan_file;
  check.hashes.plan_sha256 = p.plan_sha256;
  check.hashes.beamdata_sha256 = outcome.beamdata_sha256;
  check.hashes.policy_sha256 = outcome.policy_sha256;
  return check;
}

// The head of the audit trail, kept outside the database too: `audit verify` then notices entries
// deleted from the end of the trail. A head that cannot be written is logged, never fatal.
void PlanIntake::record_head(const std::vector<store::Recorded>& recorded) {
  std::optional<store::AuditHead> head;
  for (const auto& one : recorded) {
    if (!one.already_recorded && one.record.audit_seq && (!head || *one.record.audit_seq > head->seq))
      head = store::AuditHead{*one.record.audit_seq, one.entry_hash};
  }
  if (!head) return;
  const auto written = write_file_atomically(store::audit_head_file(folders_.results),
                                             store::audit_head_text(*head), DirectorySync::deferred);
  if (!written) log_.line("the audit head could not be written: " + written.error().message());
}

namespace {

std::string inputs_changed_text(const CheckRecord& record) {
  std::string text;
  for (const auto& change : record.inputs_changed) {
    const std::string input = change.input == "beam_data"          ? "beam data"
                              : change.input == "tolerance_policy" ? "tolerance policy"
                                                                   : "software";
    const auto brief = [&](const std::string& value) {
      return change.input == "software_version" ? value : value.substr(0, 8) + "\u2026";
    };
    text += (text.empty() ? "" : ", ") + input + " " + brief(change.from) + " \u2192 " + brief(change.to);
  }
  return text;
}

std::string checked_line(const std::string& name, const PlanOutcome& outcome, const CheckRecord& record,
                         const fs::path& results, Clock::duration took) {
  std::size_t outside = 0;
  std::size_t not_checked = 0;
  for (const auto& beam : outcome.beams) {
    outside += beam.verdict == BeamVerdict::outside_tolerance ? 1 : 0;
    not_checked += beam.verdict == BeamVerdict::not_checked ? 1 : 0;
  }
  std::string line = "checked " + name + ": " + outcome.sop_instance_uid + " patient " + outcome.patient_id +
                     " verdict " + std::string{to_string(outcome.verdict)} + " (" +
                     std::to_string(outcome.beams.size()) + " beams, " + std::to_string(outside) +
                     " outside, " + std::to_string(not_checked) + " not checked) check #" +
                     std::to_string(record.id);
  if (record.replaces_check_id) line += " replaces #" + std::to_string(*record.replaces_check_id);
  if (!record.inputs_changed.empty()) line += " (inputs changed: " + inputs_changed_text(record) + ")";
  line += " -> " + (results / record.files.result_json).string() + " in " + format_milliseconds(took);
  if (!outcome.sr_problem.empty()) line += "; no structured result (SR): " + outcome.sr_problem;
  return line;
}

}  // namespace

// Results of every pending plan flushed together, then one transaction records them all: the commit
// point. Only then do the files leave the inbox.
void PlanIntake::commit(std::vector<Pending>& pending, std::vector<IntakeResult>& results) {
  const auto fail_all = [&](const std::string& reason) {
    for (const Pending& p : pending) {
      if (p.late_study_marker) {  // its marker stays: tried again with the next study object or start
        log_.line("not checked again with its study now: " + p.name + ": " + reason);
        continue;
      }
      results[p.index] = fail(p.candidate.file, reason, p.candidate.attempt);
    }
  };
  // Numbers first, so that every file has a name of its own before anything is written.
  auto ids = store_->reserve_check_ids(pending.size());
  if (!ids) return fail_all(ids.error().message());
  AtomicFileGroup files;
  std::vector<store::NewCheck> checks;
  std::vector<std::vector<fs::path>> written(pending.size());
  checks.reserve(pending.size());
  for (std::size_t k = 0; k < pending.size(); ++k) {
    const PlanOutcome& outcome = pending[k].outcome;
    store::NewCheck check = new_check(pending[k], ids.value()[k]);
    std::vector<std::pair<fs::path, std::string_view>> contents{
        {folders_.results / check.files.result_json, outcome.json_text}};
    if (outcome.html_text)
      contents.emplace_back(folders_.results / check.files.record_html, *outcome.html_text);
    if (outcome.sr_bytes) contents.emplace_back(folders_.results / check.files.result_sr, *outcome.sr_bytes);
    std::vector<std::pair<fs::path, std::string>> markers;
    if (follow_ups_ != nullptr) markers = follow_ups_->markers(check);
    if (!pending[k].awaited_structure_set_uid.empty()) {
      markers.emplace_back(late_study_marker(folders_.results, pending[k].content_sha256),
                           late_study_marker_text(check.files.plan, pending[k].awaited_structure_set_uid,
                                                  pending[k].content_sha256, pending[k].name, check.id));
    }
    for (const auto& [file, text] : markers) contents.emplace_back(file, text);
    for (const auto& [file, text] : contents) {
      if (auto added = files.add(file, text); !added) return fail_all(added.error().message());
      written[k].push_back(file);
    }
    checks.push_back(std::move(check));
  }
  // 1. Results, atomically and on disk. A crash after this and before the record redoes the
  //    checks, under new numbers: these files then belong to no record (audit verify names them).
  if (auto flushed = files.commit(); !flushed) return fail_all(flushed.error().message());
  // 2. The records: the commit point of the batch.
  auto recorded = store_->record_checks(checks, utc_timestamp_now());
  if (!recorded) return fail_all(recorded.error().message());
  record_head(recorded.value());
  // 3. Out of the inbox. A crash before this finds the records on restart and only moves the files.
  std::vector<CheckRecord> followed;
  for (std::size_t k = 0; k < pending.size(); ++k) {
    const Pending& p = pending[k];
    store::Recorded& stored = recorded.value()[k];
    if (p.late_study_marker) {
      results[p.index] = finish_late_study_check(p, stored, written[k]);
      if (!stored.already_recorded) followed.push_back(stored.record);
      continue;
    }
    if (stored.already_recorded) {
      // Another service sharing the store recorded this content first: these files belong to no
      // record and are taken back; the plan is one already checked.
      for (const fs::path& file : written[k]) {
        [[maybe_unused]] const auto removed = remove_file_durably(file, DirectorySync::deferred);
      }
      results[p.index] =
          finish_duplicate(p.candidate.file, stored.record, p.content_sha256, " by another service");
      continue;
    }
    auto moved = move_to_checked(p.candidate.file, p.outcome.sop_instance_uid, p.content_sha256);
    IntakeResult& result = results[p.index];
    result.status = IntakeStatus::checked;
    result.record = stored.record;
    result.message =
        checked_line(p.name, p.outcome, stored.record, folders_.results, Clock::now() - p.started);
    if (!p.study_note.empty()) result.message += "; " + p.study_note;
    if (!moved) {
      result.message += "; the plan file could not be moved out of the inbox: " + moved.error().message();
    }
    log_.line(result.message);
    followed.push_back(stored.record);
  }
  if (follow_ups_ != nullptr && !followed.empty()) follow_ups_->recorded(followed);
}

// A check with a study that came late, once recorded: its marker goes; the plan stays where the
// first check kept it. Already recorded (by another service, or before a crash removed the marker):
// the files written now belong to no record and are taken back.
IntakeResult PlanIntake::finish_late_study_check(const Pending& p, const store::Recorded& stored,
                                                 const std::vector<fs::path>& written) {
  IntakeResult result;
  result.record = stored.record;
  if (stored.already_recorded) {
    for (const fs::path& file : written) {
      [[maybe_unused]] const auto removed = remove_file_durably(file, DirectorySync::deferred);
    }
    result.status = IntakeStatus::duplicate;
    result.message =
        "already checked " + p.name + " with its study: check #" + std::to_string(stored.record.id);
  } else {
    result.status = IntakeStatus::checked;
    result.message =
        checked_line(p.name, p.outcome, stored.record, folders_.results, Clock::now() - p.started) +
        "; with its CT study, which arrived after check #" + std::to_string(p.check_without_study_id) +
        " was made without it";
  }
  if (auto removed = remove_file_durably(util::checked(p.late_study_marker), DirectorySync::deferred);
      !removed)
    result.message += "; its marker could not be removed: " + removed.error().message();
  log_.line(result.message);
  return result;
}

// A CT image or RT Structure Set goes to the study store; another RT object a planning system sends
// with a plan is logged and removed (it is no fault of the sender). nullopt: anything else (a plan,
// or a file for the plan reader to judge).
std::optional<IntakeResult> PlanIntake::route_study_object(const fs::path& file) {
  const std::array<fs::path, 1> paths{file};
  const dicom::StudyFileIndex index = dicom::index_study_files(paths);
  if (index.files.size() != 1) return std::nullopt;
  const dicom::StudyFile& identity = index.files.front();
  const auto kind = storage_class(identity.sop_class_uid);
  if (!kind || kind->role == ObjectRole::plan) return std::nullopt;
  const std::string name = shown_name(folders_.inbox, file);
  IntakeResult result;
  if (kind->role == ObjectRole::discarded) {
    if (auto removed = remove_file_durably(file); !removed) return fail(file, removed.error().message(), 1);
    result.status = IntakeStatus::discarded;
    result.message = "discarded " + name + ": " + kind->name + " " + identity.sop_instance_uid +
                     " (not used by the check)";
    log_.line(result.message);
    return result;
  }
  auto kept = study_store_->keep(file, identity);
  if (!kept)
    return quarantine(file, "",
                      std::string{kind->name} + " not kept for its study: " + kept.error().message());
  result.status = IntakeStatus::kept_for_study;
  result.message = "kept " + name + " in the study store: " + kind->name + " " + identity.sop_instance_uid +
                   " of series " + identity.series_instance_uid;
  log_.line(result.message);
  return result;
}

// A plan that names a structure set waits for it and its CT in the study store, until the study
// wait has passed since the plan came into the inbox; then it is checked without them, and says so.
std::optional<IntakeResult> PlanIntake::wait_for_study(const fs::path& file, std::span<const std::byte> bytes,
                                                       Clock::time_point arrived, StudyContext& study) {
  // A plan that cannot be read, or names no single structure set, is for the check to judge.
  const auto plan = dicom::read_plan_bytes(bytes, file.string());
  if (!plan || plan->referenced_structure_set_uids.size() != 1) return std::nullopt;
  const std::string& structure_set_uid = plan->referenced_structure_set_uids.front();
  const StudyLookup lookup = study_store_->find(structure_set_uid);
  if (lookup.arrival.complete()) {
    study.folders = lookup.folders;
    return std::nullopt;
  }
  const std::string name = shown_name(folders_.inbox, file);
  const auto wait = study_store_->settings().wait;
  const auto now = Clock::now();
  const auto deadline = arrived + wait;
  const std::string missing = lookup.arrival.missing(structure_set_uid);
  if (now < deadline) {
    IntakeResult result;
    result.status = IntakeStatus::not_ready;
    result.retry_at = std::min(deadline, now + std::chrono::seconds{2});
    result.message = "waiting for its study: " + missing + " not yet received";
    if (waiting_logged_.insert(file).second) {
      log_.line("waiting for the study of " + name + ": " + missing +
                " not yet received; its check runs without a CT in " +
                format_seconds(std::chrono::duration_cast<std::chrono::milliseconds>(deadline - now)) +
                " if it does not arrive (--study-wait)");
    }
    return result;
  }
  study.note = "the plan's study did not arrive within " + std::to_string(wait.count()) +
               " s of the plan (--study-wait; still missing: " + missing +
               "): homogeneous water with the plan's depths";
  study.awaited_structure_set_uid = structure_set_uid;
  log_.line("no study for " + name + " after " + std::to_string(wait.count()) + " s (missing: " + missing +
            "): its check runs without a CT, and again with it if it arrives within --study-keep-days");
  return std::nullopt;
}

IntakeResult PlanIntake::take(const fs::path& file, Arrival arrival, int attempt) {
  const IntakeCandidate candidate{file, arrival, attempt};
  return std::move(take_batch(std::span<const IntakeCandidate>{&candidate, 1}).front());
}

}  // namespace countersign::service
