// Plans checked without their CT study because it had not arrived within --study-wait are checked
// again when it does (within --study-keep-days). The first check leaves a marker under
// RESULTS/awaiting-study, written with its files before its record; when a CT image or structure
// set is kept (or at start), each marker whose study is now complete in the study store is taken: the
// plan kept under RESULTS/plans is checked with the study and recorded under a key of its own (the
// plan's content with the structure set it was checked with), so the history holds both checks, the
// new one superseding the one without a CT, and a crash between the record and the marker's removal
// does not record it twice.

#include <countersign/service/plan_intake.hpp>
#include <countersign/service/private_files.hpp>
#include <countersign/util/sha256.hpp>

#include "intake_pending.hpp"

#include <algorithm>
#include <exception>
#include <fstream>
#include <iterator>
#include <sstream>

namespace countersign::service {

namespace fs = std::filesystem;
using Clock = std::chrono::system_clock;

namespace {

constexpr const char* awaiting_folder = "awaiting-study";

// The key the check with the study is recorded under: the plan's content and the structure set.
std::string with_study_key(const std::string& content_sha256, const std::string& structure_set_uid) {
  return util::sha256_hex(content_sha256 + "\nchecked with the study of structure set " + structure_set_uid);
}

// Older than `age` by its modification time (the marker is written once, with the first check).
bool older_than(const fs::path& file, std::chrono::hours age) {
  std::error_code ec;
  const auto written = fs::last_write_time(file, ec);
  return !ec && fs::file_time_type::clock::now() - written > age;
}

std::optional<std::string> read_text(const fs::path& file) {
  std::ifstream in{file, std::ios::binary};
  if (!in) return std::nullopt;
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

}  // namespace

struct PlanIntake::Awaiting {
  fs::path marker;
  std::string plan_file;  // RESULTS-relative
  std::string structure_set_uid;
  std::string content_sha256;
  std::string name;
};

namespace {

std::optional<PlanIntake::Awaiting> read_marker(const fs::path& marker) {
  const auto text = read_text(marker);
  if (!text) return std::nullopt;
  PlanIntake::Awaiting a;
  a.marker = marker;
  std::istringstream lines{*text};
  std::string line;
  while (std::getline(lines, line)) {
    const auto equals = line.find('=');
    if (equals == std::string::npos) continue;
    const std::string key = line.substr(0, equals);
    const std::string value = line.substr(equals + 1);
    if (key == "plan_file") a.plan_file = value;
    if (key == "structure_set_uid") a.structure_set_uid = value;
    if (key == "content_sha256") a.content_sha256 = value;
    if (key == "name") a.name = value;
  }
  const bool safe_file = a.plan_file.rfind("plans/", 0) == 0 && a.plan_file.find("..") == std::string::npos;
  if (!safe_file || !is_safe_uid(a.structure_set_uid) || a.content_sha256.size() != 64) return std::nullopt;
  return a;
}

}  // namespace

fs::path late_study_marker(const fs::path& results, const std::string& content_sha256) {
  return results / awaiting_folder / (content_sha256 + ".txt");
}

std::string late_study_marker_text(const std::string& plan_file, const std::string& structure_set_uid,
                                   const std::string& content_sha256, const std::string& name,
                                   std::int64_t check_id) {
  std::string shown = name;
  std::replace_if(
      shown.begin(), shown.end(), [](char c) { return c == '\n' || c == '\r'; }, ' ');
  return "plan_file=" + plan_file + "\nstructure_set_uid=" + structure_set_uid +
         "\ncontent_sha256=" + content_sha256 + "\nname=" + shown + "\ncheck_id=" + std::to_string(check_id) +
         "\n";
}

void PlanIntake::recheck_late_studies() {
  if (study_store_ == nullptr) return;
  const fs::path folder = folders_.results / awaiting_folder;
  std::error_code ec;
  std::vector<fs::path> markers;
  for (const auto& entry : fs::directory_iterator{folder, ec}) {
    const std::string name = entry.path().filename().string();
    if (entry.is_regular_file(ec) && name.front() != '.' && entry.path().extension() == ".txt")
      markers.push_back(entry.path());
  }
  std::sort(markers.begin(), markers.end());
  std::vector<Pending> pending;
  for (const fs::path& marker : markers) {
    const auto awaiting = read_marker(marker);
    const bool expired = older_than(marker, study_store_->settings().keep);
    if (!awaiting || expired) {
      log_.line("no longer waiting for a late study: " + marker.filename().string() +
                (awaiting ? " (" + awaiting->name + ": its study did not arrive within --study-keep-days)"
                          : " cannot be read"));
      [[maybe_unused]] const auto removed = remove_file_durably(marker);
      continue;
    }
    const StudyLookup lookup = study_store_->find(awaiting->structure_set_uid);
    if (!lookup.arrival.complete()) continue;
    if (auto checked = late_study_check(*awaiting, lookup)) pending.push_back(std::move(*checked));
  }
  if (pending.empty()) return;
  for (std::size_t k = 0; k < pending.size(); ++k) pending[k].index = k;
  std::vector<IntakeResult> results(pending.size());
  commit(pending, results);
  store_->release_claims();
}

// The plan of one marker checked with its study, or nullopt when there is nothing to do now (done
// before, superseded since, claimed by another service, or a failure that is logged).
std::optional<PlanIntake::Pending> PlanIntake::late_study_check(const Awaiting& a,
                                                                const StudyLookup& lookup) {
  const auto drop = [&](const std::string& why) -> std::optional<Pending> {
    log_.line("not checking " + a.name + " again with its study: " + why);
    [[maybe_unused]] const auto removed = remove_file_durably(a.marker);
    return std::nullopt;
  };
  const std::string key = with_study_key(a.content_sha256, a.structure_set_uid);
  const auto failed = [&](const Error& error) -> std::optional<Pending> {
    log_.line("not checking " + a.name + " again with its study now: " + error.message());
    return std::nullopt;  // the marker stays: the next study object or the next start tries again
  };
  auto done = store_->find_by_content(key);
  if (!done) return failed(done.error());
  if (done.value()) return drop("already checked with it (check #" + std::to_string(done.value()->id) + ")");
  auto first = store_->find_by_content(a.content_sha256);
  if (!first) return failed(first.error());
  if (!first.value()) return drop("its check without the study is not in the history");
  if (first.value()->superseded_by_check_id) {
    return drop("check #" + std::to_string(first.value()->id) + " has been replaced since, by check #" +
                std::to_string(*first.value()->superseded_by_check_id));
  }
  const fs::path plan_file = folders_.results / a.plan_file;
  const auto text = read_text(plan_file);
  if (!text) return drop("its kept plan file " + plan_file.string() + " cannot be read");
  auto claimed = store_->try_claim(key);
  if (!claimed) return failed(claimed.error());
  if (!claimed.value()) return std::nullopt;  // another service sharing the history is at it
  Pending p;
  p.started = Clock::now();
  const std::span<const std::byte> bytes{reinterpret_cast<const std::byte*>(text->data()), text->size()};
  std::optional<Expected<PlanOutcome>> processed;
  try {
    processed.emplace(processor_(plan_file, bytes, StudyContext{lookup.folders, "", ""}));
  } catch (const std::exception& e) {
    processed.emplace(Error{ErrorKind::internal, plan_file.string(), "", "",
                            std::string{"internal error while checking: "} + e.what()});
  }
  if (!processed->has_value()) return drop(processed->error().message());
  p.candidate.file = plan_file;
  p.name = a.name;
  p.content_sha256 = key;
  p.plan_sha256 = util::sha256_hex(*text);
  p.outcome = std::move(processed->value());
  p.study_note = "with its CT study";
  p.late_study_marker = a.marker;
  p.kept_plan_file = a.plan_file;
  p.check_without_study_id = first.value()->id;
  return p;
}

}  // namespace countersign::service
