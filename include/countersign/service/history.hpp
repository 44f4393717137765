#pragma once

// The history of automatic checks, kept in SQLite: one record per (SOP Instance UID, content hash),
// with the per-beam fields a clinic tracks over time (AAPM TG-114 asks each clinic to set its own
// action levels from the distribution of its differences). The database file is created 0640.

#include <countersign/service/plan_outcome.hpp>
#include <countersign/util/error.hpp>

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

struct sqlite3;

namespace countersign::service {

// One stored check.
struct CheckRecord {
  std::int64_t id = 0;
  std::string sop_instance_uid;
  std::string content_sha256;  // SHA-256 of the plan file's bytes
  std::string patient_id;
  std::string plan_label;
  PlanVerdict verdict = PlanVerdict::not_checked;
  std::string beamdata_sha256;
  std::string software_version;
  std::string checked_at_utc;                          // ISO 8601, "2026-12-02T08:15:00Z"
  std::string source_name;                             // the file name as it arrived
  std::string result_file;                             // the JSON result as written
  std::optional<std::int64_t> replaces_check_id;       // an earlier check of the same plan UID, other content
  std::optional<std::int64_t> superseded_by_check_id;  // a later check that replaced this one
  std::vector<BeamOutcome> beams;
};

// What the service records for a new check (the store assigns id, time and replacement).
struct NewCheck {
  std::string content_sha256;
  std::string source_name;
  std::string result_file;
  std::string software_version;
  PlanOutcome outcome;  // json_text and html_text are not stored
};

enum class Superseded { exclude, include };

// Which records a listing includes; every set field must match. Beam-level fields (machine, energy,
// technique) select the checks with at least one matching beam, and the beams counted in trends.
struct HistoryFilter {
  std::optional<std::string> sop_instance_uid;
  std::optional<std::string> patient_id;
  std::optional<PlanVerdict> verdict;
  std::optional<std::string> since_utc;  // inclusive; a prefix such as "2026-12" or "2026-12-01" works
  std::optional<std::string> until_utc;  // inclusive, compared on the same prefix length
  std::optional<std::string> machine;
  std::optional<double> energy_mv;  // matched within 0.01 MV
  std::optional<std::string> technique;
  Superseded superseded = Superseded::exclude;  // a replaced check is normally left out of lists and trends
  std::optional<std::size_t> limit;             // newest first

  [[nodiscard]] bool beam_matches(const BeamOutcome& beam) const;
};

enum class HistoryAccess { read_write, read_only };

class History {
 public:
  // Opens (read_write: creates with mode 0640 and migrates) the history database at `file`.
  [[nodiscard]] static Expected<History> open(const std::filesystem::path& file, HistoryAccess access);

  History(History&&) noexcept;
  History& operator=(History&&) noexcept;
  History(const History&) = delete;
  History& operator=(const History&) = delete;
  ~History();

  [[nodiscard]] const std::filesystem::path& file() const { return file_; }

  // The check of exactly these bytes, if one was recorded.
  [[nodiscard]] Expected<std::optional<CheckRecord>> find_by_content(const std::string& content_sha256) const;

  // Records a check in one transaction. When an earlier check of the same UID with other content is
  // current, the new record replaces it. Returns the stored record.
  [[nodiscard]] Expected<CheckRecord> record(const NewCheck& check, const std::string& checked_at_utc);

  // Records several checks in one transaction (one commit, one flush to disk), in order: a later
  // check of the same UID replaces an earlier one of the batch as it would one recorded before.
  // All are recorded or none. Returns the stored records in the same order.
  [[nodiscard]] Expected<std::vector<CheckRecord>> record_batch(const std::vector<NewCheck>& checks,
                                                                const std::string& checked_at_utc);

  // Checks matching the filter, newest first, with their beams.
  [[nodiscard]] Expected<std::vector<CheckRecord>> list(const HistoryFilter& filter) const;

 private:
  struct Closer {
    void operator()(sqlite3* db) const;
  };
  History(std::filesystem::path file, std::unique_ptr<sqlite3, Closer> db);

  std::filesystem::path file_;
  std::unique_ptr<sqlite3, Closer> db_;
};

// The current time as "YYYY-MM-DDThh:mm:ssZ".
[[nodiscard]] std::string utc_timestamp_now();

}  // namespace countersign::service
