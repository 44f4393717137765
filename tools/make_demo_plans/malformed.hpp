#pragma once

// The malformed-input corpus: each file is a demo plan with exactly one defect, and the manifest
// line says which attribute (keyword and tag) the reader must name in its one-line error.

#include "plan_spec.hpp"

#include <filesystem>
#include <vector>

namespace make_demo_plans {

// Writes <dir>/*.dcm and <dir>/EXPECTED.tsv from the planned demo plans.
void write_malformed_corpus(const std::vector<PlanSpec>& plans, const std::filesystem::path& dir);

}  // namespace make_demo_plans
