#include <countersign/check/check_plan.hpp>

#include "model_limits.hpp"

#include <countersign/util/assert.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::check {

std::string_view to_code(Status status) {
  switch (status) {
    case Status::within_tolerance:
      return "within_tolerance";
    case Status::outside_tolerance:
      return "outside_tolerance";
    case Status::not_checked:
      return "not_checked";
    case Status::skipped:
      return "skipped";
  }
  return "unknown";
}

PlanCheck::BeamCounts PlanCheck::beam_counts() const {
  BeamCounts counts;
  for (const BeamCheck& b : beams) {
    switch (b.status) {
      case Status::within_tolerance:
        ++counts.within;
        break;
      case Status::outside_tolerance:
        ++counts.outside;
        break;
      case Status::not_checked:
        ++counts.not_checked;
        break;
      case Status::skipped:
        ++counts.skipped;
        break;
    }
  }
  return counts;
}

ExitCode PlanCheck::exit_code() const {
  switch (status) {
    case Status::within_tolerance:
      return ExitCode::all_within_tolerance;
    case Status::outside_tolerance:
      return ExitCode::outside_tolerance;
    case Status::not_checked:
    case Status::skipped:
      return ExitCode::not_checked;
  }
  return ExitCode::not_checked;
}

namespace {

constexpr double same_point_mm = 0.5;

bool same_point(const plan::PointMm& a, const plan::PointMm& b) {
  return std::hypot(a[0] - b[0], a[1] - b[1], a[2] - b[2]) <= same_point_mm;
}

void set_not_checked(BeamCheck& beam, Reason reason, std::string sentence) {
  beam.status = Status::not_checked;
  beam.reason = Finding{reason, std::move(sentence)};
}

std::string describe_extrapolation(const engine::Factor& factor) {
  const beamdata::Lookup& lookup = util::checked(factor.lookup);  // an extrapolated factor has a lookup
  std::string where;
  for (const beamdata::AxisBracket& axis : lookup.axes) {
    if (!axis.extrapolated) continue;
    if (!where.empty()) where += " and ";
    where += fmt::format("{} {:.2f}", axis.axis, axis.query);
  }
  return fmt::format("{} from {} looked up outside the table ({})", lookup.quantity, lookup.table_file,
                     where);
}

// A wedged point off the axis whose off-axis ratio along the gradient is the open field's (no
// orientation table, or no Wedge Orientation in the plan).
bool wedged_off_axis_without_profile(const engine::BeamDose& c) {
  constexpr double on_axis_mm = 1.0;  // as the engine's OAR rule: closer than this is on the axis
  return c.features.wedged && c.features.wedge_profile != engine::WedgeProfile::orientation_table &&
         c.point.off_axis_mm > on_axis_mm;
}

std::string_view missing_wedge_profile(const engine::BeamDose& c) {
  return c.features.wedge_profile == engine::WedgeProfile::no_orientation
             ? "the plan gives no Wedge Orientation (300A,00D8)"
             : "the library has no orientation table for the wedge";
}

FieldCategory categorise(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (c.features.modulated) return FieldCategory::modulated;
  // An electron field shaped by a cutout is a shaped field; the open applicator is a simple one.
  if (c.electron) {
    return c.electron->cutout.method == engine::CutoutMethod::open_applicator ? FieldCategory::simple
                                                                              : FieldCategory::complex;
  }
  const bool off_axis = c.point.off_axis_mm > util::cm_to_mm(policy.simple_max_off_axis_cm);
  const bool asymmetric = c.features.jaw_centre_offset_mm > util::cm_to_mm(policy.simple_max_jaw_offset_cm);
  const bool shaped = c.features.open_to_jaw_area_ratio < policy.simple_min_open_fraction;
  return (off_axis || asymmetric || shaped || c.features.blocks || wedged_off_axis_without_profile(c))
             ? FieldCategory::complex
             : FieldCategory::simple;
}

Medium medium_of(const engine::BeamDose& c, const TolerancePolicy& policy) {
  // With a CT, the densities on the ray decide (not a plan value).
  if (c.patient)
    return ray_is_heterogeneous(c.patient->ray, policy) ? Medium::heterogeneous : Medium::homogeneous;
  const auto& geometric = c.depth.plan_depth_mm;
  const auto& equivalent = c.depth.plan_equivalent_depth_mm;
  if (!geometric || !equivalent || *geometric <= 0.0) return Medium::homogeneous;
  const double difference_percent = 100.0 * std::abs(*equivalent - *geometric) / *geometric;
  return difference_percent > policy.heterogeneous_depth_difference_percent ? Medium::heterogeneous
                                                                            : Medium::homogeneous;
}

// Conditions that keep a computed beam from a verdict; the first found, or nullopt.
std::optional<Finding> safety_findings(const engine::BeamDose& c, const TolerancePolicy& policy) {
  if (const engine::Factor* f = c.first_extrapolated()) {
    return Finding{Reason::table_extrapolated, describe_extrapolation(*f)};
  }
  if (!c.features.modulated) {
    if (!c.point_in_field) {
      return Finding{
          Reason::point_outside_field,
          fmt::format(
              "the dose point ({:.1f}, {:.1f}) mm at the isocentre plane is outside the field opening",
              c.point.iso_plane_x_mm, c.point.iso_plane_y_mm)};
    }
    if (c.edge_distance_mm < util::cm_to_mm(policy.min_edge_distance_cm)) {
      return Finding{
          Reason::point_near_field_edge,
          fmt::format("the dose point is {:.1f} mm from the nearest field edge (policy minimum {:.1f} mm)",
                      c.edge_distance_mm, util::cm_to_mm(policy.min_edge_distance_cm))};
    }
  } else if (std::none_of(c.segments.begin(), c.segments.end(),
                          [](const engine::Segment& s) { return s.point_in_opening; })) {
    return Finding{Reason::point_outside_field,
                   "the dose point is under the leaves or jaws in every segment"};
  } else if (c.edge_meterset_share > policy.max_edge_meterset_share) {
    return Finding{
        Reason::point_near_segment_edges,
        fmt::format("{:.0f} % of the meterset is delivered with the dose point closer than {:.1f} mm "
                    "to a segment's edge (policy maximum {:.0f} %)",
                    100.0 * c.edge_meterset_share, util::cm_to_mm(policy.min_edge_distance_cm),
                    100.0 * policy.max_edge_meterset_share)};
  }
  if (wedged_off_axis_without_profile(c) &&
      c.point.off_axis_mm > util::cm_to_mm(policy.wedge_max_off_axis_cm)) {
    return Finding{
        Reason::unsupported_geometry,
        fmt::format("wedged field with the point {:.1f} cm off axis and {}: the open-field OAR does not "
                    "apply (policy limit {:.1f} cm)",
                    util::mm_to_cm(c.point.off_axis_mm), missing_wedge_profile(c),
                    policy.wedge_max_off_axis_cm)};
  }
  const bool plan_depth_used = !c.patient && c.depth.kind == engine::DepthChoice::planned &&
                               c.depth.source != engine::DepthSource::derived_spd_minus_ssd &&
                               c.depth.source != engine::DepthSource::derived_from_dose_point_ssd;
  if (plan_depth_used && c.depth.spd_minus_ssd_mm &&
      c.point.off_axis_mm <= util::cm_to_mm(policy.depth_check_max_off_axis_cm)) {
    // The geometric depth (not the plan's equivalent depth when that is used instead).
    const double geometric_mm = c.depth.geometric_depth_mm.value_or(c.depth.depth_mm);
    const double discrepancy_mm = geometric_mm - *c.depth.spd_minus_ssd_mm;
    if (std::abs(discrepancy_mm) > util::cm_to_mm(policy.max_depth_discrepancy_cm)) {
      return Finding{
          Reason::inconsistent_depth,
          fmt::format("the plan's depth {:.1f} mm and SPD - SSD {:.1f} mm differ by {:.1f} mm (policy limit "
                      "{:.1f} mm): check the SSD and the dose point",
                      geometric_mm, *c.depth.spd_minus_ssd_mm, discrepancy_mm,
                      util::cm_to_mm(policy.max_depth_discrepancy_cm))};
    }
  }
  return std::nullopt;
}

}  // namespace

void judge_beam(BeamCheck& beam, const TolerancePolicy& policy) {
  if (!beam.calculation) return;
  const engine::BeamDose& c = *beam.calculation;
  if (c.problem) {
    Finding finding = finding_for(*c.problem);
    set_not_checked(beam, finding.reason, std::move(finding.sentence));
    return;
  }
  beam.computed_dose_gy = c.computed_dose_gy;
  beam.category = categorise(c, policy);
  beam.medium = medium_of(c, policy);
  beam.tolerance_percent = policy.tolerance_percent(*beam.category, beam.medium);
  if (!beam.planned_dose_gy || !(*beam.planned_dose_gy > 0.0)) {
    set_not_checked(beam, Reason::no_planned_dose,
                    "the plan gives no positive Beam Dose (300A,0084) for this beam");
    return;
  }
  const double planned = *beam.planned_dose_gy;
  const double computed = c.computed_dose_gy;
  if (computed > 0.0 && beam.meterset_mu) beam.independent_mu = *beam.meterset_mu * planned / computed;
  beam.deviation_percent = 100.0 * (computed - planned) / planned;
  // The uncertainty estimate covers the photon tables; for an electron beam none is claimed.
  if (!c.electron) beam.calc_uncertainty_percent = c.model.uncertainty.combined_percent;
  // The plan contradicts itself, or the CT: a person must look, whatever the dose says. With a CT the
  // plan's SSD and depths are compared with the CT's surface along the ray; without one, with each
  // other on a flat surface.
  if (auto finding = c.patient ? plan_versus_ct_finding(c, policy) : geometry_finding(c, policy)) {
    beam.status = Status::outside_tolerance;
    beam.reason = std::move(*finding);
    return;
  }
  // The edges of the model first: they say why a table would be extrapolated (build-up, small field).
  if (auto finding = model_edge_finding(c, policy)) {
    set_not_checked(beam, finding->reason, std::move(finding->sentence));
    return;
  }
  if (auto finding = safety_findings(c, policy)) {
    set_not_checked(beam, finding->reason, std::move(finding->sentence));
    return;
  }
  if (auto finding = missing_tissue_finding(c, policy)) {
    set_not_checked(beam, finding->reason, std::move(finding->sentence));
    return;
  }
  const double tolerance = util::checked(beam.tolerance_percent);
  const double deviation = *beam.deviation_percent;
  if (std::abs(deviation) <= tolerance) {
    beam.status = Status::within_tolerance;
    beam.reason = {Reason::deviation_within_tolerance,
                   fmt::format("deviation {:+.2f} % within the {} tolerance of {:.1f} %", deviation,
                               to_code(*beam.category), tolerance)};
    return;
  }
  if (beam.point_total_planned_dose_gy && *beam.point_total_planned_dose_gy > 0.0) {
    const double total = *beam.point_total_planned_dose_gy;
    const double share = planned / total;
    const double of_total = 100.0 * (computed - planned) / total;
    const bool own_within = std::abs(deviation) <= policy.small_beam_max_deviation_percent;
    if (share < policy.small_share_fraction && std::abs(of_total) <= tolerance && !own_within) {
      beam.status = Status::outside_tolerance;
      beam.reason = {
          Reason::small_beam_deviation,
          fmt::format(
              "deviation {:+.2f} % of this beam's dose: within tolerance of the point's total ({:+.2f} %) "
              "but beyond the policy's {:.1f} % limit for a small beam's own deviation",
              deviation, of_total, policy.small_beam_max_deviation_percent)};
      return;
    }
    if (share < policy.small_share_fraction && std::abs(of_total) <= tolerance) {
      beam.status = Status::within_tolerance;
      beam.reason = {
          Reason::deviation_within_tolerance_of_point_total,
          fmt::format("deviation {:+.2f} % of this beam's dose, but the beam gives {:.0f} % of the point's "
                      "planned {:.3f} Gy and the difference is {:+.2f} % of that total, within {:.1f} %",
                      deviation, 100.0 * share, total, of_total, tolerance)};
      return;
    }
  }
  beam.status = Status::outside_tolerance;
  beam.reason = {Reason::deviation_exceeds_tolerance,
                 fmt::format("deviation {:+.2f} % exceeds the {} tolerance of {:.1f} %", deviation,
                             to_code(*beam.category), tolerance)};
}

namespace {

bool is_treatment(const plan::Beam& beam) {
  return beam.delivery_type.absent() || beam.delivery_type == plan::DeliveryType::treatment ||
         beam.delivery_type == plan::DeliveryType::continuation;
}

BeamCheck check_one_beam(const plan::Plan& plan, const plan::FractionGroup& group,
                         const plan::ReferencedBeam& rb, const beamdata::Library& library,
                         const CheckOptions& options) {
  BeamCheck out;
  out.fraction_group_number = group.number;
  out.beam_number = rb.beam_number;
  out.meterset_mu = rb.meterset_mu;
  out.planned_dose_gy = rb.dose_gy;
  const plan::Beam* beam = plan.beam(rb.beam_number);
  if (beam == nullptr) {
    set_not_checked(
        out, Reason::missing_plan_data,
        fmt::format("Referenced Beam Number (300C,0006) {} names no beam of the plan", rb.beam_number));
    return out;
  }
  out.beam_name = beam->name;
  if (!is_treatment(*beam)) {
    out.status = Status::skipped;
    out.reason = {Reason::setup_beam,
                  fmt::format("Treatment Delivery Type (300A,00CE) is {}: listed, not judged",
                              beam->delivery_type.text)};
    return out;
  }
  if (!rb.meterset_mu || !(*rb.meterset_mu > 0.0)) {
    out.status = Status::skipped;
    out.reason = {Reason::no_meterset, "no Beam Meterset (300A,0086) or zero MU: listed, not judged"};
    return out;
  }
  const std::optional<engine::DosePoint> point = engine::select_dose_point(plan, *beam, rb);
  if (!point) {
    set_not_checked(
        out, Reason::no_dose_point,
        "no Beam Dose Specification Point (300A,0082), no dose reference with a final coefficient of 1 "
        "for this beam, and not exactly one dose reference with coordinates");
    return out;
  }
  if (options.study.problem) {
    set_not_checked(out, options.study.problem->reason, options.study.problem->sentence);
    return out;
  }
  out.calculation = engine::compute_beam_dose(plan, *beam, rb, *point, library, options.engine);
  out.words = describe_calculation(*out.calculation);
  return out;
}

void judge_plan(PlanCheck& check) {
  const BeamCheck* first_not_checked = nullptr;
  const BeamCheck* first_outside = nullptr;
  std::size_t within = 0;
  for (const BeamCheck& b : check.beams) {
    if (b.status == Status::not_checked && first_not_checked == nullptr) first_not_checked = &b;
    if (b.status == Status::outside_tolerance && first_outside == nullptr) first_outside = &b;
    if (b.status == Status::within_tolerance) ++within;
  }
  const auto about = [](const BeamCheck& b) {
    return fmt::format("beam {} ({}): {}", b.beam_number, b.beam_name, b.reason.sentence);
  };
  if (first_not_checked != nullptr) {
    check.status = Status::not_checked;
    check.reason = {first_not_checked->reason.reason, about(*first_not_checked)};
  } else if (first_outside != nullptr) {
    check.status = Status::outside_tolerance;
    check.reason = {Reason::deviation_exceeds_tolerance, about(*first_outside)};
  } else if (within > 0) {
    check.status = Status::within_tolerance;
    check.reason = {Reason::deviation_within_tolerance,
                    fmt::format("all {} judged beam(s) within tolerance", within)};
  } else {
    check.status = Status::not_checked;
    check.reason = {Reason::nothing_to_check, check.beams.empty()
                                                  ? "the plan has no fraction group with beams"
                                                  : "no beam of the plan could be judged"};
  }
}

std::optional<double> final_coefficient(const plan::Beam& beam, int reference_number) {
  if (beam.control_points.empty()) return std::nullopt;
  for (const plan::DoseReferenceCoefficient& c : beam.control_points.back().dose_reference_coefficients) {
    if (c.dose_reference_number == reference_number) return c.cumulative_coefficient;
  }
  return std::nullopt;
}

void total_dose_references(const plan::Plan& plan, const beamdata::Library& library,
                           const CheckOptions& options, PlanCheck& check) {
  for (const plan::FractionGroup& group : plan.fraction_groups) {
    for (const plan::DoseReference& ref : plan.dose_references) {
      DoseReferenceCheck total;
      total.fraction_group_number = group.number;
      total.number = ref.number;
      total.description = ref.description;
      total.point_mm = ref.point_mm;
      bool all_computed = true;
      for (const plan::ReferencedBeam& rb : group.beams) {
        const plan::Beam* beam = plan.beam(rb.beam_number);
        if (beam == nullptr || !is_treatment(*beam) || !rb.meterset_mu || !(*rb.meterset_mu > 0.0)) continue;
        const std::optional<double> coefficient = final_coefficient(*beam, ref.number);
        if (!coefficient) continue;
        Contribution part;
        part.beam_number = rb.beam_number;
        part.coefficient = *coefficient;
        part.planned_dose_gy = rb.dose_gy.value_or(0.0) * *coefficient;
        if (!rb.dose_gy) part.problem = Finding{Reason::no_planned_dose, "no Beam Dose (300A,0084)"};
        if (!ref.point_mm) {
          part.problem = Finding{Reason::no_dose_point, "the dose reference has no coordinates"};
        } else {
          // Reuse the beam's own calculation when its dose point is this reference's point.
          const auto own = std::find_if(check.beams.begin(), check.beams.end(), [&](const BeamCheck& b) {
            return b.fraction_group_number == group.number && b.beam_number == rb.beam_number &&
                   b.calculation && same_point(b.calculation->dose_point.point_mm, *ref.point_mm);
          });
          std::optional<engine::BeamDose> fresh;
          if (own == check.beams.end()) {
            const engine::DosePoint point{*ref.point_mm, engine::DosePointSource::dose_reference, ref.number};
            fresh = engine::compute_beam_dose(plan, *beam, rb, point, library, options.engine);
          }
          const engine::BeamDose& computed = fresh ? *fresh : util::checked(own->calculation);
          if (computed.problem) {
            part.problem = finding_for(*computed.problem);
          } else if (const engine::Factor* f = computed.first_extrapolated()) {
            part.problem = Finding{Reason::table_extrapolated, describe_extrapolation(*f)};
          } else {
            part.computed_dose_gy = computed.computed_dose_gy;
          }
        }
        if (part.problem) all_computed = false;
        total.planned_dose_gy += part.planned_dose_gy;
        total.contributions.push_back(std::move(part));
      }
      if (total.contributions.empty()) continue;
      if (all_computed) {
        double sum = 0.0;
        for (const Contribution& p : total.contributions) sum += *p.computed_dose_gy;
        total.computed_dose_gy = sum;
        if (total.planned_dose_gy > 0.0) {
          total.deviation_percent = 100.0 * (sum - total.planned_dose_gy) / total.planned_dose_gy;
        }
      } else {
        const auto bad = std::find_if(total.contributions.begin(), total.contributions.end(),
                                      [](const Contribution& p) { return p.problem.has_value(); });
        total.note = fmt::format("no computed total: beam {}: {}", bad->beam_number, bad->problem->sentence);
      }
      check.dose_references.push_back(std::move(total));
    }
  }
}

}  // namespace

PlanCheck check_plan(const plan::Plan& plan, const beamdata::Library& library, const CheckOptions& options) {
  PlanCheck check;
  check.source_file = plan.source_file;
  check.sop_instance_uid = plan.sop_instance_uid;
  check.patient_id = plan.patient_id;
  check.patient_name = plan.patient_name;
  check.plan_label = plan.label;
  check.approval_status = plan.approval_status;
  check.warnings = plan.warnings;
  check.beamdata_root = library.root.string();
  check.beamdata_sha256 = library.sha256_hex;
  check.options = options;
  check.options.engine.equivalent_depth_switch_percent =
      options.policy.patient_plan_equivalent_depth_switch_percent;

  for (const plan::FractionGroup& group : plan.fraction_groups) {
    const bool beam_level = group.beam_dose_meaning != plan::BeamDoseMeaning::fraction_level;
    for (const plan::ReferencedBeam& rb : group.beams) {
      BeamCheck beam = check_one_beam(plan, group, rb, library, check.options);
      if (beam.calculation && !beam_level) {
        judge_beam(beam, options.policy);
        if (!beam.calculation->problem) {
          set_not_checked(
              beam, Reason::planned_dose_not_beam_level,
              "Beam Dose Meaning (300A,008B) is FRACTION_LEVEL: the plan's beam dose is not this beam's own "
              "dose; see the dose reference totals");
        }
      }
      check.beams.push_back(std::move(beam));
    }
  }
  // A beam is pending when it has a calculation and no verdict yet (check_one_beam leaves the
  // sentence empty then).
  const auto pending = [](const BeamCheck& b) {
    return b.calculation.has_value() && b.reason.sentence.empty();
  };
  // The planned dose at each beam's point from all beams of its fraction group aimed at the same point.
  for (BeamCheck& beam : check.beams) {
    if (!pending(beam)) continue;
    double total = 0.0;
    for (const BeamCheck& other : check.beams) {
      if (other.fraction_group_number != beam.fraction_group_number || !other.calculation ||
          !other.planned_dose_gy)
        continue;
      if (same_point(other.calculation->dose_point.point_mm, beam.calculation->dose_point.point_mm)) {
        total += *other.planned_dose_gy;
      }
    }
    beam.point_total_planned_dose_gy = total;
  }
  for (BeamCheck& beam : check.beams) {
    if (pending(beam)) judge_beam(beam, options.policy);
  }
  total_dose_references(plan, library, check.options, check);
  judge_plan(check);
  return check;
}

}  // namespace countersign::check
