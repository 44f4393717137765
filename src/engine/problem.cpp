#include <countersign/engine/problem.hpp>

namespace countersign::engine {

CalculationProblem missing_value(const plan::DicomAttribute& attribute, PlanScope scope,
                                 std::optional<int> control_point) {
  CalculationProblem problem;
  problem.kind = ProblemKind::missing_plan_value;
  problem.attribute = attribute;
  problem.scope = scope;
  problem.control_point = control_point;
  return problem;
}

}  // namespace countersign::engine
