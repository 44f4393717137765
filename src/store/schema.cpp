// The schema, the same tables and columns in both backends, and the upgrade of a first-version
// SQLite history (one table of checks, a superseded mark updated in place) to this one.

#include "sql_store.hpp"

#include <countersign/store/audit.hpp>

#include <string>

namespace countersign::store::detail {

namespace {

constexpr int schema_version = 2;

// {text} is bytewise text (PostgreSQL: the C collation, as SQLite's BINARY), {real} a double.
constexpr const char* tables_sql = R"sql(
CREATE TABLE IF NOT EXISTS store_meta (
  name {text} PRIMARY KEY,
  value {text} NOT NULL
);
CREATE TABLE IF NOT EXISTS counters (
  name {text} PRIMARY KEY,
  next_value BIGINT NOT NULL
);
CREATE TABLE IF NOT EXISTS checks (
  id BIGINT PRIMARY KEY,
  sop_instance_uid {text} NOT NULL,
  content_sha256 {text} NOT NULL,
  patient_id {text} NOT NULL,
  plan_label {text} NOT NULL,
  verdict {text} NOT NULL CHECK (verdict IN ('within_tolerance', 'outside_tolerance', 'not_checked')),
  beamdata_sha256 {text} NOT NULL,
  software_version {text} NOT NULL,
  checked_at_utc {text} NOT NULL,
  source_name {text} NOT NULL,
  result_file {text} NOT NULL,
  replaces_check_id BIGINT REFERENCES checks(id),
  plan_sha256 {text} NOT NULL DEFAULT '',
  policy_sha256 {text} NOT NULL DEFAULT '',
  station {text} NOT NULL DEFAULT '',
  results_folder {text} NOT NULL DEFAULT '',
  result_sha256 {text} NOT NULL DEFAULT '',
  record_file {text} NOT NULL DEFAULT '',
  record_sha256 {text} NOT NULL DEFAULT '',
  sr_file {text} NOT NULL DEFAULT '',
  sr_sha256 {text} NOT NULL DEFAULT '',
  plan_file {text} NOT NULL DEFAULT '',
  UNIQUE (sop_instance_uid, content_sha256)
);
CREATE TABLE IF NOT EXISTS beams (
  check_id BIGINT NOT NULL REFERENCES checks(id),
  position BIGINT NOT NULL,
  beam_number BIGINT NOT NULL,
  beam_name {text} NOT NULL,
  machine {text} NOT NULL,
  energy_mv {real},
  technique {text} NOT NULL,
  verdict {text} NOT NULL CHECK (verdict IN ('within_tolerance', 'outside_tolerance', 'not_checked', 'skipped')),
  deviation_percent {real},
  tolerance_percent {real},
  reason {text} NOT NULL,
  PRIMARY KEY (check_id, position)
);
CREATE TABLE IF NOT EXISTS reviews (
  id BIGINT PRIMARY KEY,
  check_id BIGINT NOT NULL REFERENCES checks(id),
  beam_number BIGINT,
  decision {text} NOT NULL CHECK (decision IN ('accepted', 'rejected')),
  reason {text} NOT NULL,
  reviewer {text} NOT NULL,
  reviewer_kind {text} NOT NULL CHECK (reviewer_kind IN ('os_user', 'web_user')),
  reviewed_at_utc {text} NOT NULL,
  follows_review_id BIGINT REFERENCES reviews(id)
);
CREATE TABLE IF NOT EXISTS audit_entries (
  seq BIGINT PRIMARY KEY,
  kind {text} NOT NULL CHECK (kind IN ('check', 'review', 'import')),
  check_id BIGINT,
  review_id BIGINT,
  recorded_at_utc {text} NOT NULL,
  content {text} NOT NULL,
  previous_hash {text} NOT NULL,
  entry_hash {text} NOT NULL
);
CREATE INDEX IF NOT EXISTS checks_by_content ON checks(content_sha256);
CREATE INDEX IF NOT EXISTS checks_by_time ON checks(checked_at_utc);
CREATE INDEX IF NOT EXISTS checks_by_plan ON checks(sop_instance_uid);
CREATE INDEX IF NOT EXISTS checks_by_replaced ON checks(replaces_check_id);
CREATE INDEX IF NOT EXISTS reviews_by_check ON reviews(check_id);
CREATE INDEX IF NOT EXISTS audit_by_check ON audit_entries(check_id);
CREATE INDEX IF NOT EXISTS audit_by_review ON audit_entries(review_id);
)sql";

constexpr const char* append_only_tables[] = {"checks", "beams", "reviews", "audit_entries"};

// Records are never changed or removed by the program; the database refuses it, so that only a
// deliberate act (dropping the trigger) can, and `audit verify` then finds it.
std::string append_only_sql(Dialect dialect) {
  std::string sql;
  if (dialect == Dialect::postgresql) {
    sql +=
        "CREATE OR REPLACE FUNCTION countersign_append_only() RETURNS trigger LANGUAGE plpgsql AS $$ "
        "BEGIN RAISE EXCEPTION 'countersign: % are append-only', TG_TABLE_NAME; END $$;\n";
    for (const char* table : append_only_tables) {
      sql += std::string{"CREATE OR REPLACE TRIGGER "} + table + "_append_only BEFORE UPDATE OR DELETE ON " +
             table + " FOR EACH ROW EXECUTE FUNCTION countersign_append_only();\n";
    }
    return sql;
  }
  for (const char* table : append_only_tables) {
    for (const char* action : {"update", "delete"}) {
      sql += std::string{"CREATE TRIGGER IF NOT EXISTS "} + table + "_no_" + action + " BEFORE " + action +
             " ON " + table + " BEGIN SELECT RAISE(ABORT, 'countersign: " + table +
             " are append-only'); END;\n";
    }
  }
  return sql;
}

std::string with_types(std::string sql, Dialect dialect) {
  const auto replace_all = [&sql](const std::string& from, const std::string& to) {
    for (std::size_t at = sql.find(from); at != std::string::npos; at = sql.find(from, at + to.size()))
      sql.replace(at, from.size(), to);
  };
  replace_all("{text}", dialect == Dialect::postgresql ? "TEXT COLLATE \"C\"" : "TEXT");
  replace_all("{real}", dialect == Dialect::postgresql ? "DOUBLE PRECISION" : "REAL");
  return sql;
}

// Columns the first version lacked, added to its table by the upgrade.
constexpr const char* added_columns[] = {"plan_sha256",   "policy_sha256", "station",       "results_folder",
                                         "result_sha256", "record_file",   "record_sha256", "sr_file",
                                         "sr_sha256",     "plan_file"};

}  // namespace

Expected<bool> SqlStore::create_tables() {
  if (auto made = execute_script(with_types(tables_sql, dialect())); !made) return made;
  return execute_script(append_only_sql(dialect()));
}

Expected<bool> SqlStore::upgrade_first_version() {
  for (const char* column : added_columns) {
    auto added = run(std::string{"ALTER TABLE checks ADD COLUMN "} + column + " TEXT NOT NULL DEFAULT ''");
    if (!added) return added.error();
  }
  auto tables = execute_script(with_types(tables_sql, dialect()));
  if (!tables) return tables;
  // The checks recorded so far enter the trail as its first entry, as they are now.
  auto legacy = select_checks("ORDER BY c.id", {});
  if (!legacy) return legacy.error();
  if (!legacy->empty()) {
    std::optional<AuditHead> head;
    auto entry = append_entry(AuditKind::import, std::nullopt, std::nullopt, import_content(*legacy),
                              utc_timestamp_now(), head);
    if (!entry) return entry.error();
  }
  return execute_script(append_only_sql(dialect()));
}

Expected<bool> SqlStore::prepare_schema() {
  Transaction transaction{*this, TransactionKind::write};
  if (!transaction.began()) return transaction.began();
  auto legacy = legacy_schema_version();
  if (!legacy) return legacy.error();
  if (legacy.value() > schema_version) {
    return store_error("cannot use it", "it was written by a newer countersign (schema " +
                                            std::to_string(legacy.value()) + ")");
  }
  if (auto meta = run(
          with_types("CREATE TABLE IF NOT EXISTS store_meta (name {text} PRIMARY KEY, value {text} NOT NULL)",
                     dialect()));
      !meta) {
    return meta.error();
  }
  auto version = run("SELECT value FROM store_meta WHERE name = 'schema_version'");
  if (!version) return version.error();
  const int found = version->empty() ? 0 : std::stoi("0" + version->front().text(0));
  if (found > schema_version) {
    return store_error("cannot use it",
                       "it was written by a newer countersign (schema " + std::to_string(found) + ")");
  }
  if (found < schema_version) {
    auto made = legacy.value() == 1 ? upgrade_first_version() : create_tables();
    if (!made) return made;
    auto counters =
        run("INSERT INTO counters (name, next_value) SELECT 'checks', COALESCE(MAX(id), 0) + 1 FROM checks "
            "WHERE true ON CONFLICT (name) DO NOTHING");
    if (!counters) return counters.error();
    if (auto reviews = run(
            "INSERT INTO counters (name, next_value) VALUES ('reviews', 1) ON CONFLICT (name) DO NOTHING");
        !reviews) {
      return reviews.error();
    }
    auto stamped = run(
        "INSERT INTO store_meta (name, value) VALUES ('schema_version', $1) ON CONFLICT (name) DO UPDATE SET "
        "value = excluded.value",
        {std::string{std::to_string(schema_version)}});
    if (!stamped) return stamped.error();
    if (dialect() == Dialect::sqlite) {
      auto stamped_file = run("PRAGMA user_version = " + std::to_string(schema_version));
      if (!stamped_file) return stamped_file.error();
    }
  }
  return transaction.commit();
}

Expected<bool> SqlStore::require_schema() {
  auto legacy = legacy_schema_version();
  if (!legacy) return legacy.error();
  if (legacy.value() == 1) {
    return store_error(
        "cannot read it",
        "it is a history of an earlier countersign; a service (watch or receive) upgrades it when "
        "it starts");
  }
  auto version = run("SELECT value FROM store_meta WHERE name = 'schema_version'");
  if (!version) return store_error("cannot read it", "it holds no countersign history");
  if (version->empty()) return store_error("cannot read it", "it holds no countersign history");
  const int found = std::stoi("0" + version->front().text(0));
  if (found > schema_version) {
    return store_error("cannot read it",
                       "it was written by a newer countersign (schema " + std::to_string(found) + ")");
  }
  return true;
}

}  // namespace countersign::store::detail
