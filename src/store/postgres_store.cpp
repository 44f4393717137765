// The PostgreSQL store, through libpq: one history shared by services on several machines. Writers
// are serialised by an advisory transaction lock (so the audit chain has one order and the
// replacement of a re-exported plan sees every earlier check); a content being checked is claimed
// with a session advisory lock, so that two services given the same plan do not both compute it.

#include "libpq_api.hpp"
#include "sql_store.hpp"

#include <charconv>
#include <cstdlib>
#include <memory>

namespace countersign::store::detail {

namespace {

// PostgreSQL type OIDs of the values read back (pg_type.h).
constexpr Oid bool_oid = 16;
constexpr Oid int8_oid = 20;
constexpr Oid int2_oid = 21;
constexpr Oid int4_oid = 23;
constexpr Oid float4_oid = 700;
constexpr Oid float8_oid = 701;
constexpr Oid numeric_oid = 1700;

// The advisory lock of writers ("CSIG", 1) and of schema changes, in the two-key space.
constexpr int lock_class = 1129531207;
constexpr int writer_lock = 1;

std::string trimmed(const char* message) {
  std::string text = message == nullptr ? std::string{} : std::string{message};
  while (!text.empty() && (text.back() == '\n' || text.back() == ' ')) text.pop_back();
  for (char& c : text) {
    if (c == '\n') c = ' ';
  }
  return text;
}

std::string as_text(const Value& value) {
  if (const auto* number = std::get_if<std::int64_t>(&value)) return std::to_string(*number);
  if (const auto* real = std::get_if<double>(&value)) {
    char buffer[32];
    const auto [end, error] = std::to_chars(buffer, buffer + sizeof buffer, *real);  // shortest exact form
    return error == std::errc{} ? std::string{buffer, end} : std::string{"NaN"};
  }
  if (const auto* text = std::get_if<std::string>(&value)) return *text;
  return {};
}

struct ResultDeleter {
  const LibpqApi* pq = nullptr;
  void operator()(PGresult* result) const { pq->clear(result); }
};
using Result = std::unique_ptr<PGresult, ResultDeleter>;

Row read_row(const LibpqApi& pq, const PGresult* result, int row_number) {
  Row row;
  const int columns = pq.nfields(result);
  for (int column = 0; column < columns; ++column) {
    if (pq.getisnull(result, row_number, column) != 0) {
      row.values.emplace_back(std::monostate{});
      continue;
    }
    const char* text = pq.getvalue(result, row_number, column);
    const std::size_t length = static_cast<std::size_t>(pq.getlength(result, row_number, column));
    const Oid type = pq.ftype(result, column);
    if (type == int8_oid || type == int4_oid || type == int2_oid) {
      std::int64_t number = 0;
      std::from_chars(text, text + length, number);
      row.values.emplace_back(number);
    } else if (type == bool_oid) {
      row.values.emplace_back(std::int64_t{text[0] == 't' ? 1 : 0});
    } else if (type == float8_oid || type == float4_oid || type == numeric_oid) {
      row.values.emplace_back(std::strtod(text, nullptr));
    } else {
      row.values.emplace_back(std::string{text, length});
    }
  }
  return row;
}

class PostgresStore final : public SqlStore {
 public:
  PostgresStore(StoreLocation location, std::shared_ptr<const LibpqApi> pq, PGconn* connection, Access access)
      : SqlStore(std::move(location)), pq_(std::move(pq)), connection_(connection), access_(access) {}
  ~PostgresStore() override { pq_->finish(connection_); }

  Expected<bool> configure_session() {
    std::string settings = "SET client_min_messages = warning;";
    if (access_ == Access::read_only) settings += " SET default_transaction_read_only = on;";
    return execute_script(settings);
  }

  Expected<bool> try_claim(const std::string& content_sha256) override {
    // The first 15 hex digits of the hash as the lock's key (a collision only delays one plan).
    std::int64_t key = 0;
    std::from_chars(content_sha256.data(),
                    content_sha256.data() + std::min<std::size_t>(15, content_sha256.size()), key, 16);
    auto rows = query("SELECT pg_try_advisory_lock($1)", {key});
    if (!rows) return rows.error();
    const bool granted = !rows->empty() && rows->front().integer(0) == 1;
    if (granted) ++claims_;
    return granted;
  }

  void release_claims() override {
    if (claims_ == 0) return;
    claims_ = 0;
    [[maybe_unused]] auto released = query("SELECT pg_advisory_unlock_all()", {});
  }

  Expected<std::string> integrity_check() override {
    // PostgreSQL keeps its own consistency (write-ahead log, checksums when enabled); a connection
    // that answers is what can be checked from here.
    auto rows = query("SELECT 1", {});
    if (!rows) return rows.error();
    return std::string{"ok"};
  }

 protected:
  Expected<std::vector<Row>> query(const std::string& sql, const Params& params) override {
    if (auto connected = ensure_connected(); !connected) return connected.error();
    std::vector<std::string> texts;
    texts.reserve(params.size());
    std::vector<const char*> values;
    for (const Value& param : params) {
      texts.push_back(as_text(param));
      values.push_back(std::holds_alternative<std::monostate>(param) ? nullptr : texts.back().c_str());
    }
    // `texts` was reserved, so the pointers taken above stay valid.
    const Result result{pq_->exec_params(connection_, sql.c_str(), static_cast<int>(values.size()), nullptr,
                                         values.data(), nullptr, nullptr, 0),
                        ResultDeleter{pq_.get()}};
    const ExecStatusType status = result ? pq_->result_status(result.get()) : PGRES_FATAL_ERROR;
    if (status != PGRES_TUPLES_OK && status != PGRES_COMMAND_OK) {
      return store_error(statement_purpose(sql), trimmed(result ? pq_->result_error_message(result.get())
                                                                : pq_->error_message(connection_)));
    }
    std::vector<Row> rows;
    const int count = pq_->ntuples(result.get());
    rows.reserve(static_cast<std::size_t>(count));
    for (int i = 0; i < count; ++i) rows.push_back(read_row(*pq_, result.get(), i));
    return rows;
  }

  Expected<bool> execute_script(const std::string& sql) override {
    if (auto connected = ensure_connected(); !connected) return connected.error();
    const Result result{pq_->exec(connection_, sql.c_str()), ResultDeleter{pq_.get()}};
    const ExecStatusType status = result ? pq_->result_status(result.get()) : PGRES_FATAL_ERROR;
    if (status != PGRES_COMMAND_OK && status != PGRES_TUPLES_OK) {
      return store_error(
          "cannot prepare the database",
          trimmed(result ? pq_->result_error_message(result.get()) : pq_->error_message(connection_)));
    }
    return true;
  }

  Expected<bool> begin(TransactionKind kind) override {
    if (kind == TransactionKind::read) return execute_script("BEGIN ISOLATION LEVEL REPEATABLE READ");
    if (auto begun = execute_script("BEGIN"); !begun) return begun;
    auto locked = query("SELECT pg_advisory_xact_lock(" + std::to_string(lock_class) + ", " +
                            std::to_string(writer_lock) + ")",
                        {});
    if (!locked) {
      rollback();
      return locked.error();
    }
    return true;
  }

  Expected<bool> commit() override {
    const Result result{pq_->exec(connection_, "COMMIT"), ResultDeleter{pq_.get()}};
    // A transaction that failed inside answers COMMIT with ROLLBACK: that is not a commit.
    if (!result || pq_->result_status(result.get()) != PGRES_COMMAND_OK ||
        std::string{pq_->cmd_status(result.get())} != "COMMIT") {
      return store_error("cannot commit", trimmed(result ? pq_->result_error_message(result.get())
                                                         : pq_->error_message(connection_)));
    }
    return true;
  }

  void rollback() override { pq_->clear(pq_->exec(connection_, "ROLLBACK")); }

  [[nodiscard]] Dialect dialect() const override { return Dialect::postgresql; }

 private:
  // After a lost connection (a server restart), the next statement reconnects; what was running
  // failed and is retried by its caller (a batch stays in the inbox until it is recorded).
  Expected<bool> ensure_connected() {
    if (pq_->status(connection_) == CONNECTION_OK) return true;
    pq_->reset(connection_);
    claims_ = 0;  // a new session holds no locks
    if (pq_->status(connection_) != CONNECTION_OK)
      return store_error("cannot reconnect", trimmed(pq_->error_message(connection_)));
    const Result settings{
        pq_->exec(connection_, access_ == Access::read_only ? "SET client_min_messages = warning; "
                                                              "SET default_transaction_read_only = on"
                                                            : "SET client_min_messages = warning"),
        ResultDeleter{pq_.get()}};
    return true;
  }

  std::shared_ptr<const LibpqApi> pq_;
  PGconn* connection_;
  Access access_;
  std::size_t claims_ = 0;
};

}  // namespace

Expected<std::unique_ptr<Store>> open_postgresql(const StoreLocation& location, Access access) {
  auto loaded = load_libpq();
  if (!loaded) {
    Error error = loaded.error();
    error.detail = location.describe() + ": " + error.detail;
    return error;
  }
  const LibpqApi& pq = **loaded;
  // connect_timeout first: the URI's own value, when it has one, comes later and wins.
  const char* keywords[] = {"connect_timeout", "fallback_application_name", "dbname", nullptr};
  const char* values[] = {"10", "countersign", location.text.c_str(), nullptr};
  PGconn* connection = pq.connectdb_params(keywords, values, 1);
  if (connection == nullptr || pq.status(connection) != CONNECTION_OK) {
    const std::string reason =
        trimmed(connection == nullptr ? "out of memory" : pq.error_message(connection));
    pq.finish(connection);
    return Error{ErrorKind::io, "", "", "", location.describe() + ": cannot connect: " + reason};
  }
  auto store = std::make_unique<PostgresStore>(location, *loaded, connection, access);
  if (auto configured = store->configure_session(); !configured) return configured.error();
  auto schema = access == Access::read_write ? store->prepare_schema() : store->require_schema();
  if (!schema) return schema.error();
  return std::unique_ptr<Store>{std::move(store)};
}

}  // namespace countersign::store::detail
