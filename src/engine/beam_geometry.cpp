// Stage 2, geometry: the beam direction of control point 0 and the dose point seen from the source.

#include "stages.hpp"

#include <countersign/util/units.hpp>

#include <cmath>

namespace countersign::engine::stages {

namespace {

namespace attribute = plan::attribute;

constexpr double sad_match_mm = 1.0;  // the plan's SAD may differ from the machine's by rounding only

}  // namespace

StageResult<void> locate_point(const plan::Beam& beam, const ResolvedBeam& resolved, const DosePoint& point,
                               BeamDose& r) {
  const plan::ControlPoint& cp0 = beam.control_points.front();
  if (!cp0.gantry_deg) return missing_value(attribute::gantry_angle, PlanScope::control_point, 0);
  if (!cp0.collimator_deg)
    return missing_value(attribute::beam_limiting_device_angle, PlanScope::control_point, 0);
  if (!cp0.couch_deg) return missing_value(attribute::patient_support_angle, PlanScope::control_point, 0);
  if (!cp0.isocenter_mm) return missing_value(attribute::isocenter_position, PlanScope::control_point, 0);
  r.angles = {*cp0.gantry_deg, *cp0.collimator_deg, *cp0.couch_deg};
  r.isocenter_mm = *cp0.isocenter_mm;

  r.sad_mm = util::cm_to_mm(resolved.machine->sad_cm);
  if (beam.sad_mm && std::abs(*beam.sad_mm - r.sad_mm) > sad_match_mm) {
    CalculationProblem problem;
    problem.kind = ProblemKind::sad_mismatch;
    problem.attribute = attribute::source_axis_distance;
    problem.plan_value = beam.sad_mm;
    problem.library_value = r.sad_mm;
    problem.machine = resolved.machine->name;
    return problem;
  }

  const geometry::BeamFrame frame0(resolved.position, r.angles, r.isocenter_mm, r.sad_mm);
  r.point = frame0.locate(point.point_mm);
  if (r.point.spd_mm <= 0.0) {
    CalculationProblem problem;
    problem.kind = ProblemKind::point_not_in_front_of_source;
    return problem;
  }
  return {};
}

}  // namespace countersign::engine::stages
