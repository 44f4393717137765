#include <countersign/check/self_test.hpp>

#include <countersign/beamdata/table.hpp>
#include <countersign/check/synthetic_plans.hpp>
#include <countersign/geometry/beam_frame.hpp>
#include <countersign/geometry/patient_position.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::check {

namespace {

// An expected deviation this close to the tolerance is not counted either way: the check's own
// rounding of doses and weights decides it (0.01 percentage points).
constexpr double boundary_points = 0.01;

bool flagged(Status status) { return status == Status::outside_tolerance || status == Status::not_checked; }

// Reasons that say the library cannot describe a clean synthetic case: the case is excluded, not failed.
bool library_limitation(Reason reason) {
  return reason == Reason::missing_beam_data || reason == Reason::table_extrapolated ||
         reason == Reason::unsupported_accessory || reason == Reason::ssd_out_of_range ||
         reason == Reason::extended_distance || reason == Reason::small_field ||
         reason == Reason::point_in_buildup;
}

const BeamCheck& only_beam(const PlanCheck& check) { return check.beams.front(); }

// A rule's decision: must the error be flagged, and why.
struct Expectation {
  bool must_flag = false;
  std::optional<double> expected_deviation_percent;
  std::string rule;
};

Expectation by_deviation(double expected_percent, double tolerance_percent, const std::string& basis) {
  Expectation e;
  e.expected_deviation_percent = expected_percent;
  e.must_flag = std::abs(expected_percent) > tolerance_percent + boundary_points;
  e.rule =
      fmt::format("{}: {:+.2f} % against the tolerance {:.1f} %", basis, expected_percent, tolerance_percent);
  return e;
}

Expectation by_distance(double mismatch_mm, const TolerancePolicy& policy, const std::string& basis) {
  Expectation e;
  e.must_flag = std::abs(mismatch_mm) > policy.geometry_consistency_max_mm;
  e.rule = fmt::format("{}: the plan's distances disagree by {:.1f} mm against the limit {:.1f} mm", basis,
                       std::abs(mismatch_mm), policy.geometry_consistency_max_mm);
  return e;
}

// The dose per MU the library's factors give with the baseline's inputs changed by `change`.
double formula_ratio(const engine::BeamDose& c, const beamdata::BeamData& data,
                     const std::function<void(engine::DoseInputs&)>& change) {
  engine::DoseInputs in = c.inputs;
  change(in);
  return engine::compute_point_dose(data, in).dose_per_mu_cgy / c.dose.dose_per_mu_cgy;
}

// The ray length from the source to the plan's point under another patient position (geometry module).
double ray_length_mm(const engine::BeamDose& c, geometry::PatientPosition position) {
  const geometry::BeamFrame frame(position, c.angles, c.isocenter_mm, c.sad_mm);
  return frame.locate(c.dose_point.point_mm).ray_length_mm;
}

double jaw_tolerance(const plan::Beam& beam, double size_mm, const BeamCheck& baseline,
                     const TolerancePolicy& policy) {
  const plan::DevicePositions* x = beam.control_points.front().device(plan::DeviceType::asymx);
  if (x == nullptr || x->positions_mm.size() != 2) return *baseline.tolerance_percent;
  const double centre_mm = std::abs(x->positions_mm[0] + x->positions_mm[1] + size_mm) / 2.0;
  const bool complex = baseline.category == FieldCategory::complex ||
                       centre_mm > util::cm_to_mm(policy.simple_max_jaw_offset_cm);
  return policy.tolerance_percent(complex ? FieldCategory::complex : *baseline.category, baseline.medium);
}

Expectation expect(const InjectedError& error, const Injection& injection, const plan::Plan& plan,
                   const BeamCheck& baseline, const TolerancePolicy& policy) {
  const engine::BeamDose& c = *baseline.calculation;
  const double b = *baseline.deviation_percent / 100.0;
  const double tol = *baseline.tolerance_percent;
  const double x = error.size / 100.0;
  const auto dev = [&](double ratio) { return 100.0 * ((1.0 + b) * ratio - 1.0); };
  switch (error.kind) {
    case ErrorKind::meterset:
      return by_deviation(dev(1.0 + x), tol, "dose is proportional to MU");
    case ErrorKind::beam_dose:
      return by_deviation(dev(1.0 / (1.0 + x)), tol,
                          "the ratio is inversely proportional to the planned dose");
    case ErrorKind::ssd:
    case ErrorKind::depth:
      return by_distance(error.size, policy, "one distance changed, the others kept");
    case ErrorKind::point_position:
      return by_distance(error.size, policy, "the point moved along the ray, the plan's depth and SSD kept");
    case ErrorKind::patient_position:
      return by_distance(ray_length_mm(c, geometry::PatientPosition::hfp) - c.point.ray_length_mm, policy,
                         "HFP moves the point relative to the source (IEC 61217)");
    case ErrorKind::energy:
      if (injection.energy_to == nullptr)
        return {true, std::nullopt, "an energy the library lacks must be flagged"};
      return by_deviation(dev(formula_ratio(c, *injection.energy_to, [](engine::DoseInputs&) {})), tol,
                          fmt::format("the {} tables with the same inputs", injection.energy_to->id));
    case ErrorKind::wedge:
      if (injection.wedge_removed != nullptr)
        return by_deviation(dev(1.0 / c.dose.factors.wedge.value), tol, "the wedge factor no longer applies");
      return by_deviation(
          dev(formula_ratio(c, *c.beam_data,
                            [&](engine::DoseInputs& in) { in.wedge = injection.wedge_added; })),
          tol, "the added wedge's factor");
    case ErrorKind::tray:
      if (injection.tray_removed != nullptr)
        return by_deviation(dev(1.0 / injection.tray_removed->factor), tol,
                            "the tray factor no longer applies");
      // A tray makes the field "complex" (blocks): judged with that category's tolerance.
      return by_deviation(dev(injection.tray_added->factor),
                          policy.tolerance_percent(FieldCategory::complex, baseline.medium),
                          "the added tray's factor");
    case ErrorKind::jaw: {
      const geometry::JawOpening& jaws = c.aperture.jaws();
      const double w_cm = util::mm_to_cm(jaws.width_mm() + error.size);
      const double l_cm = util::mm_to_cm(jaws.length_mm());
      const double s_cm = 2.0 * w_cm * l_cm / (w_cm + l_cm);  // Sterling 4A/P of the new rectangle
      const double ratio = formula_ratio(c, *c.beam_data, [&](engine::DoseInputs& in) {
        in.collimator_field_cm = s_cm;
        in.field_at_isocentre_cm = s_cm;
      });
      return by_deviation(dev(ratio), jaw_tolerance(plan.beams.front(), error.size, baseline, policy),
                          fmt::format("Sc, Sp and TMR/PDD of the {:.2f} cm equivalent square", s_cm));
    }
  }
  return {};
}

// Which kinds a case gets: sized, and discrete changes on static open-field cases only (the rule
// needs the static formula's inputs).
bool applies(ErrorKind kind, const engine::BeamDose& c) {
  const bool static_jaws = !c.features.modulated && !c.aperture.shaped_by_mlc();
  switch (kind) {
    case ErrorKind::energy:
      return static_jaws && !c.features.wedged && !c.features.tray;
    case ErrorKind::wedge:
    case ErrorKind::jaw:
      return static_jaws && c.point.off_axis_mm < 1.0;
    case ErrorKind::tray:
      return static_jaws;
    default:
      return true;
  }
}

SelfTestRow judge(const std::string& name, const InjectedError& error, Injection injection,
                  const BeamCheck& baseline, const beamdata::Library& library, const CheckOptions& options) {
  SelfTestRow row;
  row.case_name = name;
  row.error = error;
  row.change = std::move(injection.description);
  const Expectation e = expect(error, injection, injection.plan, baseline, options.policy);
  row.must_flag = e.must_flag;
  row.rule = e.rule;
  row.expected_deviation_percent = e.expected_deviation_percent;
  const PlanCheck modified = check_plan(injection.plan, library, options);
  const BeamCheck& after = only_beam(modified);
  row.status = after.status;
  row.reason_code = std::string(reason_code(after.reason.reason));
  row.reason = after.reason.sentence;
  row.deviation_percent = after.deviation_percent;
  row.tolerance_percent = after.tolerance_percent;
  const bool is_flagged = flagged(after.status);
  row.passed = !(row.must_flag && !is_flagged);
  if (!row.passed) {
    row.verdict = "MISSED: the rule says it must be flagged, the check passed it";
  } else if (row.must_flag) {
    row.verdict = "caught";
  } else {
    row.verdict =
        is_flagged ? "flagged though within its rule (stricter than needed)" : "within its rule, not flagged";
  }
  return row;
}

void add_sensitivity(SelfTestReport& report) {
  for (const ErrorKind kind : all_error_kinds) {
    Sensitivity s;
    s.kind = kind;
    for (const SelfTestRow& row : report.rows) {
      if (!row.error || row.error->kind != kind) continue;
      ++s.injected;
      const double size = std::abs(row.error->size);
      if (flagged(row.status)) {
        ++s.flagged;
        if (!size_unit(kind).empty() && (!s.smallest_flagged || size < *s.smallest_flagged))
          s.smallest_flagged = size;
      } else if (!size_unit(kind).empty() && (!s.largest_missed || size > *s.largest_missed)) {
        s.largest_missed = size;
      }
    }
    report.sensitivity.push_back(s);
  }
}

// The clean plan: checked once to learn its dose, given that dose as its planned Beam Dose, written
// and read back, and checked again. Returns the read-back plan and its baseline when it passes.
std::optional<std::pair<plan::Plan, BeamCheck>> clean_case(const SyntheticPlan& synthetic,
                                                           const beamdata::Library& library,
                                                           const CheckOptions& options,
                                                           const PlanRoundTrip& round_trip,
                                                           SelfTestReport& report) {
  SelfTestRow row;
  row.case_name = synthetic.name;
  row.change = "none (the clean plan, written and read back)";
  plan::Plan plan = synthetic.plan;
  const BeamCheck first = only_beam(check_plan(plan, library, options));
  std::optional<plan::Plan> read;
  if (first.computed_dose_gy) {
    plan.fraction_groups.front().beams.front().dose_gy = *first.computed_dose_gy;
    auto back = round_trip(plan);
    if (back) {
      read = std::move(back).value();
    } else {
      row.verdict = "FAILED: the written plan could not be read back: " + back.error().message();
    }
  }
  const BeamCheck baseline = read ? only_beam(check_plan(*read, library, options)) : first;
  row.status = baseline.status;
  row.reason_code = std::string(reason_code(baseline.reason.reason));
  row.reason = baseline.reason.sentence;
  row.deviation_percent = baseline.deviation_percent;
  row.tolerance_percent = baseline.tolerance_percent;
  row.passed = read && baseline.status == Status::within_tolerance;
  row.excluded = !row.passed && row.verdict.empty() && library_limitation(baseline.reason.reason);
  if (row.passed) {
    row.verdict = "the clean plan passes";
    ++report.clean_plans;
  } else if (row.excluded) {
    row.verdict = "excluded: the library cannot describe this case (" + row.reason_code + ")";
  } else if (row.verdict.empty()) {
    row.verdict = "FAILED: the clean plan is flagged";
  }
  report.rows.push_back(row);
  if (!row.passed) return std::nullopt;
  return std::make_pair(std::move(*read), baseline);
}

}  // namespace

std::vector<double> sizes_tried(ErrorKind kind) {
  switch (kind) {
    case ErrorKind::meterset:
      return {1.0, -1.0, 2.0, -2.0, 3.0, -3.0, 5.0, -5.0, 10.0, 20.0};
    case ErrorKind::beam_dose:
      return {1.0, 2.0, 3.0, 5.0, 10.0};
    case ErrorKind::ssd:
      return {1.0, 2.0, 5.0, 10.0, 20.0, -20.0};
    case ErrorKind::depth:
      return {1.0, 2.0, 5.0, 10.0, -50.0};
    case ErrorKind::jaw:
      return {5.0, 10.0, 20.0, 40.0, -30.0, -45.0};
    case ErrorKind::point_position:
      return {1.0, 2.0, 5.0, 10.0, 20.0};
    default:
      return {0.0};
  }
}

SelfTestReport run_self_test(const beamdata::Library& library, const CheckOptions& options,
                             const PlanRoundTrip& round_trip) {
  SelfTestReport report;
  report.library_root = library.root.string();
  report.library_sha256 = library.sha256_hex;
  for (const SyntheticPlan& synthetic : synthetic_plans(library)) {
    const auto clean = clean_case(synthetic, library, options, round_trip, report);
    if (!clean) continue;
    const auto& [plan, baseline] = *clean;
    for (const ErrorKind kind : all_error_kinds) {
      if (!applies(kind, *baseline.calculation)) continue;
      for (const double size : sizes_tried(kind)) {
        const InjectedError error{kind, size};
        std::optional<Injection> injection = inject_error(plan, 1, 1, error, library);
        if (!injection) continue;
        report.rows.push_back(
            judge(synthetic.name, error, std::move(*injection), baseline, library, options));
        ++report.injected;
      }
    }
  }
  add_sensitivity(report);
  report.failures = static_cast<std::size_t>(std::count_if(
      report.rows.begin(), report.rows.end(), [](const SelfTestRow& r) { return !r.passed && !r.excluded; }));
  return report;
}

}  // namespace countersign::check
