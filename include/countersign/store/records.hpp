#pragma once

// What the history keeps: one record per check (never changed once written), the reviews that
// follow it (append-only), and the audit entry that chains each of them to the one before. Plain
// values, shared by the services, the command line and the web view.

#include <countersign/store/verdict.hpp>

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace countersign::store {

// A check's files, relative to the results folder of the station that wrote them. Each check has
// names of its own ("<UID>/<check id>.json"), so no file is ever replaced by a later check.
struct CheckFiles {
  std::string result_json;  // "<UID>/<id>.json": the document `countersign check --json` prints
  std::string record_html;  // "<UID>/<id>.html": the printable record; empty when none was written
  std::string result_sr;    // "<UID>/<id>.sr.dcm": the structured result (DICOM SR); empty when none
  std::string plan;         // "plans/<UID>.<hash prefix>.dcm": the plan file as checked
};

// SHA-256 (64 lower-case hex digits) of what a check was computed from and of what it wrote.
struct CheckHashes {
  std::string plan_sha256;      // the plan file's bytes as they arrived
  std::string beamdata_sha256;  // the beam-data library (its manifests and tables)
  std::string policy_sha256;    // the tolerance policy in force (every key and value)
  std::string result_sha256;    // the result document (files.result_json)
  std::string record_sha256;    // the printable record (files.record_html); empty when none
  std::string sr_sha256;        // the structured result (files.result_sr); empty when none
};

// The fields of a check, as the service knows them before the store records it.
struct CheckData {
  std::string sop_instance_uid;  // SOP Instance UID (0008,0018)
  // The dataset in one canonical encoding: with the UID, the key of exactly-once. A service's check
  // again with a study that arrived late (service/late_study.cpp) records the SHA-256 of that hash with
  // the structure set's UID instead: the same plan content checked with its CT, once.
  std::string content_sha256;
  std::string patient_id;  // Patient ID (0010,0020)
  std::string plan_label;  // RT Plan Label (300A,0002)
  PlanVerdict verdict = PlanVerdict::not_checked;
  std::vector<BeamOutcome> beams;
  std::string software_version;
  std::string source_name;     // the file name as it arrived
  std::string station;         // the host that checked it
  std::string results_folder;  // that host's results folder (absolute)
  CheckFiles files;
  CheckHashes hashes;
};

// A check to record; its id was reserved with Store::reserve_check_ids before its files were written.
struct NewCheck : CheckData {
  std::int64_t id = 0;
};

// An input that differs from the check this one replaces ("inputs changed: beam data a1b2… → c3d4…").
struct InputChange {
  std::string input;  // "beam_data", "tolerance_policy" or "software_version"
  std::string from;
  std::string to;
};

// Where the reviews of a check stand.
enum class ReviewStatus {
  not_needed,  // within tolerance
  open,        // flagged or not checked, and no decision covers it yet
  accepted,    // the latest decision (of the plan, or of every flagged beam) accepts it
  rejected,    // the latest decision of the plan, or of some flagged beam, rejects it
};
[[nodiscard]] std::string_view to_string(ReviewStatus status);

// A recorded check.
struct CheckRecord : CheckData {
  std::int64_t id = 0;
  std::string checked_at_utc;                          // ISO 8601, "2026-12-02T08:15:00Z"
  std::optional<std::int64_t> replaces_check_id;       // the earlier check of the same plan (other content)
  std::optional<std::int64_t> superseded_by_check_id;  // the later check that replaced this one
  std::vector<InputChange> inputs_changed;             // against the replaced check
  ReviewStatus review_status = ReviewStatus::not_needed;
  std::size_t review_count = 0;
  std::optional<std::int64_t> audit_seq;  // its entry in the audit trail (absent only for checks
                                          // recorded before the trail existed, covered by its first entry)
};

enum class Decision { accepted, rejected };
[[nodiscard]] std::string_view to_string(Decision decision);

// Who decided: the operating-system user of `countersign review`, or a user of the web view.
enum class ReviewerKind { os_user, web_user };
[[nodiscard]] std::string_view to_string(ReviewerKind kind);

struct Reviewer {
  std::string name;
  ReviewerKind kind = ReviewerKind::os_user;
};

// A decision about a flagged or not-checked plan, or about one such beam of it.
struct NewReview {
  std::int64_t check_id = 0;
  std::optional<int> beam_number;  // absent: the whole plan
  Decision decision = Decision::accepted;
  std::string reason;
  Reviewer reviewer;
};

// A recorded review. Reviews are never changed: a later one about the same plan or beam follows it.
struct Review : NewReview {
  std::int64_t id = 0;
  std::string reviewed_at_utc;
  std::optional<std::int64_t> follows_review_id;  // the previous review of the same plan or beam
  std::optional<std::int64_t> audit_seq;
};

enum class AuditKind {
  check,   // a check was recorded
  review,  // a review was recorded
  import,  // the checks recorded before the trail existed (an older history), as they were then
};
[[nodiscard]] std::string_view to_string(AuditKind kind);

// One link of the audit trail: entry_hash = SHA-256(previous_hash "\n" content), where content is
// the canonical JSON of what the entry covers (the check with its beams, files and hashes; or the review).
struct AuditEntry {
  std::int64_t seq = 0;  // 1, 2, 3 ... without gaps
  AuditKind kind = AuditKind::check;
  std::optional<std::int64_t> check_id;
  std::optional<std::int64_t> review_id;
  std::string recorded_at_utc;
  std::string content;
  std::string previous_hash;  // of entry seq - 1; 64 zeros for the first
  std::string entry_hash;
};

// A check with everything about it, for one screen.
struct CheckDetail {
  CheckRecord check;
  std::vector<Review> reviews;            // oldest first
  std::optional<AuditEntry> audit_entry;  // its link in the trail
  std::vector<CheckRecord> same_plan;     // every check of the same SOP Instance UID, oldest first
};

// What a batch record did with each check.
struct Recorded {
  CheckRecord record;
  // True when exactly this content was recorded first by another service sharing the store: the
  // check given was not recorded, and `record` is the earlier one.
  bool already_recorded = false;
  std::string entry_hash;  // the hash of its new audit entry (empty when already recorded)
};

}  // namespace countersign::store
