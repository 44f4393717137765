// `audit verify`: the chain recomputed, every entry compared with the rows as they are now, and the
// files of the checks compared with the hashes recorded. Findings come in the order of the trail.

#include <countersign/store/audit.hpp>
#include <countersign/util/sha256.hpp>

#include <nlohmann/json.hpp>

#include <algorithm>
#include <fstream>
#include <limits>
#include <map>
#include <set>
#include <sstream>

namespace countersign::store {

namespace fs = std::filesystem;
using nlohmann::json;

std::string_view to_string(FindingKind kind) {
  switch (kind) {
    case FindingKind::entry_changed:
      return "entry_changed";
    case FindingKind::chain_broken:
      return "chain_broken";
    case FindingKind::entry_missing:
      return "entry_missing";
    case FindingKind::record_changed:
      return "record_changed";
    case FindingKind::record_deleted:
      return "record_deleted";
    case FindingKind::record_without_entry:
      return "record_without_entry";
    case FindingKind::file_differs:
      return "file_differs";
    case FindingKind::file_missing:
      return "file_missing";
    case FindingKind::head_missing:
      return "head_missing";
    case FindingKind::head_differs:
      return "head_differs";
  }
  return "entry_changed";
}

namespace {

std::string short_hash(const std::string& hash) { return hash.size() > 12 ? hash.substr(0, 12) + "…" : hash; }

std::string shown(const json& value) { return value.dump(-1, ' ', false, json::error_handler_t::replace); }

// Up to three differences between what an entry recorded and the rows now, as "key is now X,
// recorded Y" phrases; nested objects and beams are followed.
void differences(const json& recorded, const json& now, const std::string& prefix,
                 std::vector<std::string>& out) {
  if (out.size() >= 3) return;
  if (recorded.is_object() && now.is_object()) {
    std::set<std::string> keys;
    for (const auto& [key, value] : recorded.items()) keys.insert(key);
    for (const auto& [key, value] : now.items()) keys.insert(key);
    for (const std::string& key : keys) {
      differences(recorded.contains(key) ? recorded.at(key) : json(),
                  now.contains(key) ? now.at(key) : json(), prefix.empty() ? key : prefix + "." + key, out);
    }
    return;
  }
  if (recorded.is_array() && now.is_array()) {
    if (recorded.size() != now.size()) {
      out.push_back(prefix + ": " + std::to_string(now.size()) + " now, " + std::to_string(recorded.size()) +
                    " recorded");
      return;
    }
    for (std::size_t i = 0; i < recorded.size(); ++i)
      differences(recorded[i], now[i], prefix + "[" + std::to_string(i) + "]", out);
    return;
  }
  if (recorded != now) out.push_back(prefix + " is now " + shown(now) + ", recorded " + shown(recorded));
}

std::string what_differs(const std::string& recorded_content, const std::string& now_content) {
  const json recorded = json::parse(recorded_content, nullptr, false);
  const json now = json::parse(now_content, nullptr, false);
  std::vector<std::string> found;
  if (!recorded.is_discarded() && !now.is_discarded()) differences(recorded, now, "", found);
  if (found.empty()) return "its content differs from what was recorded";
  std::string text;
  for (const std::string& one : found) text += (text.empty() ? "" : "; ") + one;
  return text;
}

std::string check_name(const CheckRecord& check) {
  return "check #" + std::to_string(check.id) + " (plan " + check.sop_instance_uid + ", " +
         check.checked_at_utc + ")";
}

std::string entry_name(const AuditEntry& entry) {
  std::string name = "entry " + std::to_string(entry.seq) + " (" + std::string{to_string(entry.kind)};
  if (entry.kind == AuditKind::check && entry.check_id) name += " #" + std::to_string(*entry.check_id);
  if (entry.kind == AuditKind::review && entry.review_id) {
    name +=
        " #" + std::to_string(*entry.review_id) + " of check #" + std::to_string(entry.check_id.value_or(0));
  }
  return name + ")";
}

std::optional<std::string> file_sha256(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) return std::nullopt;
  util::Sha256 hash;
  std::string buffer(1 << 16, '\0');
  while (in) {
    in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
    hash.update(std::string_view{buffer.data(), static_cast<std::size_t>(in.gcount())});
  }
  return hash.hex_digest();
}

class Verifier {
 public:
  Verifier(const AuditTrail& trail, const std::optional<FileScope>& scope) : trail_(trail), scope_(scope) {
    for (const CheckRecord& check : trail.checks) checks_[check.id] = &check;
    for (const Review& review : trail.reviews) reviews_[review.id] = &review;
    if (scope) {
      std::error_code ec;
      scope_folder_ = fs::weakly_canonical(scope->results_folder, ec);
    }
  }

  AuditReport run(const std::optional<AuditHead>& anchor) {
    report_.entries = trail_.entries.size();
    report_.checks = trail_.checks.size();
    report_.reviews = trail_.reviews.size();
    chain();
    uncovered();
    if (anchor) compare_anchor(*anchor);
    if (!trail_.entries.empty())
      report_.head = AuditHead{trail_.entries.back().seq, trail_.entries.back().entry_hash};
    // The first finding is the earliest in the trail; records without an entry come at its end.
    std::stable_sort(report_.problems.begin(), report_.problems.end(),
                     [](const AuditFinding& a, const AuditFinding& b) {
                       const auto key = [](const AuditFinding& f) {
                         return f.seq == 0 ? std::numeric_limits<std::int64_t>::max() : f.seq;
                       };
                       return key(a) < key(b);
                     });
    if (scope_) note_unchecked_files();
    return report_;
  }

 private:
  void add(FindingKind kind, std::int64_t seq, std::optional<std::int64_t> check_id,
           std::optional<std::int64_t> review_id, std::string message) {
    report_.problems.push_back(AuditFinding{kind, seq, check_id, review_id, std::move(message)});
  }

  void chain() {
    std::int64_t expected = 1;
    std::string previous = genesis_hash;
    for (const AuditEntry& entry : trail_.entries) {
      const bool gap = entry.seq != expected;
      for (std::int64_t missing = expected; missing < entry.seq; ++missing) {
        add(FindingKind::entry_missing, missing, std::nullopt, std::nullopt,
            "entry " + std::to_string(missing) + " is missing: it was deleted from the audit trail");
      }
      if (!gap && entry.previous_hash != previous) {
        add(FindingKind::chain_broken, entry.seq, entry.check_id, entry.review_id,
            entry_name(entry) + " does not follow the entry before it: it names " +
                short_hash(entry.previous_hash) + ", that entry's hash is " + short_hash(previous));
      }
      if (chain_hash(entry.previous_hash, entry.content) != entry.entry_hash) {
        add(FindingKind::entry_changed, entry.seq, entry.check_id, entry.review_id,
            entry_name(entry) + " was changed after it was written: its hash does not match its content");
      }
      previous = entry.entry_hash;
      expected = entry.seq + 1;
      compare_rows(entry);
    }
  }

  void compare_rows(const AuditEntry& entry) {
    if (entry.kind == AuditKind::check) {
      compare_check(entry, entry.check_id.value_or(0), entry.content);
    } else if (entry.kind == AuditKind::review) {
      const auto found = reviews_.find(entry.review_id.value_or(0));
      if (found == reviews_.end()) {
        add(FindingKind::record_deleted, entry.seq, entry.check_id, entry.review_id,
            entry_name(entry) + ": the review is gone from the history");
        return;
      }
      covered_reviews_.insert(found->first);
      const std::string now = review_content(*found->second);
      if (now != entry.content) {
        add(FindingKind::record_changed, entry.seq, entry.check_id, entry.review_id,
            entry_name(entry) +
                ": the review was changed after it was recorded: " + what_differs(entry.content, now));
      }
    } else {
      const json imported = json::parse(entry.content, nullptr, false);
      if (imported.is_discarded() || !imported.contains("checks")) return;  // entry_changed says enough
      for (const json& check : imported.at("checks")) {
        compare_check(entry, check.value("check_id", std::int64_t{0}), shown(check));
      }
    }
  }

  void compare_check(const AuditEntry& entry, std::int64_t check_id, const std::string& recorded) {
    const auto found = checks_.find(check_id);
    if (found == checks_.end()) {
      add(FindingKind::record_deleted, entry.seq, check_id, std::nullopt,
          entry_name(entry) + ": check #" + std::to_string(check_id) + " is gone from the history");
      return;
    }
    const CheckRecord& check = *found->second;
    covered_checks_.insert(check_id);
    const std::string now =
        entry.kind == AuditKind::import ? shown(json::parse(check_content(check))) : check_content(check);
    if (now != recorded) {
      add(FindingKind::record_changed, entry.seq, check_id, std::nullopt,
          entry_name(entry) + ": " + check_name(check) +
              " was changed after it was recorded: " + what_differs(recorded, now));
    }
    // Files are compared with the hashes the entry recorded, not with the (perhaps edited) row.
    if (entry.kind == AuditKind::check) compare_files(entry, check, recorded);
  }

  [[nodiscard]] bool in_scope(const CheckRecord& check) const {
    if (!scope_) return false;
    if (scope_->every_check) return true;
    std::error_code ec;
    return fs::weakly_canonical(check.results_folder, ec) == scope_folder_ &&
           (scope_->station.empty() || scope_->station == check.station);
  }

  void compare_files(const AuditEntry& entry, const CheckRecord& check, const std::string& recorded_content) {
    if (!in_scope(check)) {
      ++files_elsewhere_;
      return;
    }
    const json recorded = json::parse(recorded_content, nullptr, false);
    if (recorded.is_discarded()) return;
    const json& files = recorded["files"];
    const json& hashes = recorded["hashes"];
    const std::pair<const char*, const char*> pairs[] = {{"result_json", "result_sha256"},
                                                         {"record_html", "record_sha256"},
                                                         {"result_sr", "sr_sha256"},
                                                         {"plan", "plan_sha256"}};
    for (const auto& [file_key, hash_key] : pairs) {
      const std::string relative = files.value(file_key, "");
      const std::string expected = hashes.value(hash_key, "");
      if (relative.empty() || expected.empty()) continue;
      const fs::path file = scope_->results_folder / relative;
      ++report_.files_checked;
      const auto actual = file_sha256(file);
      if (!actual) {
        add(FindingKind::file_missing, entry.seq, check.id, std::nullopt,
            entry_name(entry) + ": " + check_name(check) + ": " + file.string() + " is missing");
      } else if (*actual != expected) {
        add(FindingKind::file_differs, entry.seq, check.id, std::nullopt,
            entry_name(entry) + ": " + check_name(check) + ": " + file.string() +
                " differs from the file recorded (SHA-256 " + short_hash(*actual) + ", recorded " +
                short_hash(expected) + ")");
      }
    }
  }

  void uncovered() {
    for (const CheckRecord& check : trail_.checks) {
      if (!covered_checks_.contains(check.id)) {
        add(FindingKind::record_without_entry, 0, check.id, std::nullopt,
            check_name(check) +
                " has no entry in the audit trail: its entry was deleted, or the check was added "
                "to the database by other means");
      }
    }
    for (const Review& review : trail_.reviews) {
      if (!covered_reviews_.contains(review.id)) {
        add(FindingKind::record_without_entry, 0, review.check_id, review.id,
            "review #" + std::to_string(review.id) + " of check #" + std::to_string(review.check_id) +
                " has no entry in the audit trail");
      }
    }
  }

  void compare_anchor(const AuditHead& anchor) {
    const auto found = std::find_if(trail_.entries.begin(), trail_.entries.end(),
                                    [&](const AuditEntry& e) { return e.seq == anchor.seq; });
    if (found == trail_.entries.end()) {
      add(FindingKind::head_missing, anchor.seq, std::nullopt, std::nullopt,
          "entry " + std::to_string(anchor.seq) +
              ", the last one this results folder recorded, is no longer in "
              "the audit trail: entries were deleted from its end");
    } else if (found->entry_hash != anchor.entry_hash) {
      add(FindingKind::head_differs, anchor.seq, found->check_id, found->review_id,
          entry_name(*found) + " is not the entry this results folder recorded (hash " +
              short_hash(found->entry_hash) + ", recorded " + short_hash(anchor.entry_hash) + ")");
    }
  }

  // Result files in the folder that no check names: an interrupted batch, or a deleted record.
  void note_unchecked_files() {
    if (files_elsewhere_ > 0) {
      report_.notes.push_back(std::to_string(files_elsewhere_) +
                              " check(s) were recorded by another station or into another results folder: "
                              "their files were not checked here");
    }
    std::set<std::string> named;
    for (const CheckRecord& check : trail_.checks) {
      if (in_scope(check)) named.insert(check.files.result_json);
    }
    std::error_code ec;
    for (const auto& folder : fs::directory_iterator{scope_->results_folder, ec}) {
      const std::string uid = folder.path().filename().string();
      const bool uid_folder = !uid.empty() && uid.find_first_not_of("0123456789.") == std::string::npos;
      if (!uid_folder || !folder.is_directory(ec)) continue;
      for (const auto& file : fs::directory_iterator{folder.path(), ec}) {
        const std::string name = file.path().filename().string();
        if (file.path().extension() != ".json" || name.front() == '.') continue;
        const std::string relative = uid + "/" + name;
        if (!named.contains(relative)) {
          report_.notes.push_back(relative +
                                  " is not in the history: a batch interrupted before it was recorded "
                                  "(checked again later under another number), or a deleted record");
        }
      }
    }
  }

  const AuditTrail& trail_;
  const std::optional<FileScope>& scope_;
  fs::path scope_folder_;
  std::map<std::int64_t, const CheckRecord*> checks_;
  std::map<std::int64_t, const Review*> reviews_;
  std::set<std::int64_t> covered_checks_;
  std::set<std::int64_t> covered_reviews_;
  std::size_t files_elsewhere_ = 0;
  AuditReport report_;
};

}  // namespace

AuditReport verify_trail(const AuditTrail& trail, const std::optional<FileScope>& files,
                         const std::optional<AuditHead>& anchor) {
  return Verifier{trail, files}.run(anchor);
}

}  // namespace countersign::store
