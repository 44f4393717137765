#pragma once

// The real checking pipeline as the services' PlanProcessor: the strict DICOM reader, check_plan
// with a beam-data library loaded once for the whole service, the JSON record (the same document
// `countersign check --json` prints for one plan), the printable HTML record and the structured
// result (DICOM SR) kept with them.

#include <countersign/beamdata/library.hpp>
#include <countersign/check/check_plan.hpp>
#include <countersign/plan/plan.hpp>
#include <countersign/service/plan_outcome.hpp>

#include <filesystem>
#include <memory>
#include <optional>
#include <string>

namespace countersign::service {

// The history fields of one plan check. Technique is "<field category>/<formalism>", e.g.
// "simple/tmr", "modulated/pdd", or "unknown" when no calculation was attempted.
[[nodiscard]] PlanOutcome outcome_from_check(const check::PlanCheck& check, const plan::Plan& plan);

// SHA-256 of the tolerance policy's values (every key and value, not where it came from): recorded
// with each check so that a plan checked again under another policy shows it.
[[nodiscard]] std::string policy_sha256(const check::TolerancePolicy& policy);

// A processor over `library` (shared, never copied per plan) with `options`.
[[nodiscard]] PlanProcessor make_check_processor(std::shared_ptr<const beamdata::Library> library,
                                                 check::CheckOptions options);

// Loads the beam-data library once and returns the processor that checks every plan with it and
// `options` (built from the command line as `check` builds them). Errors name the file and the key.
[[nodiscard]] Expected<PlanProcessor> load_check_processor(const std::filesystem::path& beamdata_dir,
                                                           check::CheckOptions options);

}  // namespace countersign::service
