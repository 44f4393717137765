#include <countersign/service/history.hpp>

#include <fcntl.h>
#include <sqlite3.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstring>
#include <ctime>
#include <utility>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

constexpr int schema_version = 1;

constexpr const char* schema_sql = R"sql(
CREATE TABLE IF NOT EXISTS checks (
  id INTEGER PRIMARY KEY,
  sop_instance_uid TEXT NOT NULL,
  content_sha256 TEXT NOT NULL,
  patient_id TEXT NOT NULL,
  plan_label TEXT NOT NULL,
  verdict TEXT NOT NULL CHECK (verdict IN ('within_tolerance', 'outside_tolerance', 'not_checked')),
  beamdata_sha256 TEXT NOT NULL,
  software_version TEXT NOT NULL,
  checked_at_utc TEXT NOT NULL,
  source_name TEXT NOT NULL,
  result_file TEXT NOT NULL,
  replaces_check_id INTEGER REFERENCES checks(id),
  superseded_by_check_id INTEGER REFERENCES checks(id),
  UNIQUE (sop_instance_uid, content_sha256)
);
CREATE INDEX IF NOT EXISTS checks_by_content ON checks(content_sha256);
CREATE INDEX IF NOT EXISTS checks_by_time ON checks(checked_at_utc);
CREATE TABLE IF NOT EXISTS beams (
  check_id INTEGER NOT NULL REFERENCES checks(id),
  position INTEGER NOT NULL,
  beam_number INTEGER NOT NULL,
  beam_name TEXT NOT NULL,
  machine TEXT NOT NULL,
  energy_mv REAL,
  technique TEXT NOT NULL,
  verdict TEXT NOT NULL CHECK (verdict IN ('within_tolerance', 'outside_tolerance', 'not_checked', 'skipped')),
  deviation_percent REAL,
  tolerance_percent REAL,
  reason TEXT NOT NULL,
  PRIMARY KEY (check_id, position)
);
)sql";

constexpr const char* check_columns =
    "id, sop_instance_uid, content_sha256, patient_id, plan_label, verdict, beamdata_sha256, "
    "software_version, "
    "checked_at_utc, source_name, result_file, replaces_check_id, superseded_by_check_id";

Error db_error(const fs::path& file, sqlite3* db, const std::string& what) {
  const std::string reason = db != nullptr ? sqlite3_errmsg(db) : "out of memory";
  return Error{ErrorKind::io, file.string(), "", "", "history database: " + what + ": " + reason};
}

// A prepared statement, finalized on destruction.
class Statement {
 public:
  Statement(sqlite3* db, const char* sql) {
    if (sqlite3_prepare_v2(db, sql, -1, &stmt_, nullptr) != SQLITE_OK) stmt_ = nullptr;
  }
  Statement(const Statement&) = delete;
  Statement& operator=(const Statement&) = delete;
  ~Statement() { sqlite3_finalize(stmt_); }

  [[nodiscard]] bool ok() const { return stmt_ != nullptr; }
  void bind(int index, const std::string& text) {
    sqlite3_bind_text(stmt_, index, text.c_str(), static_cast<int>(text.size()), SQLITE_TRANSIENT);
  }
  void bind(int index, std::string_view text) { bind(index, std::string{text}); }
  void bind(int index, std::int64_t value) { sqlite3_bind_int64(stmt_, index, value); }
  void bind(int index, int value) { sqlite3_bind_int(stmt_, index, value); }
  void bind(int index, std::optional<double> value) {
    if (value && std::isfinite(*value)) {
      sqlite3_bind_double(stmt_, index, *value);
    } else {
      sqlite3_bind_null(stmt_, index);
    }
  }
  void bind(int index, std::optional<std::int64_t> value) {
    if (value) {
      sqlite3_bind_int64(stmt_, index, *value);
    } else {
      sqlite3_bind_null(stmt_, index);
    }
  }
  void bind_named(const char* name, const std::string& text) {
    const int index = sqlite3_bind_parameter_index(stmt_, name);
    if (index > 0) bind(index, text);
  }
  // SQLITE_ROW, SQLITE_DONE or an error code.
  int step() { return sqlite3_step(stmt_); }
  // Ready for the next execution with new bindings.
  void reset() {
    sqlite3_reset(stmt_);
    sqlite3_clear_bindings(stmt_);
  }

  [[nodiscard]] std::string text(int column) const {
    const auto* value = sqlite3_column_text(stmt_, column);
    return value == nullptr ? std::string{} : std::string{reinterpret_cast<const char*>(value)};
  }
  [[nodiscard]] std::int64_t integer(int column) const { return sqlite3_column_int64(stmt_, column); }
  [[nodiscard]] std::optional<std::int64_t> optional_integer(int column) const {
    if (sqlite3_column_type(stmt_, column) == SQLITE_NULL) return std::nullopt;
    return sqlite3_column_int64(stmt_, column);
  }
  [[nodiscard]] std::optional<double> optional_real(int column) const {
    if (sqlite3_column_type(stmt_, column) == SQLITE_NULL) return std::nullopt;
    return sqlite3_column_double(stmt_, column);
  }

 private:
  sqlite3_stmt* stmt_ = nullptr;
};

bool exec(sqlite3* db, const char* sql) {
  return sqlite3_exec(db, sql, nullptr, nullptr, nullptr) == SQLITE_OK;
}

// Rolls back an open transaction unless committed.
class Transaction {
 public:
  explicit Transaction(sqlite3* db) : db_(db), open_(exec(db, "BEGIN IMMEDIATE")) {}
  Transaction(const Transaction&) = delete;
  Transaction& operator=(const Transaction&) = delete;
  ~Transaction() {
    if (open_) exec(db_, "ROLLBACK");
  }
  [[nodiscard]] bool began() const { return open_; }
  [[nodiscard]] bool commit() {
    if (!open_) return false;
    open_ = false;
    if (exec(db_, "COMMIT")) return true;
    exec(db_, "ROLLBACK");
    return false;
  }

 private:
  sqlite3* db_;
  bool open_;
};

CheckRecord read_check_row(const Statement& row) {
  CheckRecord record;
  record.id = row.integer(0);
  record.sop_instance_uid = row.text(1);
  record.content_sha256 = row.text(2);
  record.patient_id = row.text(3);
  record.plan_label = row.text(4);
  record.verdict = plan_verdict_from_string(row.text(5)).value_or(PlanVerdict::not_checked);
  record.beamdata_sha256 = row.text(6);
  record.software_version = row.text(7);
  record.checked_at_utc = row.text(8);
  record.source_name = row.text(9);
  record.result_file = row.text(10);
  record.replaces_check_id = row.optional_integer(11);
  record.superseded_by_check_id = row.optional_integer(12);
  return record;
}

Expected<std::vector<BeamOutcome>> read_beams(const fs::path& file, sqlite3* db, std::int64_t check_id) {
  Statement query{db,
                  "SELECT beam_number, beam_name, machine, energy_mv, technique, verdict, deviation_percent, "
                  "tolerance_percent, reason FROM beams WHERE check_id = ?1 ORDER BY position"};
  if (!query.ok()) return db_error(file, db, "cannot read beams");
  query.bind(1, check_id);
  std::vector<BeamOutcome> beams;
  int status = SQLITE_ROW;
  while ((status = query.step()) == SQLITE_ROW) {
    BeamOutcome beam;
    beam.beam_number = static_cast<int>(query.integer(0));
    beam.beam_name = query.text(1);
    beam.machine = query.text(2);
    beam.energy_mv = query.optional_real(3);
    beam.technique = query.text(4);
    beam.verdict = beam_verdict_from_string(query.text(5)).value_or(BeamVerdict::not_checked);
    beam.deviation_percent = query.optional_real(6);
    beam.tolerance_percent = query.optional_real(7);
    beam.reason = query.text(8);
    beams.push_back(std::move(beam));
  }
  if (status != SQLITE_DONE) return db_error(file, db, "cannot read beams");
  return beams;
}

// Creates the database file with mode 0640 before SQLite opens it; SQLite gives its WAL and
// shared-memory files the same mode as the database file.
Expected<fs::path> create_private_file(const fs::path& file) {
  const int fd = ::open(file.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0640);
  if (fd < 0) {
    return Error{ErrorKind::io, file.string(), "", "",
                 std::string{"cannot create history database: "} + std::strerror(errno)};
  }
  struct stat info {};
  const bool fresh = ::fstat(fd, &info) == 0 && info.st_size == 0;
  if (fresh) ::fchmod(fd, 0640);  // only a file we just created; an existing one keeps its mode
  ::close(fd);
  return file;
}

}  // namespace

bool HistoryFilter::beam_matches(const BeamOutcome& beam) const {
  if (machine && beam.machine != *machine) return false;
  if (technique && beam.technique != *technique) return false;
  if (energy_mv && (!beam.energy_mv || std::abs(*beam.energy_mv - *energy_mv) > 0.01)) return false;
  return true;
}

void History::Closer::operator()(sqlite3* db) const { sqlite3_close_v2(db); }

History::History(fs::path file, std::unique_ptr<sqlite3, Closer> db)
    : file_(std::move(file)), db_(std::move(db)) {}
History::History(History&&) noexcept = default;
History& History::operator=(History&&) noexcept = default;
History::~History() = default;

Expected<History> History::open(const fs::path& file, HistoryAccess access) {
  int flags = SQLITE_OPEN_NOMUTEX;
  if (access == HistoryAccess::read_write) {
    if (auto created = create_private_file(file); !created) return created.error();
    flags |= SQLITE_OPEN_READWRITE;
  } else {
    std::error_code ec;
    if (!fs::exists(file, ec)) return Error{ErrorKind::io, file.string(), "", "", "no history database here"};
    flags |= SQLITE_OPEN_READONLY;
  }
  sqlite3* raw = nullptr;
  const int status = sqlite3_open_v2(file.c_str(), &raw, flags, nullptr);
  std::unique_ptr<sqlite3, Closer> db{raw};
  if (status != SQLITE_OK) return db_error(file, raw, "cannot open");
  sqlite3_busy_timeout(db.get(), 10000);

  if (access == HistoryAccess::read_write) {
    // WAL lets `countersign history` read while the service writes; FULL makes each commit durable,
    // which the exactly-once rule relies on (the inbox file is moved only after the commit).
    if (!exec(db.get(), "PRAGMA journal_mode=WAL") || !exec(db.get(), "PRAGMA synchronous=FULL") ||
        !exec(db.get(), "PRAGMA foreign_keys=ON")) {
      return db_error(file, db.get(), "cannot configure");
    }
    Transaction transaction{db.get()};
    if (!transaction.began()) return db_error(file, db.get(), "cannot start a transaction");
    Statement version{db.get(), "PRAGMA user_version"};
    if (!version.ok() || version.step() != SQLITE_ROW)
      return db_error(file, db.get(), "cannot read schema version");
    const auto found = version.integer(0);
    if (found > schema_version) {
      return Error{
          ErrorKind::io, file.string(), "", "",
          "history database was written by a newer countersign (schema " + std::to_string(found) + ")"};
    }
    if (!exec(db.get(), schema_sql)) return db_error(file, db.get(), "cannot create tables");
    if (!exec(db.get(), ("PRAGMA user_version = " + std::to_string(schema_version)).c_str()))
      return db_error(file, db.get(), "cannot set schema version");
    if (!transaction.commit()) return db_error(file, db.get(), "cannot commit schema");
  }
  return History{file, std::move(db)};
}

Expected<std::optional<CheckRecord>> History::find_by_content(const std::string& content_sha256) const {
  const std::string sql =
      std::string{"SELECT "} + check_columns + " FROM checks WHERE content_sha256 = ?1 ORDER BY id LIMIT 1";
  Statement query{db_.get(), sql.c_str()};
  if (!query.ok()) return db_error(file_, db_.get(), "cannot look up content hash");
  query.bind(1, content_sha256);
  const int status = query.step();
  if (status == SQLITE_DONE) return std::optional<CheckRecord>{};
  if (status != SQLITE_ROW) return db_error(file_, db_.get(), "cannot look up content hash");
  CheckRecord record = read_check_row(query);
  auto beams = read_beams(file_, db_.get(), record.id);
  if (!beams) return beams.error();
  record.beams = std::move(beams.value());
  return std::optional<CheckRecord>{std::move(record)};
}

namespace {

// Inserts one check (and its beams, and the mark on the check it replaces) inside the caller's
// transaction.
Expected<CheckRecord> insert_check(const fs::path& file, sqlite3* db, const NewCheck& check,
                                   const std::string& checked_at_utc) {
  // The current check of the same plan with other content, which this one replaces.
  std::optional<std::int64_t> replaces;
  {
    Statement query{db,
                    "SELECT id FROM checks WHERE sop_instance_uid = ?1 AND content_sha256 <> ?2 "
                    "AND superseded_by_check_id IS NULL ORDER BY id DESC LIMIT 1"};
    if (!query.ok()) return db_error(file, db, "cannot look up earlier checks");
    query.bind(1, check.outcome.sop_instance_uid);
    query.bind(2, check.content_sha256);
    const int status = query.step();
    if (status == SQLITE_ROW) {
      replaces = query.integer(0);
    } else if (status != SQLITE_DONE) {
      return db_error(file, db, "cannot look up earlier checks");
    }
  }

  const auto& outcome = check.outcome;
  Statement insert{
      db,
      "INSERT INTO checks (sop_instance_uid, content_sha256, patient_id, plan_label, verdict, "
      "beamdata_sha256, software_version, checked_at_utc, source_name, result_file, replaces_check_id) "
      "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11)"};
  if (!insert.ok()) return db_error(file, db, "cannot prepare insert");
  insert.bind(1, outcome.sop_instance_uid);
  insert.bind(2, check.content_sha256);
  insert.bind(3, outcome.patient_id);
  insert.bind(4, outcome.plan_label);
  insert.bind(5, to_string(outcome.verdict));
  insert.bind(6, outcome.beamdata_sha256);
  insert.bind(7, check.software_version);
  insert.bind(8, checked_at_utc);
  insert.bind(9, check.source_name);
  insert.bind(10, check.result_file);
  insert.bind(11, replaces);
  if (insert.step() != SQLITE_DONE) return db_error(file, db, "cannot record check");
  const std::int64_t id = sqlite3_last_insert_rowid(db);

  Statement beam_insert{
      db,
      "INSERT INTO beams (check_id, position, beam_number, beam_name, machine, energy_mv, technique, "
      "verdict, deviation_percent, tolerance_percent, reason) "
      "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11)"};
  if (!beam_insert.ok()) return db_error(file, db, "cannot prepare beam insert");
  int position = 0;
  for (const auto& beam : outcome.beams) {
    Statement& one = beam_insert;
    one.reset();
    one.bind(1, id);
    one.bind(2, position++);
    one.bind(3, beam.beam_number);
    one.bind(4, beam.beam_name);
    one.bind(5, beam.machine);
    one.bind(6, beam.energy_mv);
    one.bind(7, beam.technique);
    one.bind(8, to_string(beam.verdict));
    one.bind(9, beam.deviation_percent);
    one.bind(10, beam.tolerance_percent);
    one.bind(11, beam.reason);
    if (one.step() != SQLITE_DONE) return db_error(file, db, "cannot record beam");
  }

  if (replaces) {
    Statement update{db, "UPDATE checks SET superseded_by_check_id = ?1 WHERE id = ?2"};
    if (!update.ok()) return db_error(file, db, "cannot prepare update");
    update.bind(1, id);
    update.bind(2, *replaces);
    if (update.step() != SQLITE_DONE) return db_error(file, db, "cannot mark the replaced check");
  }

  CheckRecord stored;
  stored.id = id;
  stored.sop_instance_uid = outcome.sop_instance_uid;
  stored.content_sha256 = check.content_sha256;
  stored.patient_id = outcome.patient_id;
  stored.plan_label = outcome.plan_label;
  stored.verdict = outcome.verdict;
  stored.beamdata_sha256 = outcome.beamdata_sha256;
  stored.software_version = check.software_version;
  stored.checked_at_utc = checked_at_utc;
  stored.source_name = check.source_name;
  stored.result_file = check.result_file;
  stored.replaces_check_id = replaces;
  stored.beams = outcome.beams;
  return stored;
}

}  // namespace

Expected<CheckRecord> History::record(const NewCheck& check, const std::string& checked_at_utc) {
  auto stored = record_batch({check}, checked_at_utc);
  if (!stored) return stored.error();
  return std::move(stored.value().front());
}

Expected<std::vector<CheckRecord>> History::record_batch(const std::vector<NewCheck>& checks,
                                                         const std::string& checked_at_utc) {
  sqlite3* db = db_.get();
  Transaction transaction{db};
  if (!transaction.began()) return db_error(file_, db, "cannot start a transaction");
  std::vector<CheckRecord> stored;
  stored.reserve(checks.size());
  for (const NewCheck& check : checks) {
    auto one = insert_check(file_, db, check, checked_at_utc);
    if (!one) return one.error();  // the transaction rolls back: none is recorded
    stored.push_back(std::move(one.value()));
  }
  // The commit point of every check of the batch (synchronous=FULL: durable when it returns).
  if (!transaction.commit()) return db_error(file_, db, "cannot commit");
  return stored;
}

Expected<std::vector<CheckRecord>> History::list(const HistoryFilter& filter) const {
  std::string sql = std::string{"SELECT "} + check_columns + " FROM checks WHERE 1";
  if (filter.sop_instance_uid) sql += " AND sop_instance_uid = :uid";
  if (filter.patient_id) sql += " AND patient_id = :patient";
  if (filter.verdict) sql += " AND verdict = :verdict";
  if (filter.since_utc) sql += " AND substr(checked_at_utc, 1, length(:since)) >= :since";
  if (filter.until_utc) sql += " AND substr(checked_at_utc, 1, length(:until)) <= :until";
  if (filter.superseded == Superseded::exclude) sql += " AND superseded_by_check_id IS NULL";
  sql += " ORDER BY checked_at_utc DESC, id DESC";

  Statement query{db_.get(), sql.c_str()};
  if (!query.ok()) return db_error(file_, db_.get(), "cannot list checks");
  std::vector<std::pair<const char*, std::string>> parameters;
  if (filter.sop_instance_uid) parameters.emplace_back(":uid", *filter.sop_instance_uid);
  if (filter.patient_id) parameters.emplace_back(":patient", *filter.patient_id);
  if (filter.verdict) parameters.emplace_back(":verdict", std::string{to_string(*filter.verdict)});
  if (filter.since_utc) parameters.emplace_back(":since", *filter.since_utc);
  if (filter.until_utc) parameters.emplace_back(":until", *filter.until_utc);
  for (const auto& [name, value] : parameters) query.bind_named(name, value);

  std::vector<CheckRecord> records;
  int status = SQLITE_ROW;
  while ((status = query.step()) == SQLITE_ROW) {
    if (filter.limit && records.size() >= *filter.limit) break;
    CheckRecord record = read_check_row(query);
    auto beams = read_beams(file_, db_.get(), record.id);
    if (!beams) return beams.error();
    record.beams = std::move(beams.value());
    const bool beam_filter = filter.machine || filter.energy_mv || filter.technique;
    if (beam_filter) {
      bool any = false;
      for (const auto& beam : record.beams) any = any || filter.beam_matches(beam);
      if (!any) continue;
    }
    records.push_back(std::move(record));
  }
  if (status != SQLITE_DONE && status != SQLITE_ROW) return db_error(file_, db_.get(), "cannot list checks");
  return records;
}

std::string utc_timestamp_now() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm parts{};
  ::gmtime_r(&now, &parts);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &parts);
  return text;
}

}  // namespace countersign::service
