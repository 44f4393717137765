#include <countersign/report/explain_report.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

namespace countersign::report {

namespace {

std::string_view label(engine::SensitivityQuantity quantity) {
  switch (quantity) {
    case engine::SensitivityQuantity::depth:
      return "depth";
    case engine::SensitivityQuantity::ssd:
      return "SSD";
    case engine::SensitivityQuantity::field_size:
      return "field-size";
  }
  return "";
}

// Parts the engine counted (a part outside the jaws of a modulated beam gets no calculation).
bool delivers_dose(const engine::Segment& s) { return s.dose.dose_per_mu_cgy > 0.0; }

FormalismDose with_method(const beamdata::BeamData& data, const std::vector<engine::DoseInputs>& parts,
                          engine::Method method) {
  FormalismDose result;
  result.method = method;
  for (std::size_t i = 0; i < parts.size(); ++i) {
    engine::DoseInputs in = parts[i];
    in.method = method;
    engine::PointDose dose = engine::compute_point_dose(data, in);
    result.dose_cgy += dose.dose_cgy;
    if (i == 0) result.first_part = std::move(dose);
  }
  return result;
}

}  // namespace

std::string reconciliation_sentence(const engine::Reconciliation& r) {
  const std::string_view name = label(r.quantity);
  if (r.change_cm) {
    return fmt::format(
        "{} {} change of {:+.2f} cm ({:.2f} -> {:.2f} cm) alone would make the computed dose equal the "
        "planned "
        "dose{}",
        r.quantity == engine::SensitivityQuantity::ssd ? "an" : "a", name, *r.change_cm, r.baseline_cm,
        r.baseline_cm + *r.change_cm, r.extrapolated ? "; that value lies outside the beam-data tables" : "");
  }
  return fmt::format("no {} change between {:+.2f} cm and {:+.2f} cm reconciles the two doses", name,
                     r.search_min_change_cm, r.search_max_change_cm);
}

const check::BeamCheck* find_beam(const check::PlanCheck& check, int beam_number,
                                  std::optional<int> fraction_group) {
  for (const check::BeamCheck& b : check.beams) {
    if (b.beam_number == beam_number && (!fraction_group || b.fraction_group_number == *fraction_group))
      return &b;
  }
  return nullptr;
}

BeamExplanation explain_beam(const check::BeamCheck& beam, const engine::SensitivityLimits& limits) {
  BeamExplanation e;
  if (!beam.calculation || !beam.calculation->dose_computed) {
    e.sensitivity_note = "no dose was computed for this beam";
    return e;
  }
  if (beam.calculation->beam_data == nullptr) {
    e.sensitivity_note =
        "the search for what would reconcile the doses covers photon beams; the factors "
        "above are this beam's";
    return e;
  }
  const engine::BeamDose& c = *beam.calculation;
  for (const engine::Segment& s : c.segments) {
    if (delivers_dose(s)) e.parts.push_back(s.inputs);
  }
  if (e.parts.empty()) {
    e.sensitivity_note = "no part of the beam delivers dose at the point";
    return e;
  }
  e.tmr = with_method(*c.beam_data, e.parts, engine::Method::tmr);
  e.pdd = with_method(*c.beam_data, e.parts, engine::Method::pdd);
  if (e.tmr->dose_cgy > 0.0)
    e.formalism_difference_percent = 100.0 * (e.pdd->dose_cgy - e.tmr->dose_cgy) / e.tmr->dose_cgy;
  if (!beam.planned_dose_gy) {
    e.sensitivity_note = "the plan gives no Beam Dose (300A,0084) to reconcile with";
  } else if (!(*beam.planned_dose_gy > 0.0)) {
    e.sensitivity_note = "the planned Beam Dose (300A,0084) is not positive";
  } else {
    e.sensitivity = engine::reconcile(*c.beam_data, e.parts, util::gy_to_cgy(*beam.planned_dose_gy), limits);
  }
  return e;
}

}  // namespace countersign::report
