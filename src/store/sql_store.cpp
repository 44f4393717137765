// Recording checks: ids reserved ahead of the files, one write transaction per batch, each check
// with its beams and its audit entry, exactly once per (SOP Instance UID, content SHA-256).

#include "sql_store.hpp"
#include "sql_rows.hpp"

#include <countersign/store/audit.hpp>
#include <countersign/util/text.hpp>

#include <charconv>
#include <cmath>
#include <utility>

namespace countersign::store::detail {

bool Row::is_null(std::size_t column) const {
  return column >= values.size() || std::holds_alternative<std::monostate>(values[column]);
}

std::string Row::text(std::size_t column) const {
  if (column >= values.size()) return {};
  const Value& value = values[column];
  if (const auto* text = std::get_if<std::string>(&value)) return *text;
  if (const auto* number = std::get_if<std::int64_t>(&value)) return std::to_string(*number);
  if (const auto* real = std::get_if<double>(&value)) return std::to_string(*real);
  return {};
}

std::optional<std::int64_t> Row::optional_integer(std::size_t column) const {
  if (column >= values.size()) return std::nullopt;
  const Value& value = values[column];
  if (const auto* number = std::get_if<std::int64_t>(&value)) return *number;
  if (const auto* real = std::get_if<double>(&value)) return static_cast<std::int64_t>(*real);
  if (const auto* text = std::get_if<std::string>(&value)) {
    std::int64_t parsed = 0;
    const auto [end, error] = std::from_chars(text->data(), text->data() + text->size(), parsed);
    if (error == std::errc{} && end == text->data() + text->size()) return parsed;
  }
  return std::nullopt;
}

std::int64_t Row::integer(std::size_t column) const { return optional_integer(column).value_or(0); }

std::optional<double> Row::optional_real(std::size_t column) const {
  if (column >= values.size()) return std::nullopt;
  const Value& value = values[column];
  if (const auto* real = std::get_if<double>(&value)) return *real;
  if (const auto* number = std::get_if<std::int64_t>(&value)) return static_cast<double>(*number);
  if (const auto* text = std::get_if<std::string>(&value)) {
    double parsed = 0;
    const auto [end, error] = std::from_chars(text->data(), text->data() + text->size(), parsed);
    if (error == std::errc{} && end == text->data() + text->size()) return parsed;
  }
  return std::nullopt;
}

Value nullable(const std::optional<std::int64_t>& value) {
  if (value) return Value{*value};
  return Value{};
}

Value nullable(const std::optional<double>& value) {
  if (value) return Value{*value};
  return Value{};
}

std::string statement_purpose(const std::string& sql) {
  const bool reads = sql.rfind("SELECT", 0) == 0 || sql.rfind("PRAGMA", 0) == 0;
  return reads ? "cannot read" : "cannot write";
}

std::string clean_text(std::string_view text) {
  std::string clean = valid_utf8(text);
  for (std::size_t at = clean.find('\0'); at != std::string::npos; at = clean.find('\0', at)) {
    clean.replace(at, 1, replacement_character);
  }
  return clean;
}

Transaction::Transaction(SqlStore& store, TransactionKind kind) : store_(store), began_(store.begin(kind)) {
  open_ = began_.has_value();
}

Transaction::~Transaction() {
  if (open_) store_.rollback();
}

Expected<bool> Transaction::commit() {
  if (!open_) return store_.store_error("cannot commit", "no transaction is open");
  open_ = false;
  auto committed = store_.commit();
  if (!committed) store_.rollback();
  return committed;
}

Error SqlStore::store_error(const std::string& what, const std::string& reason) const {
  const std::string where = location_.backend == Backend::sqlite ? location_.text : std::string{};
  const std::string prefix =
      location_.backend == Backend::sqlite ? "history database: " : location_.describe() + ": ";
  return Error{ErrorKind::io, where, "", "", prefix + what + ": " + reason};
}

Expected<std::vector<Row>> SqlStore::run(const std::string& sql, const Params& params) {
  return query(sql, params);
}

Expected<std::int64_t> SqlStore::next_counter(const std::string& name, std::int64_t count) {
  auto rows = run("UPDATE counters SET next_value = next_value + $1 WHERE name = $2 RETURNING next_value",
                  {count, name});
  if (!rows) return rows.error();
  if (rows->empty()) return store_error("cannot number records", "the counter \"" + name + "\" is missing");
  return rows->front().integer(0) - count;
}

Expected<std::vector<std::int64_t>> SqlStore::reserve_check_ids(std::size_t count) {
  std::vector<std::int64_t> ids;
  if (count == 0) return ids;
  Transaction transaction{*this, TransactionKind::write};
  if (!transaction.began()) return transaction.began().error();
  auto first = next_counter("checks", static_cast<std::int64_t>(count));
  if (!first) return first.error();
  if (auto committed = transaction.commit(); !committed) return committed.error();
  for (std::size_t i = 0; i < count; ++i) ids.push_back(first.value() + static_cast<std::int64_t>(i));
  return ids;
}

Expected<std::optional<CheckRecord>> SqlStore::find_by_content(const std::string& content_sha256) {
  auto found = select_checks("WHERE c.content_sha256 = $1 ORDER BY c.id LIMIT 1", {content_sha256});
  if (!found) return found.error();
  if (found->empty()) return std::optional<CheckRecord>{};
  return std::optional<CheckRecord>{std::move(found->front())};
}

Expected<std::optional<AuditHead>> SqlStore::last_entry() {
  auto rows = run("SELECT seq, entry_hash FROM audit_entries ORDER BY seq DESC LIMIT 1");
  if (!rows) return rows.error();
  if (rows->empty()) return std::optional<AuditHead>{};
  return std::optional<AuditHead>{AuditHead{rows->front().integer(0), rows->front().text(1)}};
}

// Appends one entry after `head` (read from the trail when not yet known in this transaction) and
// moves `head` to it. Must run inside a write transaction.
Expected<AuditEntry> SqlStore::append_entry(AuditKind kind, std::optional<std::int64_t> check_id,
                                            std::optional<std::int64_t> review_id, const std::string& content,
                                            const std::string& recorded_at_utc,
                                            std::optional<AuditHead>& head) {
  if (!head) {
    auto last = last_entry();
    if (!last) return last.error();
    head = last.value() ? *last.value() : AuditHead{0, genesis_hash};
  }
  AuditEntry entry;
  entry.seq = head->seq + 1;
  entry.kind = kind;
  entry.check_id = check_id;
  entry.review_id = review_id;
  entry.recorded_at_utc = recorded_at_utc;
  entry.content = content;
  entry.previous_hash = head->entry_hash;
  entry.entry_hash = chain_hash(entry.previous_hash, content);
  auto inserted = run(
      "INSERT INTO audit_entries (seq, kind, check_id, review_id, recorded_at_utc, content, previous_hash, "
      "entry_hash) VALUES ($1, $2, $3, $4, $5, $6, $7, $8)",
      {entry.seq, std::string{to_string(kind)}, nullable(check_id), nullable(review_id), recorded_at_utc,
       content, entry.previous_hash, entry.entry_hash});
  if (!inserted) return inserted.error();
  head = AuditHead{entry.seq, entry.entry_hash};
  return entry;
}

namespace {

// The stored form of a check: text cleaned, numbers finite (a NaN is absent), no negative zero.
CheckRecord stored_form(const NewCheck& check, const std::string& checked_at_utc) {
  CheckRecord record;
  static_cast<CheckData&>(record) = check;
  record.id = check.id;
  record.checked_at_utc = checked_at_utc;
  for (std::string* text :
       {&record.sop_instance_uid, &record.content_sha256, &record.patient_id, &record.plan_label,
        &record.software_version, &record.source_name, &record.station, &record.results_folder,
        &record.files.result_json, &record.files.record_html, &record.files.result_sr, &record.files.plan}) {
    *text = clean_text(*text);
  }
  const auto finite = [](std::optional<double>& value) {
    if (value && !std::isfinite(*value)) value.reset();
    if (value && *value == 0.0) value = 0.0;  // -0.0 would not survive every backend
  };
  for (BeamOutcome& beam : record.beams) {
    for (std::string* text : {&beam.beam_name, &beam.machine, &beam.technique, &beam.reason})
      *text = clean_text(*text);
    finite(beam.energy_mv);
    finite(beam.deviation_percent);
    finite(beam.tolerance_percent);
  }
  return record;
}

}  // namespace

// One check inside the batch's transaction: skipped when another service recorded the same
// content first; otherwise inserted with its beams, replacing the current check of the same plan.
Expected<Recorded> SqlStore::insert_check(const NewCheck& check, const std::string& checked_at_utc,
                                          std::optional<AuditHead>& head) {
  CheckRecord record = stored_form(check, checked_at_utc);
  auto earlier = select_checks("WHERE c.sop_instance_uid = $1 AND c.content_sha256 = $2",
                               {record.sop_instance_uid, record.content_sha256});
  if (!earlier) return earlier.error();
  if (!earlier->empty()) return Recorded{std::move(earlier->front()), true, {}};

  auto current =
      run("SELECT c.id, c.beamdata_sha256, c.policy_sha256, c.software_version FROM checks c "
          "WHERE c.sop_instance_uid = $1 AND NOT EXISTS (SELECT 1 FROM checks n WHERE n.replaces_check_id = "
          "c.id) "
          "ORDER BY c.id DESC LIMIT 1",
          {record.sop_instance_uid});
  if (!current) return current.error();
  if (!current->empty()) {
    const Row& replaced = current->front();
    record.replaces_check_id = replaced.integer(0);
    record.inputs_changed =
        inputs_changed(replaced.text(1), replaced.text(2), replaced.text(3), record.hashes.beamdata_sha256,
                       record.hashes.policy_sha256, record.software_version);
  }
  auto inserted = run(
      "INSERT INTO checks (id, sop_instance_uid, content_sha256, patient_id, plan_label, verdict, "
      "beamdata_sha256, "
      "software_version, checked_at_utc, source_name, result_file, replaces_check_id, plan_sha256, "
      "policy_sha256, "
      "station, results_folder, result_sha256, record_file, record_sha256, sr_file, sr_sha256, plan_file) "
      "VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, $17, $18, $19, $20, "
      "$21, $22)",
      {record.id,
       record.sop_instance_uid,
       record.content_sha256,
       record.patient_id,
       record.plan_label,
       std::string{to_string(record.verdict)},
       record.hashes.beamdata_sha256,
       record.software_version,
       record.checked_at_utc,
       record.source_name,
       record.files.result_json,
       nullable(record.replaces_check_id),
       record.hashes.plan_sha256,
       record.hashes.policy_sha256,
       record.station,
       record.results_folder,
       record.hashes.result_sha256,
       record.files.record_html,
       record.hashes.record_sha256,
       record.files.result_sr,
       record.hashes.sr_sha256,
       record.files.plan});
  if (!inserted) return inserted.error();
  std::int64_t position = 0;
  for (const BeamOutcome& beam : record.beams) {
    auto beam_row = run(
        "INSERT INTO beams (check_id, position, beam_number, beam_name, machine, energy_mv, technique, "
        "verdict, "
        "deviation_percent, tolerance_percent, reason) VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)",
        {record.id, position++, std::int64_t{beam.beam_number}, beam.beam_name, beam.machine,
         nullable(beam.energy_mv), beam.technique, std::string{to_string(beam.verdict)},
         nullable(beam.deviation_percent), nullable(beam.tolerance_percent), beam.reason});
    if (!beam_row) return beam_row.error();
  }
  auto entry =
      append_entry(AuditKind::check, record.id, std::nullopt, check_content(record), checked_at_utc, head);
  if (!entry) return entry.error();
  record.audit_seq = entry->seq;
  record.review_status = is_flagged(record.verdict) ? ReviewStatus::open : ReviewStatus::not_needed;
  return Recorded{std::move(record), false, entry->entry_hash};
}

Expected<std::vector<Recorded>> SqlStore::record_checks(const std::vector<NewCheck>& checks,
                                                        const std::string& checked_at_utc) {
  std::vector<Recorded> stored;
  if (checks.empty()) return stored;
  Transaction transaction{*this, TransactionKind::write};
  if (!transaction.began()) return transaction.began().error();
  std::optional<AuditHead> head;
  for (const NewCheck& check : checks) {
    auto one = insert_check(check, checked_at_utc, head);
    if (!one) return one.error();  // rolled back: none of the batch is recorded
    stored.push_back(std::move(one.value()));
  }
  // The commit point of every check of the batch (durable when it returns).
  if (auto committed = transaction.commit(); !committed) return committed.error();
  return stored;
}

}  // namespace countersign::store::detail
