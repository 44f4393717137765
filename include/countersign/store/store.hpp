#pragma once

// The history store: every check ever made, the reviews that follow, and the tamper-evident audit
// trail that chains them. One interface, two implementations with one schema and one behaviour:
// SQLite (a file, the default: one machine) and PostgreSQL through libpq (several services on
// several machines sharing one history). The store knows nothing of DICOM or of the calculation.
//
// Guarantees of both:
// - A check is recorded at most once per (SOP Instance UID, content SHA-256): a unique constraint,
//   and every write in one transaction, serialised with every other writer of the same store.
// - Checks, beams, reviews and audit entries are never updated or deleted (the database refuses
//   it; `audit verify` finds it when someone forces it).
// - A check of a plan already checked with other content replaces it (a re-export): both stay,
//   linked both ways.

#include <countersign/store/filter.hpp>
#include <countersign/store/records.hpp>
#include <countersign/util/error.hpp>

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace countersign::store {

enum class Access {
  read_write,  // creates the database (SQLite: file mode 0640) and its tables when missing
  read_only,   // never writes; a stopped service's SQLite file opens even without write access
};

enum class Backend { sqlite, postgresql };

// Where a store is: a PostgreSQL connection URI ("postgresql://…" or "postgres://…", libpq's
// syntax, e.g. postgresql://countersign@db.fernhollow.invalid/history or
// postgresql:///history?host=/run/postgresql) or else the path of an SQLite file.
struct StoreLocation {
  Backend backend = Backend::sqlite;
  std::string text;  // as given

  [[nodiscard]] static StoreLocation parse(const std::string& text);
  // For messages and logs: the file, or "PostgreSQL database D on H as U" (never a password).
  [[nodiscard]] std::string describe() const;
};

// Everything `audit verify` needs from a store, read in one consistent snapshot.
struct AuditTrail {
  std::vector<AuditEntry> entries;  // in chain order
  std::vector<CheckRecord> checks;  // every check as its rows are now (with beams), by id
  std::vector<Review> reviews;      // every review as its row is now, by id
};

class Store {
 public:
  Store() = default;
  Store(const Store&) = delete;
  Store& operator=(const Store&) = delete;
  virtual ~Store() = default;

  // Opens the store at `location`. read_write creates or upgrades the schema (an older history is
  // kept and its checks enter the trail as one import entry) and, for SQLite, runs PRAGMA
  // quick_check first: a damaged file is refused with the reason. Errors are of kind io and name
  // the file or the database.
  [[nodiscard]] static Expected<std::unique_ptr<Store>> open(const StoreLocation& location, Access access);

  [[nodiscard]] virtual const StoreLocation& location() const = 0;

  // --- recording (the services) ---

  // Reserves `count` new check ids, durably, so that a check's files can be named before its
  // record is written. Ids of an interrupted batch are never used again.
  [[nodiscard]] virtual Expected<std::vector<std::int64_t>> reserve_check_ids(std::size_t count) = 0;

  // The check of exactly this content (of any plan UID), if one was recorded.
  [[nodiscard]] virtual Expected<std::optional<CheckRecord>> find_by_content(
      const std::string& content_sha256) = 0;

  // Asks other services sharing the store not to check this content now (PostgreSQL: a session
  // advisory lock; SQLite: always granted). False when another holds it. Held until release_claims.
  [[nodiscard]] virtual Expected<bool> try_claim(const std::string& content_sha256) = 0;
  virtual void release_claims() = 0;

  // Records the checks in one transaction, in order, each with its audit entry: all or none. A
  // content another service recorded first is not recorded again (Recorded::already_recorded).
  [[nodiscard]] virtual Expected<std::vector<Recorded>> record_checks(const std::vector<NewCheck>& checks,
                                                                      const std::string& checked_at_utc) = 0;

  // --- reading (command line, web view) ---

  // Checks matching the filter, newest first.
  [[nodiscard]] virtual Expected<std::vector<CheckRecord>> list_checks(const CheckFilter& filter) = 0;
  // Checks with the given ids (those that exist), in the order given.
  [[nodiscard]] virtual Expected<std::vector<CheckRecord>> get_checks(
      const std::vector<std::int64_t>& ids) = 0;
  // One check with its reviews, its audit entry and the other checks of the same plan.
  [[nodiscard]] virtual Expected<std::optional<CheckDetail>> get_check(std::int64_t id) = 0;

  // --- reviews ---

  // Records a review with its audit entry. Refused (kind usage) for an unknown check, a check or
  // beam that is within tolerance or skipped, a beam the check does not have, an empty reason or
  // reviewer. A review is never changed; a later one follows it.
  [[nodiscard]] virtual Expected<Review> add_review(const NewReview& review,
                                                    const std::string& reviewed_at_utc) = 0;
  [[nodiscard]] virtual Expected<std::vector<Review>> reviews_of(std::int64_t check_id) = 0;

  // --- integrity ---

  // The whole trail and the current rows, read in one transaction.
  [[nodiscard]] virtual Expected<AuditTrail> read_audit_trail() = 0;
  // "ok", or what the database engine's own consistency check found (SQLite: PRAGMA quick_check).
  [[nodiscard]] virtual Expected<std::string> integrity_check() = 0;
};

// The default SQLite file of a results folder.
[[nodiscard]] std::filesystem::path default_history_file(const std::filesystem::path& results);

// The current time as "YYYY-MM-DDThh:mm:ssZ".
[[nodiscard]] std::string utc_timestamp_now();

}  // namespace countersign::store
