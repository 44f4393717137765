// The SQLite store: one file (0640, WAL, every commit durable), checked with PRAGMA quick_check
// before a service uses it, readable by a user without write access once the service has stopped.

#include "sql_store.hpp"

#include <fcntl.h>
#include <sqlite3.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <map>

namespace countersign::store::detail {

namespace fs = std::filesystem;

namespace {

// What SQLite said, with the operating system's reason where it has one (a full disk, a missing
// permission), so that the real cause is named.
std::string sqlite_reason(sqlite3* db) {
  if (db == nullptr) return "out of memory";
  const int code = sqlite3_extended_errcode(db);
  const int primary = code & 0xff;
  std::string text = sqlite3_errmsg(db);
  const int system = sqlite3_system_errno(db);
  if (system != 0 && (primary == SQLITE_IOERR || primary == SQLITE_FULL || primary == SQLITE_CANTOPEN ||
                      primary == SQLITE_READONLY)) {
    text += " (" + std::string{std::strerror(system)} + ")";
  }
  if (primary == SQLITE_CORRUPT || primary == SQLITE_NOTADB) {
    text += ": the file is damaged or is not a countersign history";
  }
  if (primary == SQLITE_READONLY && system == 0) text += " (this user cannot write it)";
  return text;
}

// Creates the file with mode 0640 before SQLite opens it; SQLite gives its WAL and shared-memory
// files the same mode.
Expected<bool> create_private_file(const fs::path& file) {
  const int fd = ::open(file.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0640);
  if (fd < 0) {
    return Error{ErrorKind::io, file.string(), "", "",
                 std::string{"cannot create the history database: "} + std::strerror(errno)};
  }
  struct stat info {};
  const bool fresh = ::fstat(fd, &info) == 0 && info.st_size == 0;
  if (fresh) ::fchmod(fd, 0640);  // only a file we just created; an existing one keeps its mode
  ::close(fd);
  return true;
}

// A URI for sqlite3_open_v2 with SQLITE_OPEN_URI: the path percent-encoded where a URI needs it.
std::string file_uri(const fs::path& file, const std::string& query) {
  std::string uri = "file:";
  const std::string path = fs::absolute(file).string();
  for (const char c : path) {
    if (c == '%' || c == '?' || c == '#') {
      static constexpr char hex[] = "0123456789ABCDEF";
      uri += '%';
      uri += hex[(static_cast<unsigned char>(c) >> 4) & 0xf];
      uri += hex[static_cast<unsigned char>(c) & 0xf];
    } else {
      uri += c;
    }
  }
  return uri + "?" + query;
}

class SqliteStore final : public SqlStore {
 public:
  SqliteStore(StoreLocation location, sqlite3* db) : SqlStore(std::move(location)), db_(db) {}
  ~SqliteStore() override {
    for (auto& [sql, statement] : statements_) sqlite3_finalize(statement);
    sqlite3_close_v2(db_);
  }

  Expected<bool> try_claim(const std::string&) override { return true; }
  void release_claims() override {}

  Expected<std::string> integrity_check() override {
    auto rows = query("PRAGMA quick_check", {});
    if (!rows) return rows.error();
    std::string found;
    for (const Row& row : rows.value()) found += (found.empty() ? "" : "; ") + row.text(0);
    return found;
  }

  // Runs quick_check and refuses the file unless it says "ok".
  Expected<bool> require_intact() {
    auto found = integrity_check();
    if (!found) return found.error();
    if (found.value() == "ok") return true;
    return store_error(
        "the database file is damaged (PRAGMA quick_check: " + found.value().substr(0, 400) + ")",
        "keep a copy of it for investigation, then restore it from a backup or move it aside to "
        "start a new history");
  }

  Expected<bool> configure_for_writing() {
    // WAL lets readers read while the service writes; FULL makes each commit durable, which the
    // exactly-once rule relies on (an inbox file is moved only after its batch's commit).
    for (const char* pragma :
         {"PRAGMA journal_mode=WAL", "PRAGMA synchronous=FULL", "PRAGMA foreign_keys=ON"}) {
      if (auto done = query(pragma, {}); !done) return done.error();
    }
    return true;
  }

 protected:
  Expected<std::vector<Row>> query(const std::string& sql, const Params& params) override {
    sqlite3_stmt* statement = prepared(sql);
    if (statement == nullptr) return store_error("cannot prepare a statement", sqlite_reason(db_));
    for (std::size_t i = 0; i < params.size(); ++i) {
      const std::string name = "$" + std::to_string(i + 1);
      const int index = sqlite3_bind_parameter_index(statement, name.c_str());
      if (index == 0) continue;
      bind(statement, index, params[i]);
    }
    std::vector<Row> rows;
    int status = SQLITE_ROW;
    while ((status = sqlite3_step(statement)) == SQLITE_ROW) rows.push_back(read_row(statement));
    const std::string reason = status == SQLITE_DONE ? std::string{} : sqlite_reason(db_);
    sqlite3_reset(statement);
    sqlite3_clear_bindings(statement);
    if (status != SQLITE_DONE) return store_error(statement_purpose(sql), reason);
    return rows;
  }

  Expected<bool> execute_script(const std::string& sql) override {
    if (sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, nullptr) != SQLITE_OK)
      return store_error("cannot create the tables", sqlite_reason(db_));
    return true;
  }

  Expected<bool> begin(TransactionKind kind) override {
    const char* sql = kind == TransactionKind::write ? "BEGIN IMMEDIATE" : "BEGIN";
    if (sqlite3_exec(db_, sql, nullptr, nullptr, nullptr) != SQLITE_OK)
      return store_error("cannot start a transaction", sqlite_reason(db_));
    return true;
  }

  Expected<bool> commit() override {
    if (sqlite3_exec(db_, "COMMIT", nullptr, nullptr, nullptr) != SQLITE_OK)
      return store_error("cannot commit", sqlite_reason(db_));
    return true;
  }

  void rollback() override { sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr); }

  [[nodiscard]] Dialect dialect() const override { return Dialect::sqlite; }

  Expected<int> legacy_schema_version() override {
    auto rows = query("PRAGMA user_version", {});
    if (!rows) return rows.error();
    return rows->empty() ? 0 : static_cast<int>(rows->front().integer(0));
  }

 private:
  sqlite3_stmt* prepared(const std::string& sql) {
    if (const auto found = statements_.find(sql); found != statements_.end()) return found->second;
    sqlite3_stmt* statement = nullptr;
    if (sqlite3_prepare_v2(db_, sql.c_str(), -1, &statement, nullptr) != SQLITE_OK) return nullptr;
    statements_.emplace(sql, statement);
    return statement;
  }

  static void bind(sqlite3_stmt* statement, int index, const Value& value) {
    if (const auto* number = std::get_if<std::int64_t>(&value)) {
      sqlite3_bind_int64(statement, index, *number);
    } else if (const auto* real = std::get_if<double>(&value)) {
      sqlite3_bind_double(statement, index, *real);
    } else if (const auto* text = std::get_if<std::string>(&value)) {
      sqlite3_bind_text(statement, index, text->data(), static_cast<int>(text->size()), SQLITE_TRANSIENT);
    } else {
      sqlite3_bind_null(statement, index);
    }
  }

  static Row read_row(sqlite3_stmt* statement) {
    Row row;
    const int columns = sqlite3_column_count(statement);
    row.values.reserve(static_cast<std::size_t>(columns));
    for (int column = 0; column < columns; ++column) {
      switch (sqlite3_column_type(statement, column)) {
        case SQLITE_INTEGER:
          row.values.emplace_back(static_cast<std::int64_t>(sqlite3_column_int64(statement, column)));
          break;
        case SQLITE_FLOAT:
          row.values.emplace_back(sqlite3_column_double(statement, column));
          break;
        case SQLITE_NULL:
          row.values.emplace_back(std::monostate{});
          break;
        default: {
          const auto* text = reinterpret_cast<const char*>(sqlite3_column_text(statement, column));
          const int bytes = sqlite3_column_bytes(statement, column);
          row.values.emplace_back(std::string{text == nullptr ? "" : text, static_cast<std::size_t>(bytes)});
        }
      }
    }
    return row;
  }

  sqlite3* db_;
  std::map<std::string, sqlite3_stmt*> statements_;
};

Expected<sqlite3*> open_file(const std::string& name, int flags, const fs::path& file) {
  sqlite3* raw = nullptr;
  if (sqlite3_open_v2(name.c_str(), &raw, flags | SQLITE_OPEN_NOMUTEX, nullptr) != SQLITE_OK) {
    const std::string reason = sqlite_reason(raw);
    sqlite3_close_v2(raw);
    return Error{ErrorKind::io, file.string(), "", "", "history database: cannot open it: " + reason};
  }
  sqlite3_busy_timeout(raw, 10000);
  return raw;
}

// A stopped service leaves no write-ahead log; a reader without write access to the folder cannot
// create the shared-memory file SQLite wants, so such a file is opened as immutable. A file with a
// log still holding changes is not (they would be missed): the error says why.
bool may_open_immutable(const fs::path& file) {
  std::error_code ec;
  const fs::path wal = fs::path{file.string() + "-wal"};
  const bool log_empty = !fs::exists(wal, ec) || fs::file_size(wal, ec) == 0;
  const bool folder_writable = ::access(fs::absolute(file).parent_path().c_str(), W_OK) == 0;
  return log_empty && !folder_writable;
}

Expected<std::unique_ptr<Store>> open_read_only(const StoreLocation& location, const fs::path& file) {
  std::error_code ec;
  if (!fs::exists(file, ec)) return Error{ErrorKind::io, file.string(), "", "", "no history database here"};
  const bool immutable = may_open_immutable(file);
  auto db = immutable ? open_file(file_uri(file, "immutable=1"), SQLITE_OPEN_READONLY | SQLITE_OPEN_URI, file)
                      : open_file(file.string(), SQLITE_OPEN_READONLY, file);
  if (!db) return db.error();
  auto store = std::make_unique<SqliteStore>(location, db.value());
  if (auto schema = store->require_schema(); !schema) {
    if (::access(fs::absolute(file).parent_path().c_str(), W_OK) != 0 && !immutable) {
      return Error{
          ErrorKind::io, file.string(), "", "",
          "history database: cannot read it without write access to its folder while its write-ahead log "
          "holds changes (the service is running, or stopped without closing it): " +
              schema.error().message()};
    }
    return schema.error();
  }
  return std::unique_ptr<Store>{std::move(store)};
}

}  // namespace

Expected<std::unique_ptr<Store>> open_sqlite(const StoreLocation& location, Access access) {
  const fs::path file = location.text;
  if (access == Access::read_only) return open_read_only(location, file);
  if (auto created = create_private_file(file); !created) return created.error();
  auto db = open_file(file.string(), SQLITE_OPEN_READWRITE, file);
  if (!db) return db.error();
  auto store = std::make_unique<SqliteStore>(location, db.value());
  // A damaged file is refused now, with its reason, not one failing batch after another.
  if (auto intact = store->require_intact(); !intact) return intact.error();
  if (auto configured = store->configure_for_writing(); !configured) return configured.error();
  if (auto schema = store->prepare_schema(); !schema) return schema.error();
  return std::unique_ptr<Store>{std::move(store)};
}

}  // namespace countersign::store::detail
