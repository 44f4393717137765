#pragma once

// The tamper-evident audit trail. Every check and every review gets an entry whose content is the
// canonical JSON of what it recorded (for a check: plan UID, the SHA-256 of the plan bytes, of the
// beam-data library, of the tolerance policy and of each file written, the software version, the
// verdict and every beam), and whose hash covers that content and the previous entry's hash:
//
//   entry_hash = SHA-256(previous_hash "\n" content),   previous_hash of the first entry = 64 zeros
//
// verify_trail recomputes the chain, compares every entry with the rows as they are now, and the
// files of the checks with the hashes recorded, and names the first entry that was changed,
// deleted, or whose file differs. A hash chain without a secret shows changes, not who made them:
// someone able to rewrite the whole database can rewrite the chain after the point changed. The
// head (last entry's number and hash) is therefore kept outside the database too (audit_head_file),
// and `countersign audit verify` prints it so that it can be noted elsewhere.

#include <countersign/store/records.hpp>
#include <countersign/store/store.hpp>
#include <countersign/util/error.hpp>

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::store {

inline constexpr const char* genesis_hash =
    "0000000000000000000000000000000000000000000000000000000000000000";

// The canonical content of a check entry, from its fields (identical for the same fields, whatever
// the backend: sorted keys, shortest exact numbers, UTF-8).
[[nodiscard]] std::string check_content(const CheckRecord& check);
// The canonical content of a review entry.
[[nodiscard]] std::string review_content(const Review& review);
// The content of the import entry: the checks recorded before the trail existed.
[[nodiscard]] std::string import_content(const std::vector<CheckRecord>& legacy_checks);
// SHA-256(previous_hash "\n" content) as 64 hex digits.
[[nodiscard]] std::string chain_hash(const std::string& previous_hash, const std::string& content);

// The last entry of a trail.
struct AuditHead {
  std::int64_t seq = 0;
  std::string entry_hash;
};

// RESULTS/audit-head.txt: the head as a service last recorded it ("<seq> <hash>\n").
[[nodiscard]] std::filesystem::path audit_head_file(const std::filesystem::path& results);
[[nodiscard]] std::string audit_head_text(const AuditHead& head);
// nullopt when the file does not exist; an error when it exists and cannot be read or parsed.
[[nodiscard]] Expected<std::optional<AuditHead>> read_audit_head(const std::filesystem::path& file);

enum class FindingKind {
  entry_changed,         // an entry's hash does not match its content and predecessor
  chain_broken,          // an entry does not name the hash of the one before it
  entry_missing,         // a number of the sequence is absent: an entry was deleted
  record_changed,        // a check, its beams or a review differ from what its entry recorded
  record_deleted,        // an entry's check or review is gone
  record_without_entry,  // a check or review has no entry (its entry was deleted)
  file_differs,          // a file's SHA-256 differs from the one recorded
  file_missing,          // a recorded file is gone
  head_missing,          // the head recorded outside the database is no longer in the trail
  head_differs,          // ... or has another hash
};
[[nodiscard]] std::string_view to_string(FindingKind kind);

struct AuditFinding {
  FindingKind kind = FindingKind::entry_changed;
  std::int64_t seq = 0;  // the entry concerned (for a record without entry: 0)
  std::optional<std::int64_t> check_id;
  std::optional<std::int64_t> review_id;
  std::string message;  // one line naming the entry, the check or review, and what differs
};

// Whose files to verify: the checks that `station` recorded into `results_folder`.
struct FileScope {
  std::filesystem::path results_folder;  // where the files are now
  std::string station;                   // empty: any station
  // The store is this folder's own SQLite file: every check's files are here, even if the folder
  // was moved or restored elsewhere since.
  bool every_check = false;
};

struct AuditReport {
  std::vector<AuditFinding> problems;  // in the order of the trail: front() is the first
  std::vector<std::string> notes;      // facts that are not failures (files not checked here, ...)
  std::size_t entries = 0;
  std::size_t checks = 0;
  std::size_t reviews = 0;
  std::size_t files_checked = 0;
  std::optional<AuditHead> head;
  [[nodiscard]] bool intact() const { return problems.empty(); }
};

// Verifies the trail, the rows and (with `files`) the files; `anchor` is a head recorded outside
// the database (audit_head_file), which must still be in the trail with the same hash.
[[nodiscard]] AuditReport verify_trail(const AuditTrail& trail, const std::optional<FileScope>& files,
                                       const std::optional<AuditHead>& anchor);

}  // namespace countersign::store
