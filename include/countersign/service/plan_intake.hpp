#pragma once

// The one path every arriving plan file takes, from the folder watcher and the DICOM receiver alike:
// read it once, whole and only when complete; skip it if exactly these bytes were checked before
// (by this service or another sharing the store); check it; write its record files under names of
// its own (RESULTS/<UID>/<check id>.json, .html, .sr.dcm: never a name used before, nothing
// replaced); record the check; only then move the file out of the inbox. Files are taken in
// batches: the results of a batch are flushed to disk together and its checks recorded in one
// transaction, the commit point of the whole batch. A crash at any step leaves the files in the
// inbox, and the next attempt either finds their records (and finishes the moves) or redoes the
// checks under new numbers, so no plan is lost and none is recorded twice.

#include <countersign/service/plan_outcome.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/service/study_store.hpp>
#include <countersign/store/store.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <functional>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::service {

struct ServiceFolders {
  std::filesystem::path inbox;          // where plan files arrive
  std::filesystem::path results;        // <UID>/<check id>.json, .html, .sr.dcm
  std::filesystem::path quarantine;     // bad files and their <name>.reason.txt
  std::filesystem::path checked_plans;  // each plan file after its check, as <UID>.<hash prefix>.dcm

  // Fills in the defaults (quarantine: RESULTS/quarantine; checked plans: RESULTS/plans) and creates
  // every folder that is missing with mode 0750.
  [[nodiscard]] static Expected<ServiceFolders> prepare(
      const std::filesystem::path& inbox, const std::filesystem::path& results,
      const std::optional<std::filesystem::path>& quarantine);
};

// How a file came into the inbox, which decides when it may be read.
enum class Arrival {
  complete,  // moved in whole (a rename, as the receiver and careful exporters do): read at once
  in_place,  // written in the inbox itself, or found by a listing: read after the quiet period
};

struct IntakeOptions {
  // A file written in place is read only once its size and modification time have been unchanged
  // this long, and only if they are still the same after it was read.
  std::chrono::milliseconds quiet_period{2000};
  // How soon to look again at a file some process holds open for writing, or that changed while read.
  std::chrono::milliseconds busy_retry{500};
  // Back-off after a failed attempt (a file that cannot be read, or our own failure such as a full
  // disk): first_retry, doubled with each attempt, at most max_retry.
  std::chrono::milliseconds first_retry{1000};
  std::chrono::milliseconds max_retry{300000};
  // A file that still cannot be read at this attempt is moved to quarantine with the reason.
  int read_attempts = 5;
  // A batch takes no further file once this long has passed, so that the first results of a long
  // backlog are not held back (the files left over come first in the next batch).
  std::chrono::milliseconds batch_time_budget{1000};
};

enum class IntakeStatus {
  checked,      // checked now; results written and recorded
  duplicate,    // these exact bytes were checked before; the file was moved out, nothing recorded
  quarantined,  // not a usable plan (or unreadable too often); moved to quarantine with a reason
  not_ready,    // still being written (quiet period, held open, changed while read); retry at retry_at
  failed,       // could not be taken now (unreadable, or our own failure); the file stays; retry at retry_at
  deferred,     // not looked at: the batch ended early (stop request or time budget); take it first next
  ignored,      // not a candidate: vanished, a directory, a symbolic link, a hidden or temporary name
  kept_for_study,  // a CT image or RT Structure Set: moved to the study store for the plans made on it
  discarded,       // another RT object (RT Dose, RT Image, a treatment record): logged and removed
};

struct IntakeResult {
  IntakeStatus status = IntakeStatus::ignored;
  std::string message;                               // what happened (logged, except for not_ready)
  std::optional<store::CheckRecord> record;          // checked: the new record; duplicate: the earlier one
  std::chrono::system_clock::time_point retry_at{};  // not_ready and failed
};

struct IntakeCandidate {
  std::filesystem::path file;
  Arrival arrival = Arrival::complete;
  int attempt = 1;  // 1, then one more after each failed attempt (for back-off and the read limit)
};

// True for a non-empty UID of digits and dots of at most 64 characters: safe as a file name.
[[nodiscard]] bool is_safe_uid(std::string_view uid);

// Work that follows a check once it is recorded: an alert for a flagged plan, the results sent to
// an archive. Its markers are written with the check's files, before the commit, so that a crash
// after the commit loses nothing: the service resumes them at its next start.
class FollowUpSink {
 public:
  virtual ~FollowUpSink() = default;
  // Marker files (path, content) to write with the files of `check`; none when nothing follows.
  [[nodiscard]] virtual std::vector<std::pair<std::filesystem::path, std::string>> markers(
      const store::NewCheck& check) = 0;
  // The checks are recorded and their plan files moved: start the work (never blocks for long).
  virtual void recorded(const std::vector<store::CheckRecord>& checks) = 0;
};

// The name this machine gives itself (gethostname), recorded with every check as its station.
[[nodiscard]] std::string station_name();

class PlanIntake {
 public:
  PlanIntake(ServiceFolders folders, std::unique_ptr<store::Store> store, PlanProcessor processor,
             ServiceLog& log, IntakeOptions options);

  // Takes the candidates as one batch and returns one result each, in order. Every file is logged
  // once when it leaves the inbox or fails (not_ready, deferred and ignored files are not logged).
  // `stop_requested` is asked between files; once it says yes, the rest are deferred.
  [[nodiscard]] std::vector<IntakeResult> take_batch(std::span<const IntakeCandidate> candidates,
                                                     const std::function<bool()>& stop_requested = {});

  // One file as a batch of one.
  [[nodiscard]] IntakeResult take(const std::filesystem::path& file, Arrival arrival = Arrival::complete,
                                  int attempt = 1);

  // The study store (not owned; must outlive the intake), or none: then CT images and structure sets
  // are not recognised and plans are checked without a CT study, as before.
  void set_study_store(StudyStore* store) { study_store_ = store; }

  // Follow-ups of recorded checks (not owned; must outlive the intake), or none.
  void set_follow_ups(FollowUpSink* sink) { follow_ups_ = sink; }

  // Plans checked without their study because it had not arrived within the study wait are checked
  // again once it is complete in the study store, as long as it comes within the keep age (markers
  // under RESULTS/awaiting-study, written with the first check). The new check supersedes the one
  // without a CT in the history (both stay); it is recorded exactly once. take_batch calls this after
  // a batch that kept a CT image or structure set, and after the first batch.
  void recheck_late_studies();

  [[nodiscard]] const ServiceFolders& folders() const { return folders_; }
  [[nodiscard]] store::Store& store() const { return *store_; }
  [[nodiscard]] const IntakeOptions& options() const { return options_; }
  [[nodiscard]] ServiceLog& log() const { return log_; }

  struct Pending;   // a file checked, waiting for its batch's commit (internal)
  struct Awaiting;  // a plan checked without its study, from its marker (internal, late_study.cpp)

 private:
  struct Observed {
    std::string signature;  // size, times and inode as seen
    std::chrono::system_clock::time_point since;
  };

  std::optional<IntakeResult> examine(const IntakeCandidate& candidate, std::size_t index,
                                      std::vector<Pending>& pending);
  std::optional<IntakeResult> wait_for_quiet(const IntakeCandidate& candidate, const std::string& signature,
                                             std::chrono::system_clock::time_point modified);
  std::optional<IntakeResult> route_study_object(const std::filesystem::path& file);
  std::optional<IntakeResult> wait_for_study(const std::filesystem::path& file,
                                             std::span<const std::byte> bytes,
                                             std::chrono::system_clock::time_point arrived,
                                             StudyContext& study);
  void commit(std::vector<Pending>& pending, std::vector<IntakeResult>& results);
  IntakeResult finish_duplicate(const std::filesystem::path& file, const store::CheckRecord& record,
                                const std::string& content_sha256, std::string_view how = "");
  std::optional<Pending> late_study_check(const Awaiting& awaiting, const StudyLookup& lookup);
  IntakeResult finish_late_study_check(const Pending& pending, const store::Recorded& stored,
                                       const std::vector<std::filesystem::path>& written);
  [[nodiscard]] store::NewCheck new_check(const Pending& pending, std::int64_t id) const;
  void record_head(const std::vector<store::Recorded>& recorded);
  IntakeResult quarantine(const std::filesystem::path& file, std::string_view content_sha256,
                          const std::string& reason);
  IntakeResult fail(const std::filesystem::path& file, const std::string& reason, int attempt);
  std::chrono::milliseconds back_off(int attempt) const;
  Expected<std::filesystem::path> move_to_checked(const std::filesystem::path& file, const std::string& uid,
                                                  const std::string& content_sha256);

  ServiceFolders folders_;
  std::unique_ptr<store::Store> store_;
  PlanProcessor processor_;
  ServiceLog& log_;
  IntakeOptions options_;
  FollowUpSink* follow_ups_ = nullptr;
  StudyStore* study_store_ = nullptr;
  std::set<std::filesystem::path> waiting_logged_;  // plans whose wait for their study was logged
  bool late_studies_looked_at_ = false;             // recheck_late_studies ran once since the start
  std::string station_;
  std::string results_folder_;  // absolute, as recorded with each check
  // Files written in place whose modification time is in the future (another clock, a time set by
  // the writer): their quiet period is measured from when we first saw them as they are.
  std::map<std::filesystem::path, Observed> observed_;
};

}  // namespace countersign::service
