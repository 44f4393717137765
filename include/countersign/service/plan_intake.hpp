#pragma once

// The one path every arriving plan file takes, from the folder watcher and the DICOM receiver alike:
// read it once, whole; skip it if exactly these bytes were checked before; check it; write the
// results atomically; record the check; only then move the file out of the inbox. A crash at any
// step leaves the file in the inbox, and the next attempt either finds its record (and finishes the
// move) or redoes the check, so no plan is lost and none is recorded twice.

#include <countersign/service/history.hpp>
#include <countersign/service/plan_outcome.hpp>
#include <countersign/service/service_log.hpp>
#include <countersign/util/error.hpp>

#include <chrono>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>

namespace countersign::service {

struct ServiceFolders {
  std::filesystem::path inbox;          // where plan files arrive
  std::filesystem::path results;        // <UID>.json, <UID>.html
  std::filesystem::path quarantine;     // bad files and their <name>.reason.txt
  std::filesystem::path checked_plans;  // each plan file after its check, as <UID>.<hash prefix>.dcm

  // Fills in the defaults (quarantine: RESULTS/quarantine; checked plans: RESULTS/plans) and creates
  // every folder that is missing with mode 0750.
  [[nodiscard]] static Expected<ServiceFolders> prepare(
      const std::filesystem::path& inbox, const std::filesystem::path& results,
      const std::optional<std::filesystem::path>& quarantine);
};

struct IntakeOptions {
  // A file that cannot be read as a plan, and that changed less than this long ago, may still be
  // being written: it is retried once it has been quiet this long, and only then quarantined.
  std::chrono::milliseconds settle_time{10000};
  // How soon to look again at a file some process still holds open for writing.
  std::chrono::milliseconds busy_retry{500};
  // How soon to retry after a failure of our own (results folder or history not writable).
  std::chrono::milliseconds failure_retry{30000};
};

enum class IntakeStatus {
  checked,      // checked now; results written and recorded
  duplicate,    // these exact bytes were checked before; the file was moved out, nothing recorded
  quarantined,  // not a usable plan; moved to quarantine with a reason
  not_ready,    // still being written; try again at retry_at
  failed,       // our own failure (disk, database); the file stays; try again at retry_at
  ignored,      // not a candidate: vanished, a directory, a hidden or temporary name
};

struct IntakeResult {
  IntakeStatus status = IntakeStatus::ignored;
  std::string message;                               // what was logged, if anything
  std::optional<CheckRecord> record;                 // checked: the new record; duplicate: the earlier one
  std::chrono::system_clock::time_point retry_at{};  // not_ready and failed
};

// Names the folder watcher never takes: hidden files (our own temporary files start with a dot)
// and names ending in .part, .partial, .tmp or .reason.txt.
[[nodiscard]] bool is_candidate_name(std::string_view file_name);

// True for a non-empty UID of digits and dots of at most 64 characters: safe as a file name.
[[nodiscard]] bool is_safe_uid(std::string_view uid);

class PlanIntake {
 public:
  PlanIntake(ServiceFolders folders, History history, PlanProcessor processor, ServiceLog& log,
             IntakeOptions options);

  // Takes one file from the inbox through the whole path and logs one line about it (none for
  // not_ready and ignored).
  [[nodiscard]] IntakeResult take(const std::filesystem::path& file);

  [[nodiscard]] const ServiceFolders& folders() const { return folders_; }
  [[nodiscard]] const History& history() const { return history_; }
  [[nodiscard]] const IntakeOptions& options() const { return options_; }

 private:
  IntakeResult quarantine(const std::filesystem::path& file, std::string_view content_sha256,
                          const std::string& reason);
  IntakeResult fail(const std::filesystem::path& file, const std::string& reason);
  Expected<std::filesystem::path> move_to_checked(const std::filesystem::path& file, const std::string& uid,
                                                  const std::string& content_sha256);

  ServiceFolders folders_;
  History history_;
  PlanProcessor processor_;
  ServiceLog& log_;
  IntakeOptions options_;
};

}  // namespace countersign::service
