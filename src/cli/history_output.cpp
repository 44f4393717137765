#include "history_output.hpp"

#include "store_options.hpp"

#include <countersign/util/text.hpp>

#include <cstdio>
#include <filesystem>
#include <string>

namespace countersign::cli {

namespace {

using nlohmann::json;

std::string fixed(double value, int decimals, bool sign = false) {
  char text[32];
  std::snprintf(text, sizeof text, sign ? "%+.*f" : "%.*f", decimals, value);
  return text;
}

std::string fixed(const std::optional<double>& value, int decimals, bool sign = false) {
  return value ? fixed(*value, decimals, sign) : std::string{"-"};
}

// A column of the terminal table, always followed by at least one space; values from plans have
// their control characters escaped.
std::string padded(std::string_view value, std::size_t width) {
  std::string text = escape_control_characters(value);
  text.append(text.size() < width ? width - text.size() : 1, ' ');
  return text;
}

json optional_number(std::optional<double> value) { return value ? json(*value) : json(); }
json optional_id(const std::optional<std::int64_t>& id) { return id ? json(*id) : json(); }

std::string review_word(const store::CheckRecord& record) {
  std::string word{store::to_string(record.review_status)};
  if (record.review_count > 0 && record.review_status == store::ReviewStatus::open) word += " (partly)";
  return record.review_status == store::ReviewStatus::not_needed ? std::string{"-"} : word;
}

std::string note_of(const store::CheckRecord& record) {
  std::string note;
  const auto add = [&note](const std::string& part) { note += (note.empty() ? "" : "; ") + part; };
  if (record.replaces_check_id) add("replaces #" + std::to_string(*record.replaces_check_id));
  if (record.superseded_by_check_id) add("superseded by #" + std::to_string(*record.superseded_by_check_id));
  if (!record.inputs_changed.empty()) add("inputs changed: " + inputs_changed_text(record));
  return note;
}

}  // namespace

json check_to_json(const store::CheckRecord& record) {
  json beams = json::array();
  for (const auto& beam : record.beams) {
    beams.push_back({{"beam_number", beam.beam_number},
                     {"beam_name", beam.beam_name},
                     {"machine", beam.machine},
                     {"energy_mv", optional_number(beam.energy_mv)},
                     {"technique", beam.technique},
                     {"status", store::to_string(beam.verdict)},
                     {"deviation_percent", optional_number(beam.deviation_percent)},
                     {"tolerance_percent", optional_number(beam.tolerance_percent)},
                     {"reason", beam.reason}});
  }
  json changes = json::array();
  for (const auto& change : record.inputs_changed)
    changes.push_back({{"input", change.input}, {"from", change.from}, {"to", change.to}});
  const std::filesystem::path folder = record.results_folder;
  return {{"check_id", record.id},
          {"checked_at_utc", record.checked_at_utc},
          {"sop_instance_uid", record.sop_instance_uid},
          {"content_sha256", record.content_sha256},
          {"patient_id", record.patient_id},
          {"plan_label", record.plan_label},
          {"status", store::to_string(record.verdict)},
          {"beamdata_sha256", record.hashes.beamdata_sha256},
          {"policy_sha256", record.hashes.policy_sha256},
          {"plan_sha256", record.hashes.plan_sha256},
          {"software_version", record.software_version},
          {"source_name", record.source_name},
          {"station", record.station},
          {"results_folder", record.results_folder},
          {"result_file",
           folder.empty() ? record.files.result_json : (folder / record.files.result_json).string()},
          {"files",
           {{"result_json", record.files.result_json},
            {"record_html", record.files.record_html},
            {"result_sr", record.files.result_sr},
            {"plan", record.files.plan}}},
          {"replaces_check_id", optional_id(record.replaces_check_id)},
          {"superseded_by_check_id", optional_id(record.superseded_by_check_id)},
          {"inputs_changed", changes},
          {"review_status", store::to_string(record.review_status)},
          {"review_count", record.review_count},
          {"audit_entry", optional_id(record.audit_seq)},
          {"beams", beams}};
}

json review_to_json(const store::Review& review) {
  return {{"review_id", review.id},
          {"check_id", review.check_id},
          {"beam_number", review.beam_number ? json(*review.beam_number) : json()},
          {"decision", store::to_string(review.decision)},
          {"reason", review.reason},
          {"reviewer", review.reviewer.name},
          {"reviewer_kind", store::to_string(review.reviewer.kind)},
          {"reviewed_at_utc", review.reviewed_at_utc},
          {"follows_review_id", optional_id(review.follows_review_id)},
          {"audit_entry", optional_id(review.audit_seq)}};
}

json trend_to_json(const store::TrendGroup& group) {
  return {{"machine", group.machine},
          {"energy_mv", optional_number(group.energy_mv)},
          {"technique", group.technique},
          {"checked_beams", group.checked_beams},
          {"outside_tolerance_beams", group.outside_tolerance_beams},
          {"not_checked_beams", group.not_checked_beams},
          {"mean_deviation_percent", optional_number(group.mean_deviation_percent)},
          {"sd_deviation_percent", optional_number(group.sd_deviation_percent)},
          {"min_deviation_percent", optional_number(group.min_deviation_percent)},
          {"max_deviation_percent", optional_number(group.max_deviation_percent)},
          {"share_outside_tolerance", optional_number(group.share_outside_tolerance)}};
}

json check_detail_to_json(const store::CheckDetail& detail) {
  json document = check_to_json(detail.check);
  json reviews = json::array();
  for (const auto& review : detail.reviews) reviews.push_back(review_to_json(review));
  document["reviews"] = reviews;
  json same_plan = json::array();
  for (const auto& other : detail.same_plan) same_plan.push_back(check_to_json(other));
  document["checks_of_this_plan"] = same_plan;
  if (detail.audit_entry) {
    document["audit_entry_hash"] = detail.audit_entry->entry_hash;
    document["audit_previous_hash"] = detail.audit_entry->previous_hash;
  }
  return document;
}

void print_checks(std::ostream& out, const std::vector<store::CheckRecord>& checks) {
  out << "Checks, newest first (" << checks.size() << " shown)\n";
  out << "  " << padded("check", 7) << padded("checked at (UTC)", 22) << padded("SOP Instance UID", 66)
      << padded("patient", 16) << padded("verdict", 19) << padded("review", 16) << "beams  note\n";
  for (const auto& record : checks) {
    out << "  " << padded("#" + std::to_string(record.id), 7) << padded(record.checked_at_utc, 22)
        << padded(record.sop_instance_uid, 66) << padded(record.patient_id, 16)
        << padded(store::to_string(record.verdict), 19) << padded(review_word(record), 16)
        << padded(std::to_string(record.beams.size()), 7) << escape_control_characters(note_of(record))
        << "\n";
  }
}

void print_trends(std::ostream& out, const std::vector<store::TrendGroup>& groups) {
  out << "Trends per machine, energy and technique (difference = 100 (computed - planned) / planned)\n";
  out << "  " << padded("machine", 16) << padded("energy_mv", 11) << padded("technique", 18)
      << padded("beams", 7) << padded("mean_%", 9) << padded("sd_%", 8) << padded("min_%", 9)
      << padded("max_%", 9) << padded("outside_%", 11) << "not_checked\n";
  for (const auto& group : groups) {
    const std::string outside_percent =
        group.share_outside_tolerance ? fixed(*group.share_outside_tolerance * 100.0, 1) : std::string{"-"};
    out << "  " << padded(group.machine, 16) << padded(fixed(group.energy_mv, 1), 11)
        << padded(group.technique, 18) << padded(std::to_string(group.checked_beams), 7)
        << padded(fixed(group.mean_deviation_percent, 2, true), 9)
        << padded(fixed(group.sd_deviation_percent, 2), 8)
        << padded(fixed(group.min_deviation_percent, 2, true), 9)
        << padded(fixed(group.max_deviation_percent, 2, true), 9) << padded(outside_percent, 11)
        << group.not_checked_beams << "\n";
  }
  if (groups.empty()) out << "  (no beams match)\n";
}

namespace {

void print_beams(std::ostream& out, const store::CheckRecord& check) {
  out << "  " << padded("beam", 6) << padded("name", 16) << padded("machine", 16) << padded("MV", 6)
      << padded("technique", 16) << padded("verdict", 19) << padded("diff_%", 9) << padded("tol_%", 7)
      << "reason\n";
  for (const auto& beam : check.beams) {
    out << "  " << padded(std::to_string(beam.beam_number), 6) << padded(beam.beam_name, 16)
        << padded(beam.machine, 16) << padded(fixed(beam.energy_mv, 1), 6) << padded(beam.technique, 16)
        << padded(store::to_string(beam.verdict), 19) << padded(fixed(beam.deviation_percent, 2, true), 9)
        << padded(fixed(beam.tolerance_percent, 1), 7) << escape_control_characters(beam.reason) << "\n";
  }
}

void print_reviews(std::ostream& out, const store::CheckDetail& detail) {
  out << "Review: " << store::to_string(detail.check.review_status);
  if (detail.check.review_status == store::ReviewStatus::open) {
    out << " (record one with: countersign review " << detail.check.id << " --accept|--reject --reason TEXT)";
  }
  out << "\n";
  for (const auto& review : detail.reviews) {
    out << "  #" << review.id << " " << review.reviewed_at_utc << " "
        << (review.beam_number ? "beam " + std::to_string(*review.beam_number) : std::string{"plan"}) << " "
        << store::to_string(review.decision) << " by " << escape_control_characters(review.reviewer.name)
        << " (" << store::to_string(review.reviewer.kind) << ")"
        << (review.follows_review_id ? ", follows #" + std::to_string(*review.follows_review_id)
                                     : std::string{})
        << ": " << escape_control_characters(review.reason) << "\n";
  }
}

}  // namespace

void print_check_detail(std::ostream& out, const store::CheckDetail& detail) {
  const store::CheckRecord& c = detail.check;
  out << "Check #" << c.id << " of plan " << escape_control_characters(c.sop_instance_uid) << " ("
      << escape_control_characters(c.plan_label) << "), patient " << escape_control_characters(c.patient_id)
      << "\n";
  out << "  checked at " << c.checked_at_utc << " on " << escape_control_characters(c.station)
      << " by countersign " << escape_control_characters(c.software_version) << ", from "
      << escape_control_characters(c.source_name) << "\n";
  out << "  verdict " << store::to_string(c.verdict) << "\n";
  out << "  plan SHA-256 " << c.hashes.plan_sha256 << "\n  beam data SHA-256 " << c.hashes.beamdata_sha256
      << "\n  tolerance policy SHA-256 " << c.hashes.policy_sha256 << "\n";
  const std::filesystem::path folder = c.results_folder;
  for (const std::string* file :
       {&c.files.result_json, &c.files.record_html, &c.files.result_sr, &c.files.plan}) {
    if (!file->empty()) out << "  file " << escape_control_characters((folder / *file).string()) << "\n";
  }
  if (detail.audit_entry) {
    out << "  audit entry " << detail.audit_entry->seq << " (SHA-256 " << detail.audit_entry->entry_hash
        << ")\n";
  }
  print_beams(out, c);
  print_reviews(out, detail);
  if (detail.same_plan.size() > 1) {
    out << "Every check of this plan (oldest first):\n";
    for (const auto& other : detail.same_plan) {
      out << "  " << (other.id == c.id ? "* " : "  ") << padded("#" + std::to_string(other.id), 7)
          << padded(other.checked_at_utc, 22) << padded(store::to_string(other.verdict), 19)
          << padded(review_word(other), 16) << escape_control_characters(note_of(other)) << "\n";
    }
  }
  out << "\n" << caution_line << "\n";
}

}  // namespace countersign::cli
