#pragma once

// A plan checked in a batch, waiting for the batch's commit (internal to the intake:
// plan_intake.cpp and late_study.cpp).

#include <countersign/service/plan_intake.hpp>

#include <chrono>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>

namespace countersign::service {

struct PlanIntake::Pending {
  IntakeCandidate candidate;
  std::string name;
  std::string content_sha256;  // the key of exactly-once (with the plan's UID)
  std::string plan_sha256;     // the file's bytes as they arrived
  PlanOutcome outcome;
  std::chrono::system_clock::time_point started;
  std::size_t index = 0;   // of the candidate in the batch
  std::string study_note;  // with or without its CT study (services with a study store)
  // Checked without its study after the wait: the structure set it names. A marker is written with
  // the check's files, so that the plan is checked again when the study arrives (late_study.cpp).
  std::string awaited_structure_set_uid;
  // A check again with a study that arrived late: the plan is already kept under RESULTS/plans
  // (nothing to move out of the inbox); the marker is removed once the check is recorded.
  std::optional<std::filesystem::path> late_study_marker;
  std::string kept_plan_file;               // RESULTS-relative, as the first check recorded it
  std::int64_t check_without_study_id = 0;  // the check this one supersedes
};

// RESULTS/awaiting-study/<content SHA-256>.txt: the marker of a plan checked without its study.
[[nodiscard]] std::filesystem::path late_study_marker(const std::filesystem::path& results,
                                                      const std::string& content_sha256);
// Its content: the kept plan file, the structure set awaited, the content, the name, the check.
[[nodiscard]] std::string late_study_marker_text(const std::string& plan_file,
                                                 const std::string& structure_set_uid,
                                                 const std::string& content_sha256, const std::string& name,
                                                 std::int64_t check_id);

}  // namespace countersign::service
