#pragma once

// The result of `countersign check` as a plain-text table for the terminal or a log.

#include <countersign/check/check_plan.hpp>

#include <ostream>

namespace countersign::report {

// Writes the plan's header, one row per beam, the reasons of every beam not within tolerance,
// the dose-reference totals and the plan's verdict.
void write_check_text(std::ostream& out, const check::PlanCheck& check);

// One line per plan for a run over several plans: verdict, beams by status, worst deviation, file.
void write_plan_summary_line(std::ostream& out, const check::PlanCheck& check);

}  // namespace countersign::report
