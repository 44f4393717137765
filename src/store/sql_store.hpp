#pragma once

// The store's behaviour, written once in SQL that both backends understand ($1, $2 … parameters,
// ON CONFLICT, standard types), over a few hooks each backend provides: run a statement, open a
// transaction (a write transaction is serialised with every other writer of the same store), claim
// a content, and the parts of the schema that differ (append-only triggers, column collation).
// Internal to the store module.

#include <countersign/store/audit.hpp>
#include <countersign/store/store.hpp>

#include <cstdint>
#include <optional>
#include <string>
#include <variant>
#include <vector>

namespace countersign::store::detail {

using Value = std::variant<std::monostate, std::int64_t, double, std::string>;
using Params = std::vector<Value>;

// NULL when absent.
[[nodiscard]] Value nullable(const std::optional<std::int64_t>& value);
[[nodiscard]] Value nullable(const std::optional<double>& value);

// One row of a result, values typed by the backend (integers, reals, text, NULL).
struct Row {
  std::vector<Value> values;

  [[nodiscard]] bool is_null(std::size_t column) const;
  [[nodiscard]] std::string text(std::size_t column) const;      // NULL: ""
  [[nodiscard]] std::int64_t integer(std::size_t column) const;  // NULL: 0
  [[nodiscard]] std::optional<std::int64_t> optional_integer(std::size_t column) const;
  [[nodiscard]] std::optional<double> optional_real(std::size_t column) const;
};

enum class TransactionKind {
  read,   // one consistent snapshot
  write,  // serialised with every other writer of the store (SQLite: BEGIN IMMEDIATE; PostgreSQL: an
          // advisory transaction lock)
};

enum class Dialect { sqlite, postgresql };

// "cannot read" for a query, "cannot write" for a change: the start of an error message.
[[nodiscard]] std::string statement_purpose(const std::string& sql);

// Text as the store keeps it: valid UTF-8 (bad bytes become U+FFFD) without NUL characters, so that
// both backends keep exactly the same value.
[[nodiscard]] std::string clean_text(std::string_view text);

class SqlStore : public Store {
 public:
  [[nodiscard]] const StoreLocation& location() const override { return location_; }

  [[nodiscard]] Expected<std::vector<std::int64_t>> reserve_check_ids(std::size_t count) override;
  [[nodiscard]] Expected<std::optional<CheckRecord>> find_by_content(
      const std::string& content_sha256) override;
  [[nodiscard]] Expected<std::vector<Recorded>> record_checks(const std::vector<NewCheck>& checks,
                                                              const std::string& checked_at_utc) override;
  [[nodiscard]] Expected<std::vector<CheckRecord>> list_checks(const CheckFilter& filter) override;
  [[nodiscard]] Expected<std::vector<CheckRecord>> get_checks(const std::vector<std::int64_t>& ids) override;
  [[nodiscard]] Expected<std::optional<CheckDetail>> get_check(std::int64_t id) override;
  [[nodiscard]] Expected<Review> add_review(const NewReview& review,
                                            const std::string& reviewed_at_utc) override;
  [[nodiscard]] Expected<std::vector<Review>> reviews_of(std::int64_t check_id) override;
  [[nodiscard]] Expected<AuditTrail> read_audit_trail() override;

  // Creates the tables (or upgrades an older history) in one write transaction.
  [[nodiscard]] Expected<bool> prepare_schema();
  // Fails when the tables are not there (a read-only open of a database that is not a history).
  [[nodiscard]] Expected<bool> require_schema();

 protected:
  explicit SqlStore(StoreLocation location) : location_(std::move(location)) {}

  // Runs one statement with its parameters and returns every row.
  [[nodiscard]] virtual Expected<std::vector<Row>> query(const std::string& sql, const Params& params) = 0;
  // Runs several statements without parameters.
  [[nodiscard]] virtual Expected<bool> execute_script(const std::string& sql) = 0;
  [[nodiscard]] virtual Expected<bool> begin(TransactionKind kind) = 0;
  [[nodiscard]] virtual Expected<bool> commit() = 0;
  virtual void rollback() = 0;
  [[nodiscard]] virtual Dialect dialect() const = 0;
  // The schema version an existing SQLite file of the first version carries (0 elsewhere).
  [[nodiscard]] virtual Expected<int> legacy_schema_version() { return 0; }

  // An error of kind io naming the store, for `what` went wrong, with `reason`.
  [[nodiscard]] Error store_error(const std::string& what, const std::string& reason) const;

  friend class Transaction;

 private:
  Expected<std::vector<Row>> run(const std::string& sql, const Params& params = {});
  Expected<std::int64_t> next_counter(const std::string& name, std::int64_t count);
  Expected<std::vector<CheckRecord>> select_checks(const std::string& where_and_order, const Params& params);
  Expected<bool> attach_details(std::vector<CheckRecord>& checks);
  Expected<std::optional<AuditHead>> last_entry();
  Expected<AuditEntry> append_entry(AuditKind kind, std::optional<std::int64_t> check_id,
                                    std::optional<std::int64_t> review_id, const std::string& content,
                                    const std::string& recorded_at_utc, std::optional<AuditHead>& head);
  Expected<Recorded> insert_check(const NewCheck& check, const std::string& checked_at_utc,
                                  std::optional<AuditHead>& head);
  Expected<std::vector<Review>> select_reviews(const std::string& where, const Params& params);
  Expected<bool> create_tables();
  Expected<bool> upgrade_first_version();

  StoreLocation location_;
};

// Rolls back unless committed.
class Transaction {
 public:
  Transaction(SqlStore& store, TransactionKind kind);
  Transaction(const Transaction&) = delete;
  Transaction& operator=(const Transaction&) = delete;
  ~Transaction();
  [[nodiscard]] const Expected<bool>& began() const { return began_; }
  [[nodiscard]] Expected<bool> commit();

 private:
  SqlStore& store_;
  Expected<bool> began_;
  bool open_ = false;
};

[[nodiscard]] Expected<std::unique_ptr<Store>> open_sqlite(const StoreLocation& location, Access access);
[[nodiscard]] Expected<std::unique_ptr<Store>> open_postgresql(const StoreLocation& location, Access access);

}  // namespace countersign::store::detail
