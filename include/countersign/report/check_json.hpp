#pragma once

// The result of `countersign check` as JSON (keys documented in the README; changing one is
// a breaking change). Every key carries its unit; a value that does not exist is null, never 0.

#include <countersign/check/check_plan.hpp>

#include <nlohmann/json.hpp>

#include <vector>

namespace countersign::report {

// One plan: {"source_file", ..., "status", "reason", "explanation", "beams", "dose_references",
// "beamdata_sha256", ...}.
[[nodiscard]] nlohmann::json check_to_json(const check::PlanCheck& check);

// One beam of a plan check, with geometry, factors and their provenance.
[[nodiscard]] nlohmann::json beam_check_to_json(const check::BeamCheck& beam);

// One table lookup: {"table_file", "quantity", "value", "extrapolated", "axes": [...]}.
[[nodiscard]] nlohmann::json lookup_to_json(const beamdata::Lookup& lookup);

// The whole run: {"plans": [...], "errors": [...], "skipped_files": [...], "exit_code", "caution"};
// errors are the one-line messages of files that could not be read; skipped_files, the files of the
// folders given that hold no RT Plan, each with why; "caution" is report::caution_text().
[[nodiscard]] nlohmann::json check_run_to_json(const std::vector<check::PlanCheck>& checks,
                                               const std::vector<std::string>& errors, int exit_code,
                                               const std::vector<std::string>& skipped_files = {});

}  // namespace countersign::report
