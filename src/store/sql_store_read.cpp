// Reading the history: lists with filters (in SQL, so that pages and limits count matching checks),
// one check with everything about it, and the whole trail for `audit verify`.

#include "sql_rows.hpp"
#include "sql_store.hpp"

#include <map>
#include <utility>

namespace countersign::store::detail {

namespace {

constexpr std::size_t ids_per_query = 500;

std::string placeholder(Params& params, Value value) {
  params.push_back(std::move(value));
  return "$" + std::to_string(params.size());
}

// A beam of a flagged verdict that no review of its own beam number covers.
constexpr const char* open_condition =
    " AND c.verdict <> 'within_tolerance'"
    " AND NOT EXISTS (SELECT 1 FROM reviews r WHERE r.check_id = c.id AND r.beam_number IS NULL)"
    " AND (NOT EXISTS (SELECT 1 FROM beams b WHERE b.check_id = c.id"
    "                  AND b.verdict IN ('outside_tolerance', 'not_checked'))"
    "      OR EXISTS (SELECT 1 FROM beams b WHERE b.check_id = c.id"
    "                 AND b.verdict IN ('outside_tolerance', 'not_checked')"
    "                 AND NOT EXISTS (SELECT 1 FROM reviews r WHERE r.check_id = c.id"
    "                                 AND r.beam_number = b.beam_number)))";

std::string where_clause(const CheckFilter& filter, Params& params) {
  std::string where = "WHERE 1 = 1";
  if (filter.sop_instance_uid)
    where += " AND c.sop_instance_uid = " + placeholder(params, *filter.sop_instance_uid);
  if (filter.patient_id) where += " AND c.patient_id = " + placeholder(params, *filter.patient_id);
  if (filter.verdict)
    where += " AND c.verdict = " + placeholder(params, std::string{to_string(*filter.verdict)});
  // Prefixes of the ISO 8601 time compare as text: "2026-12-01T08:00:00Z" >= "2026-12-01".
  if (filter.since_utc) where += " AND c.checked_at_utc >= " + placeholder(params, *filter.since_utc);
  if (filter.until_utc) {
    const std::string length = placeholder(params, static_cast<std::int64_t>(filter.until_utc->size()));
    where += " AND substr(c.checked_at_utc, 1, " + length + ") <= " + placeholder(params, *filter.until_utc);
  }
  if (filter.station) where += " AND c.station = " + placeholder(params, *filter.station);
  if (filter.superseded == Superseded::exclude)
    where += " AND NOT EXISTS (SELECT 1 FROM checks n WHERE n.replaces_check_id = c.id)";
  if (filter.has_beam_fields()) {
    where += " AND EXISTS (SELECT 1 FROM beams b WHERE b.check_id = c.id";
    if (filter.machine) where += " AND b.machine = " + placeholder(params, *filter.machine);
    if (filter.energy_mv)
      where += " AND ABS(b.energy_mv - " + placeholder(params, *filter.energy_mv) + ") <= 0.01";
    if (filter.technique) where += " AND b.technique = " + placeholder(params, *filter.technique);
    where += ")";
  }
  if (filter.review == ReviewFilter::open) where += open_condition;
  if (filter.review == ReviewFilter::reviewed)
    where += " AND EXISTS (SELECT 1 FROM reviews r WHERE r.check_id = c.id)";
  return where;
}

}  // namespace

Expected<std::vector<CheckRecord>> SqlStore::select_checks(const std::string& where_and_order,
                                                           const Params& params) {
  auto rows = run(std::string{"SELECT "} + check_columns + " FROM checks c " + where_and_order, params);
  if (!rows) return rows.error();
  std::vector<CheckRecord> checks;
  checks.reserve(rows->size());
  for (const Row& row : rows.value()) checks.push_back(check_from_row(row));
  if (auto attached = attach_details(checks); !attached) return attached.error();
  return checks;
}

// Beams, the state of reviews and the inputs that changed, for every check of a list, in a few queries.
Expected<bool> SqlStore::attach_details(std::vector<CheckRecord>& checks) {
  if (checks.empty()) return true;
  std::vector<std::int64_t> ids;
  std::vector<std::int64_t> replaced;
  std::map<std::int64_t, std::size_t> index;
  for (std::size_t i = 0; i < checks.size(); ++i) {
    ids.push_back(checks[i].id);
    index[checks[i].id] = i;
    if (checks[i].replaces_check_id) replaced.push_back(*checks[i].replaces_check_id);
  }
  std::map<std::int64_t, std::vector<Review>> reviews;
  for (std::size_t from = 0; from < ids.size(); from += ids_per_query) {
    const std::string in = id_list(ids, from, ids_per_query);
    auto beams = run(std::string{"SELECT "} + beam_columns + " FROM beams WHERE check_id IN " + in +
                     " ORDER BY check_id, position");
    if (!beams) return beams.error();
    for (const Row& row : beams.value()) checks[index[row.integer(0)]].beams.push_back(beam_from_row(row));
    auto found = select_reviews("WHERE r.check_id IN " + in, {});
    if (!found) return found.error();
    for (Review& review : found.value()) reviews[review.check_id].push_back(std::move(review));
  }
  for (CheckRecord& check : checks) {
    const auto& own = reviews[check.id];
    check.review_status = review_status_of(check, own);
    check.review_count = own.size();
  }
  for (std::size_t from = 0; from < replaced.size(); from += ids_per_query) {
    auto rows = run("SELECT id, beamdata_sha256, policy_sha256, software_version FROM checks WHERE id IN " +
                    id_list(replaced, from, ids_per_query));
    if (!rows) return rows.error();
    std::map<std::int64_t, const Row*> by_id;
    for (const Row& row : rows.value()) by_id[row.integer(0)] = &row;
    for (CheckRecord& check : checks) {
      if (!check.replaces_check_id) continue;
      const auto found = by_id.find(*check.replaces_check_id);
      if (found == by_id.end()) continue;
      check.inputs_changed =
          inputs_changed(found->second->text(1), found->second->text(2), found->second->text(3),
                         check.hashes.beamdata_sha256, check.hashes.policy_sha256, check.software_version);
    }
  }
  return true;
}

Expected<std::vector<Review>> SqlStore::select_reviews(const std::string& where, const Params& params) {
  auto rows =
      run(std::string{"SELECT "} + review_columns + " FROM reviews r " + where + " ORDER BY r.id", params);
  if (!rows) return rows.error();
  std::vector<Review> reviews;
  for (const Row& row : rows.value()) reviews.push_back(review_from_row(row));
  return reviews;
}

Expected<std::vector<CheckRecord>> SqlStore::list_checks(const CheckFilter& filter) {
  Params params;
  std::string sql = where_clause(filter, params) + " ORDER BY c.checked_at_utc DESC, c.id DESC";
  if (filter.limit || filter.offset > 0) {
    const auto limit = static_cast<std::int64_t>(filter.limit.value_or(std::size_t{1} << 62));
    sql += " LIMIT " + placeholder(params, limit) + " OFFSET " +
           placeholder(params, static_cast<std::int64_t>(filter.offset));
  }
  Transaction transaction{*this, TransactionKind::read};
  if (!transaction.began()) return transaction.began().error();
  auto checks = select_checks(sql, params);
  if (!checks) return checks.error();
  if (auto committed = transaction.commit(); !committed) return committed.error();
  return checks;
}

Expected<std::vector<CheckRecord>> SqlStore::get_checks(const std::vector<std::int64_t>& ids) {
  std::vector<CheckRecord> ordered;
  if (ids.empty()) return ordered;
  Transaction transaction{*this, TransactionKind::read};
  if (!transaction.began()) return transaction.began().error();
  std::map<std::int64_t, CheckRecord> found;
  for (std::size_t from = 0; from < ids.size(); from += ids_per_query) {
    auto checks = select_checks("WHERE c.id IN " + id_list(ids, from, ids_per_query), {});
    if (!checks) return checks.error();
    for (CheckRecord& check : checks.value()) found[check.id] = std::move(check);
  }
  if (auto committed = transaction.commit(); !committed) return committed.error();
  for (const std::int64_t id : ids) {
    if (const auto it = found.find(id); it != found.end()) ordered.push_back(it->second);
  }
  return ordered;
}

Expected<std::optional<CheckDetail>> SqlStore::get_check(std::int64_t id) {
  Transaction transaction{*this, TransactionKind::read};
  if (!transaction.began()) return transaction.began().error();
  auto checks = select_checks("WHERE c.id = $1", {id});
  if (!checks) return checks.error();
  if (checks->empty()) return std::optional<CheckDetail>{};
  CheckDetail detail;
  detail.check = std::move(checks->front());
  auto reviews = select_reviews("WHERE r.check_id = $1", {id});
  if (!reviews) return reviews.error();
  detail.reviews = std::move(reviews.value());
  auto entry =
      run("SELECT seq, kind, check_id, review_id, recorded_at_utc, content, previous_hash, entry_hash "
          "FROM audit_entries WHERE kind = 'check' AND check_id = $1 ORDER BY seq LIMIT 1",
          {id});
  if (!entry) return entry.error();
  if (!entry->empty()) {
    const Row& row = entry->front();
    detail.audit_entry = AuditEntry{row.integer(0),
                                    AuditKind::check,
                                    row.optional_integer(2),
                                    row.optional_integer(3),
                                    row.text(4),
                                    row.text(5),
                                    row.text(6),
                                    row.text(7)};
  }
  auto same_plan =
      select_checks("WHERE c.sop_instance_uid = $1 ORDER BY c.id", {detail.check.sop_instance_uid});
  if (!same_plan) return same_plan.error();
  detail.same_plan = std::move(same_plan.value());
  if (auto committed = transaction.commit(); !committed) return committed.error();
  return std::optional<CheckDetail>{std::move(detail)};
}

Expected<std::vector<Review>> SqlStore::reviews_of(std::int64_t check_id) {
  return select_reviews("WHERE r.check_id = $1", {check_id});
}

Expected<AuditTrail> SqlStore::read_audit_trail() {
  Transaction transaction{*this, TransactionKind::read};
  if (!transaction.began()) return transaction.began().error();
  AuditTrail trail;
  auto entries =
      run("SELECT seq, kind, check_id, review_id, recorded_at_utc, content, previous_hash, entry_hash "
          "FROM audit_entries ORDER BY seq");
  if (!entries) return entries.error();
  for (const Row& row : entries.value()) {
    AuditEntry entry;
    entry.seq = row.integer(0);
    const std::string kind = row.text(1);
    entry.kind = kind == "review"   ? AuditKind::review
                 : kind == "import" ? AuditKind::import
                                    : AuditKind::check;
    entry.check_id = row.optional_integer(2);
    entry.review_id = row.optional_integer(3);
    entry.recorded_at_utc = row.text(4);
    entry.content = row.text(5);
    entry.previous_hash = row.text(6);
    entry.entry_hash = row.text(7);
    trail.entries.push_back(std::move(entry));
  }
  auto checks = select_checks("ORDER BY c.id", {});
  if (!checks) return checks.error();
  trail.checks = std::move(checks.value());
  auto reviews = select_reviews("", {});
  if (!reviews) return reviews.error();
  trail.reviews = std::move(reviews.value());
  if (auto committed = transaction.commit(); !committed) return committed.error();
  return trail;
}

}  // namespace countersign::store::detail
