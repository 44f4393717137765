// The canonical content of audit entries: JSON with sorted keys, numbers in their shortest exact
// form, UTF-8 (bytes that are not become U+FFFD), so that the same fields give the same text in
// every backend and every run.

#include <countersign/store/audit.hpp>
#include <countersign/util/sha256.hpp>

#include <nlohmann/json.hpp>

#include <charconv>
#include <fstream>
#include <sstream>

namespace countersign::store {

namespace {

using nlohmann::json;

json optional_number(const std::optional<double>& value) { return value ? json(*value) : json(); }
json optional_id(const std::optional<std::int64_t>& value) { return value ? json(*value) : json(); }

std::string canonical(const json& value) {
  return value.dump(-1, ' ', false, json::error_handler_t::replace);
}

json check_json(const CheckRecord& check) {
  json beams = json::array();
  for (const BeamOutcome& beam : check.beams) {
    beams.push_back({{"beam_number", beam.beam_number},
                     {"beam_name", beam.beam_name},
                     {"machine", beam.machine},
                     {"energy_mv", optional_number(beam.energy_mv)},
                     {"technique", beam.technique},
                     {"verdict", std::string{to_string(beam.verdict)}},
                     {"deviation_percent", optional_number(beam.deviation_percent)},
                     {"tolerance_percent", optional_number(beam.tolerance_percent)},
                     {"reason", beam.reason}});
  }
  return {{"kind", "check"},
          {"check_id", check.id},
          {"checked_at_utc", check.checked_at_utc},
          {"sop_instance_uid", check.sop_instance_uid},
          {"content_sha256", check.content_sha256},
          {"patient_id", check.patient_id},
          {"plan_label", check.plan_label},
          {"verdict", std::string{to_string(check.verdict)}},
          {"software_version", check.software_version},
          {"source_name", check.source_name},
          {"station", check.station},
          {"results_folder", check.results_folder},
          {"files",
           {{"result_json", check.files.result_json},
            {"record_html", check.files.record_html},
            {"result_sr", check.files.result_sr},
            {"plan", check.files.plan}}},
          {"hashes",
           {{"plan_sha256", check.hashes.plan_sha256},
            {"beamdata_sha256", check.hashes.beamdata_sha256},
            {"policy_sha256", check.hashes.policy_sha256},
            {"result_sha256", check.hashes.result_sha256},
            {"record_sha256", check.hashes.record_sha256},
            {"sr_sha256", check.hashes.sr_sha256}}},
          {"replaces_check_id", optional_id(check.replaces_check_id)},
          {"beams", beams}};
}

}  // namespace

std::string check_content(const CheckRecord& check) { return canonical(check_json(check)); }

std::string review_content(const Review& review) {
  return canonical(json{{"kind", "review"},
                        {"review_id", review.id},
                        {"check_id", review.check_id},
                        {"beam_number", review.beam_number ? json(*review.beam_number) : json()},
                        {"decision", std::string{to_string(review.decision)}},
                        {"reason", review.reason},
                        {"reviewer", review.reviewer.name},
                        {"reviewer_kind", std::string{to_string(review.reviewer.kind)}},
                        {"reviewed_at_utc", review.reviewed_at_utc},
                        {"follows_review_id", optional_id(review.follows_review_id)}});
}

std::string import_content(const std::vector<CheckRecord>& legacy_checks) {
  json checks = json::array();
  for (const CheckRecord& check : legacy_checks) checks.push_back(check_json(check));
  return canonical(json{{"kind", "import"}, {"checks", checks}});
}

std::string chain_hash(const std::string& previous_hash, const std::string& content) {
  util::Sha256 hash;
  hash.update(previous_hash);
  hash.update("\n");
  hash.update(content);
  return hash.hex_digest();
}

std::filesystem::path audit_head_file(const std::filesystem::path& results) {
  return results / "audit-head.txt";
}

std::string audit_head_text(const AuditHead& head) {
  return std::to_string(head.seq) + " " + head.entry_hash + "\n";
}

Expected<std::optional<AuditHead>> read_audit_head(const std::filesystem::path& file) {
  std::error_code ec;
  if (!std::filesystem::exists(file, ec)) return std::optional<AuditHead>{};
  std::ifstream in(file);
  std::string seq_text;
  AuditHead head;
  if (!(in >> seq_text >> head.entry_hash)) {
    return Error{ErrorKind::io, file.string(), "", "",
                 "cannot read the audit head (expected \"<entry> <sha256>\")"};
  }
  const auto [end, error] = std::from_chars(seq_text.data(), seq_text.data() + seq_text.size(), head.seq);
  if (error != std::errc{} || end != seq_text.data() + seq_text.size() || head.entry_hash.size() != 64) {
    return Error{ErrorKind::io, file.string(), "", "",
                 "is not an audit head (expected \"<entry> <sha256>\")"};
  }
  return std::optional<AuditHead>{head};
}

}  // namespace countersign::store
