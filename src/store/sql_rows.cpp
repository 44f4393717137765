#include "sql_rows.hpp"

#include <map>

namespace countersign::store::detail {

const char* const check_columns =
    "c.id, c.sop_instance_uid, c.content_sha256, c.patient_id, c.plan_label, c.verdict, c.beamdata_sha256, "
    "c.software_version, c.checked_at_utc, c.source_name, c.result_file, c.replaces_check_id, c.plan_sha256, "
    "c.policy_sha256, c.station, c.results_folder, c.result_sha256, c.record_file, c.record_sha256, "
    "c.sr_file, "
    "c.sr_sha256, c.plan_file, "
    "(SELECT MIN(n.id) FROM checks n WHERE n.replaces_check_id = c.id), "
    "(SELECT MIN(a.seq) FROM audit_entries a WHERE a.kind = 'check' AND a.check_id = c.id)";

CheckRecord check_from_row(const Row& row) {
  CheckRecord record;
  record.id = row.integer(0);
  record.sop_instance_uid = row.text(1);
  record.content_sha256 = row.text(2);
  record.patient_id = row.text(3);
  record.plan_label = row.text(4);
  record.verdict = plan_verdict_from_string(row.text(5)).value_or(PlanVerdict::not_checked);
  record.hashes.beamdata_sha256 = row.text(6);
  record.software_version = row.text(7);
  record.checked_at_utc = row.text(8);
  record.source_name = row.text(9);
  record.files.result_json = row.text(10);
  record.replaces_check_id = row.optional_integer(11);
  record.hashes.plan_sha256 = row.text(12);
  record.hashes.policy_sha256 = row.text(13);
  record.station = row.text(14);
  record.results_folder = row.text(15);
  record.hashes.result_sha256 = row.text(16);
  record.files.record_html = row.text(17);
  record.hashes.record_sha256 = row.text(18);
  record.files.result_sr = row.text(19);
  record.hashes.sr_sha256 = row.text(20);
  record.files.plan = row.text(21);
  record.superseded_by_check_id = row.optional_integer(22);
  record.audit_seq = row.optional_integer(23);
  return record;
}

const char* const beam_columns =
    "check_id, beam_number, beam_name, machine, energy_mv, technique, verdict, deviation_percent, "
    "tolerance_percent, reason";

BeamOutcome beam_from_row(const Row& row) {
  BeamOutcome beam;
  beam.beam_number = static_cast<int>(row.integer(1));
  beam.beam_name = row.text(2);
  beam.machine = row.text(3);
  beam.energy_mv = row.optional_real(4);
  beam.technique = row.text(5);
  beam.verdict = beam_verdict_from_string(row.text(6)).value_or(BeamVerdict::not_checked);
  beam.deviation_percent = row.optional_real(7);
  beam.tolerance_percent = row.optional_real(8);
  beam.reason = row.text(9);
  return beam;
}

const char* const review_columns =
    "r.id, r.check_id, r.beam_number, r.decision, r.reason, r.reviewer, r.reviewer_kind, r.reviewed_at_utc, "
    "r.follows_review_id, (SELECT MIN(a.seq) FROM audit_entries a WHERE a.kind = 'review' AND a.review_id = "
    "r.id)";

Review review_from_row(const Row& row) {
  Review review;
  review.id = row.integer(0);
  review.check_id = row.integer(1);
  if (const auto beam = row.optional_integer(2)) review.beam_number = static_cast<int>(*beam);
  review.decision = row.text(3) == "rejected" ? Decision::rejected : Decision::accepted;
  review.reason = row.text(4);
  review.reviewer.name = row.text(5);
  review.reviewer.kind = row.text(6) == "web_user" ? ReviewerKind::web_user : ReviewerKind::os_user;
  review.reviewed_at_utc = row.text(7);
  review.follows_review_id = row.optional_integer(8);
  review.audit_seq = row.optional_integer(9);
  return review;
}

std::vector<InputChange> inputs_changed(const std::string& beamdata_before, const std::string& policy_before,
                                        const std::string& software_before, const std::string& beamdata_now,
                                        const std::string& policy_now, const std::string& software_now) {
  std::vector<InputChange> changes;
  const auto compare = [&changes](const char* input, const std::string& before, const std::string& now) {
    if (!before.empty() && !now.empty() && before != now) changes.push_back(InputChange{input, before, now});
  };
  compare("beam_data", beamdata_before, beamdata_now);
  compare("tolerance_policy", policy_before, policy_now);
  compare("software_version", software_before, software_now);
  return changes;
}

ReviewStatus review_status_of(const CheckRecord& check, const std::vector<Review>& reviews) {
  if (!is_flagged(check.verdict)) return ReviewStatus::not_needed;
  std::optional<Decision> plan_decision;
  std::map<int, Decision> beam_decisions;  // the latest per beam
  for (const Review& review : reviews) {
    if (review.beam_number) {
      beam_decisions[*review.beam_number] = review.decision;
    } else {
      plan_decision = review.decision;
    }
  }
  const auto status = [](Decision decision) {
    return decision == Decision::accepted ? ReviewStatus::accepted : ReviewStatus::rejected;
  };
  if (plan_decision) return status(*plan_decision);
  bool any_flagged = false;
  bool any_rejected = false;
  for (const BeamOutcome& beam : check.beams) {
    if (!is_flagged(beam.verdict)) continue;
    any_flagged = true;
    const auto decided = beam_decisions.find(beam.beam_number);
    if (decided == beam_decisions.end()) return ReviewStatus::open;
    any_rejected = any_rejected || decided->second == Decision::rejected;
  }
  if (!any_flagged) return ReviewStatus::open;  // only a decision about the whole plan closes it
  return any_rejected ? ReviewStatus::rejected : ReviewStatus::accepted;
}

std::string id_list(const std::vector<std::int64_t>& ids, std::size_t from, std::size_t count) {
  std::string list = "(";
  for (std::size_t i = from; i < from + count && i < ids.size(); ++i) {
    if (i > from) list += ", ";
    list += std::to_string(ids[i]);
  }
  return list + ")";
}

}  // namespace countersign::store::detail
