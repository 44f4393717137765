#include <countersign/check/calculation_words.hpp>

#include <countersign/util/units.hpp>

#include <fmt/format.h>

namespace countersign::check {

namespace {

using engine::CalculationProblem;
using engine::ProblemKind;

std::string attribute_text(const plan::DicomAttribute& attribute) {
  return fmt::format("{} {}", attribute.name, attribute.tag);
}

std::string missing_sentence(const CalculationProblem& p) {
  std::string where;
  switch (p.scope) {
    case engine::PlanScope::beam:
      where = "from the beam";
      break;
    case engine::PlanScope::control_point:
      where = fmt::format("at control point {}", p.control_point.value_or(0));
      break;
    case engine::PlanScope::fraction_group:
      where = "from the fraction group";
      break;
    case engine::PlanScope::plan:
      where = "from the plan";
      break;
  }
  return fmt::format("{} is absent {}", attribute_text(p.attribute), where);
}

// " at control point N" for a problem seen from a part after control point 0.
std::string at_part(const CalculationProblem& p) {
  return p.control_point ? fmt::format(" at control point {}", *p.control_point) : std::string{};
}

Finding library_finding(Reason reason, const CalculationProblem& p) {
  return {reason,
          fmt::format("Treatment Machine Name (300A,00B2) \"{}\", Radiation Type (300A,00C6) {}, Nominal "
                      "Beam Energy (300A,0114) {:g} MV: {}",
                      p.machine, p.radiation, p.energy_mv.value_or(0.0), p.library_detail)};
}

// Problems of the beam and its data (stage: resolve).
std::optional<Finding> beam_finding(const CalculationProblem& p) {
  switch (p.kind) {
    case ProblemKind::radiation_not_photon:
      return Finding{
          Reason::unsupported_radiation,
          fmt::format("Radiation Type (300A,00C6) is \"{}\"; only PHOTON and ELECTRON beams are checked",
                      p.plan_text)};
    case ProblemKind::dosimeter_unit_not_mu:
      return Finding{
          Reason::unsupported_technique,
          fmt::format("Primary Dosimeter Unit (300A,00B3) is \"{}\"; only MU is supported", p.plan_text)};
    case ProblemKind::missing_plan_value:
      return Finding{Reason::missing_plan_data, missing_sentence(p)};
    case ProblemKind::patient_setup_not_found:
      return Finding{
          Reason::missing_plan_data,
          "Patient Setup (300A,0180) referenced by Referenced Patient Setup Number (300C,006A) is absent "
          "from the plan"};
    case ProblemKind::machine_not_in_library:
      return library_finding(Reason::unknown_machine, p);
    case ProblemKind::energy_not_in_library:
      return library_finding(Reason::unknown_energy, p);
    case ProblemKind::radiation_not_in_library:
      return library_finding(Reason::unsupported_radiation, p);
    case ProblemKind::patient_position_unsupported:
      return Finding{
          Reason::unsupported_patient_position,
          fmt::format("Patient Position (0018,5100) \"{}\" is not supported (HFS, HFP, FFS, FFP are)",
                      p.plan_text)};
    default:
      return std::nullopt;
  }
}

// Problems of accessories (stage: resolve; bolus: stage depth).
std::optional<Finding> accessory_finding(const CalculationProblem& p) {
  switch (p.kind) {
    case ProblemKind::compensator_present:
      return Finding{Reason::unsupported_accessory,
                     "the beam has a compensator (300A,00E3); compensators are not modelled"};
    case ProblemKind::applicator_present:
      return Finding{Reason::unsupported_accessory,
                     "the beam has an applicator (300A,0107); photon applicators are not modelled"};
    case ProblemKind::several_wedges:
      return Finding{Reason::unsupported_accessory, "the beam has more than one wedge (300A,00D1)"};
    case ProblemKind::wedge_not_in_library:
      return Finding{Reason::unknown_accessory,
                     fmt::format("Wedge ID (300A,00D4) \"{}\" is not in the beam data of {} {}", p.plan_text,
                                 p.library_beam, p.library_radiation)};
    case ProblemKind::wedge_kind_mismatch:
      return Finding{
          Reason::unknown_accessory,
          fmt::format("Wedge Type (300A,00D3) \"{}\" does not match the library's kind of wedge \"{}\"",
                      p.plan_text, p.item_id)};
    case ProblemKind::several_block_trays:
      return Finding{Reason::unsupported_accessory,
                     "the beam's blocks name more than one Block Tray ID (300A,00F5)"};
    case ProblemKind::tray_not_in_library:
      return Finding{Reason::unknown_accessory,
                     fmt::format("Block Tray ID (300A,00F5) \"{}\" is not in the beam data of {}",
                                 p.plan_text, p.library_beam)};
    case ProblemKind::several_applicators:
      return Finding{Reason::unsupported_accessory, "the beam has more than one applicator (300A,0107)"};
    case ProblemKind::applicator_not_in_library:
      return Finding{
          Reason::unknown_accessory,
          fmt::format("Applicator ID (300A,0108) \"{}\" is not in the beam data of electron beam {}",
                      p.plan_text, p.library_beam)};
    case ProblemKind::electron_accessory_unsupported:
      return Finding{
          Reason::unsupported_accessory,
          fmt::format("the electron beam has {}; only one cutout (Block Type (300A,00F8) APERTURE) "
                      "in an applicator is modelled",
                      p.plan_text)};
    case ProblemKind::cutout_unusable:
      return Finding{Reason::unsupported_geometry,
                     fmt::format("the cutout's Block Data (300A,0106) of block {} encloses no area",
                                 p.item_id.empty() ? std::string{"?"} : p.item_id)};
    case ProblemKind::cutout_table_missing:
      return Finding{Reason::missing_beam_data,
                     fmt::format("applicator {} of electron beam {} has no cutout table and the beam has a "
                                 "cutout",
                                 p.item_id, p.library_beam)};
    case ProblemKind::several_boli:
      return Finding{
          Reason::unsupported_accessory,
          "the electron beam has more than one bolus (300C,00B0); their thicknesses cannot be placed"};
    case ProblemKind::bolus_thickness_unknown:
      return Finding{
          Reason::bolus_thickness_unknown,
          fmt::format("Bolus ID (300A,00DC) \"{}\": machine {} lists no [[bolus]] of that id, and an "
                      "RT Plan carries no bolus thickness; the depth cannot include it",
                      p.plan_text, p.machine)};
    case ProblemKind::bolus_without_plan_depth:
      if (p.plan_text == "ct") {
        return Finding{Reason::unsupported_accessory,
                       "the beam has a bolus (300C,00B0): the CT's body outline need not include it, so the "
                       "depth from the CT cannot be used"};
      }
      return Finding{
          Reason::unsupported_accessory,
          "the beam has a bolus (300C,00B0) and the plan gives no depth for the dose point to include it"};
    default:
      return std::nullopt;
  }
}

// Problems of geometry, depth, meterset and beam data (stages: geometry to segments).
Finding geometry_finding(const CalculationProblem& p) {
  switch (p.kind) {
    case ProblemKind::sad_mismatch:
      return {Reason::sad_mismatch,
              fmt::format("Source-Axis Distance (300A,00B4) is {:.1f} mm but machine {} has "
                          "{:.1f} mm",
                          p.plan_value.value_or(0.0), p.machine, p.library_value.value_or(0.0))};
    case ProblemKind::point_not_in_front_of_source:
      return {Reason::unsupported_geometry, "the dose point is not in front of the source" + at_part(p)};
    case ProblemKind::aperture_unusable: {
      const bool missing = p.cause && p.cause->kind == ErrorKind::missing_attribute;
      return {missing ? Reason::missing_plan_data : Reason::unsupported_geometry,
              fmt::format("{} at control point {}", p.cause ? p.cause->message() : std::string{},
                          p.control_point.value_or(0))};
    }
    case ProblemKind::equivalent_depth_missing:
      return {
          Reason::missing_plan_data,
          "Beam Dose Point Equivalent Depth (300A,0089) is absent for this dose point; the equivalent depth "
          "was asked for"};
    case ProblemKind::depth_and_ssd_missing:
      return {Reason::missing_plan_data,
              "Beam Dose Point Depth (300A,0088) is absent for this dose point and so is Source to Surface "
              "Distance (300A,0130) at control point 0"};
    case ProblemKind::point_not_below_surface:
      if (p.control_point) {
        return {Reason::unsupported_geometry, "the dose point is not inside the patient" + at_part(p)};
      }
      return {Reason::unsupported_geometry,
              fmt::format("the depth of the dose point is {:.1f} mm: the point is not inside the patient",
                          p.plan_value.value_or(0.0))};
    case ProblemKind::patient_geometry_unusable:
      return {p.plan_text == "point_outside_body" || p.plan_text == "point_outside_ct" ||
                      p.plan_text == "ray_leaves_ct_inside_body" || p.plan_text == "central_axis_misses_body"
                  ? Reason::patient_geometry_unusable
                  : Reason::study_unusable,
              "the ray through the CT cannot be used" + at_part(p) + ": " + p.library_detail};
    case ProblemKind::batho_not_computable:
      return {Reason::missing_beam_data,
              fmt::format(
                  "beam {}: the TMR table gives no positive ratio at a layer depth the Batho factor needs",
                  p.library_beam)};
    case ProblemKind::final_weight_unusable:
      return {Reason::missing_plan_data,
              "Final Cumulative Meterset Weight (300A,010E) is absent or not positive"};
    case ProblemKind::no_delivered_meterset:
      return {Reason::missing_plan_data,
              "a delivered meterset between control points is absent (all weights equal)"};
    case ProblemKind::mlc_transmission_missing:
      return {Reason::missing_beam_data,
              fmt::format("beam {} of machine {} has no mlc_transmission; beams shaped or "
                          "modulated by leaves need it",
                          p.library_beam, p.machine)};
    case ProblemKind::leaf_end_offset_missing:
      return {Reason::missing_beam_data,
              fmt::format("beam {} of machine {} has no mlc_leaf_end_offset_mm; the openings of beams "
                          "shaped by leaves depend on it and the contract gives no default",
                          p.library_beam, p.machine)};
    case ProblemKind::oar_table_missing:
      return {Reason::missing_beam_data,
              fmt::format("beam {} has no OAR table and the point is {:.1f} cm off axis", p.library_beam,
                          util::mm_to_cm(p.plan_value.value_or(0.0)))};
    case ProblemKind::electron_point_off_axis:
      return {
          Reason::unsupported_geometry,
          fmt::format("the dose point is {:.1f} mm off the central axis; electron beams are checked on the "
                      "axis only (the library has no electron off-axis data)",
                      p.plan_value.value_or(0.0))};
    case ProblemKind::electron_calibration_ssd_differs:
      return {Reason::missing_beam_data,
              fmt::format("electron beam {}: the calibration SSD {:g} cm differs from the tables' pdd_ssd_cm "
                          "{:g} cm; the formula needs them equal",
                          p.library_beam, p.plan_value.value_or(0.0), p.library_value.value_or(0.0))};
    case ProblemKind::block_transmission_missing:
      return {Reason::missing_beam_data,
              fmt::format("block {} gives no Block Transmission (300A,0102) and beam {} has no "
                          "block_transmission; the dose behind and beside a block depends on it",
                          p.item_id.empty() ? std::string{"?"} : p.item_id, p.library_beam)};
    default:
      return {Reason::missing_plan_data, "the calculation stopped"};
  }
}

}  // namespace

Finding finding_for(const CalculationProblem& problem) {
  if (auto finding = beam_finding(problem)) return std::move(*finding);
  if (auto finding = accessory_finding(problem)) return std::move(*finding);
  return geometry_finding(problem);
}

std::string depth_description(const engine::DepthUsed& depth) {
  if (!depth.chosen) return {};
  switch (depth.source) {
    case engine::DepthSource::ct_geometric:
      return "from the CT: geometric depth along the ray from the source, body surface to the point";
    case engine::DepthSource::ct_radiological:
      return "from the CT: radiological depth along the ray from the source (lengths times relative electron "
             "density, body surface to the point)";
    case engine::DepthSource::derived_from_dose_point_ssd:
      return "derived: source-to-point distance along the ray minus the plan's Beam Dose Point SSD "
             "(300A,008A)";
    case engine::DepthSource::derived_spd_minus_ssd:
      return "derived: SPD - SSD at control point 0, assuming a flat surface perpendicular to the central "
             "axis";
    default:
      break;
  }
  if (depth.equivalent_by_policy) {
    return fmt::format(
        "the plan's equivalent (radiological) depth, {}, from the plan, not independent: it "
        "differs from the plan's depth beyond the policy limit",
        engine::to_code(depth.source));
  }
  if (depth.kind == engine::DepthChoice::equivalent) {
    return fmt::format("the plan's equivalent (radiological) depth, {}, as asked",
                       engine::to_code(depth.source));
  }
  return fmt::format("the plan's Beam Dose Point Depth (300A,0088), {}", engine::to_code(depth.source));
}

std::string method_reason(const engine::BeamDose& dose) {
  if (dose.method == engine::Method::electron) {
    return "electron form of AAPM TG-71: output x applicator factor x cutout factor x PDD/100 x "
           "effective-SSD inverse square";
  }
  const bool pdd = dose.method == engine::Method::pdd;
  if (!dose.method_basis) return {};
  if (dose.method_basis == engine::MethodBasis::user_choice) {
    return pdd ? "fixed-SSD (PDD) form, chosen by the user" : "isocentric (TMR) form, chosen by the user";
  }
  if (pdd) return "fixed-SSD (PDD) form: Setup Technique (300A,01B0) is FIXED_SSD";
  if (dose.setup_technique.absent()) return "isocentric (TMR) form: Setup Technique (300A,01B0) is absent";
  return "isocentric (TMR) form: Setup Technique (300A,01B0) is " + dose.setup_technique.text;
}

namespace {

std::string cutout_sentence(const engine::ElectronFacts& e) {
  const engine::CutoutSize& c = e.cutout;
  switch (c.method) {
    case engine::CutoutMethod::open_applicator:
      return fmt::format("Cutout: none; the open applicator {} ({:g} cm square) is used.", e.applicator_id,
                         e.applicator_field_cm);
    case engine::CutoutMethod::equivalent_square:
      return fmt::format(
          "Cutout: equivalent square 4A/P = {:.2f} cm (area {:.1f} cm2, perimeter {:.1f} cm), from Block "
          "Data at "
          "the isocentre plane scaled to the tables' SSD {:g} cm.",
          c.equivalent_square_cm, c.area_cm2, c.perimeter_cm, e.standard_ssd_cm);
    case engine::CutoutMethod::square_root_rule:
      return fmt::format(
          "Cutout: elongated, square-root rule CF(X,Y) = sqrt(CF(X) CF(Y)) and PDD(d,X,Y) = sqrt(PDD(d,X) "
          "PDD(d,Y)) with X = {:.2f} cm, Y = {:.2f} cm, the rectangle of the cutout's area {:.1f} cm2 and the "
          "aspect of its principal axes (perimeter {:.1f} cm) at the tables' SSD {:g} cm (4A/P would be {:.2f} "
          "cm).",
          c.side_x_cm, c.side_y_cm, c.area_cm2, c.perimeter_cm, e.standard_ssd_cm, c.equivalent_square_cm);
  }
  return {};
}

// The electron approximations; the numbers are in BeamDose::electron.
std::string electron_sentence(const engine::Approximation& a, const engine::BeamDose& dose) {
  if (!dose.electron) return {};
  const engine::ElectronFacts& e = *dose.electron;
  switch (a.kind) {
    case engine::ApproximationKind::electron_cutout_size:
      return cutout_sentence(e);
    case engine::ApproximationKind::electron_pdd_at_standard_ssd:
      return fmt::format(
          "SSD {:.1f} cm (air gap {:+.1f} cm from the tables' {:.1f} cm): inverse square with applicator "
          "{}'s "
          "effective SSD {:.1f} cm; the PDD of the tables' SSD is used, its change with SSD is ignored.",
          a.ssd_cm, e.air_gap_cm, a.table_ssd_cm, e.applicator_id, e.effective_ssd_cm);
    case engine::ApproximationKind::electron_bolus_added:
      return fmt::format(
          "Bolus {}: {:.2f} cm from the library, taken as water-equivalent, added to the depth below the "
          "skin "
          "({:.2f} cm -> {:.2f} cm); the surface the beam enters is the bolus's, {:.2f} cm nearer the source "
          "than Source to Surface Distance (300A,0130).",
          e.bolus_id, e.bolus_thickness_cm.value_or(0.0), e.skin_depth_cm, e.depth_cm,
          e.bolus_thickness_cm.value_or(0.0));
    case engine::ApproximationKind::electron_normal_incidence:
      return "No CT: the surface is taken perpendicular to the beam (the obliquity is not known), a flat "
             "water-equivalent patient.";
    default:
      return {};
  }
}

}  // namespace

std::string approximation_sentence(const engine::Approximation& a, const engine::BeamDose& dose) {
  switch (a.kind) {
    case engine::ApproximationKind::bolus_in_plan_depth:
      return "Bolus: the plan's depth is taken to include the bolus.";
    case engine::ApproximationKind::derived_depth:
      return "Depth " + depth_description(dose.depth) + ".";
    case engine::ApproximationKind::ssd_from_spd_minus_depth:
      return "SSD derived as SPD - depth: control point 0 has no Source to Surface Distance (300A,0130).";
    case engine::ApproximationKind::modulated_sum:
      return fmt::format(
          "Modulated beam: dose summed over {} parts weighted by meterset; each part uses the equivalent "
          "square "
          "(4A/P) of its aperture, edge penumbra is ignored, a point under the leaves gets the jaw field's "
          "dose "
          "times the MLC transmission ({:.3f}), and jaw transmission is ignored.",
          a.part_count, a.mlc_transmission);
    case engine::ApproximationKind::arc_steps:
      return fmt::format(
          "Arc: split into gantry steps of at most {:.0f} degrees; each step's depth is the beam's depth "
          "shifted "
          "by the change in source-to-point distance and in SSD from control point 0 (where the plan gives "
          "no SSD "
          "per control point, the surface is taken to stay at control point 0's SSD).",
          a.max_step_deg);
    case engine::ApproximationKind::sector_integration:
      return fmt::format(
          "Shaped field: phantom scatter by sector integration ({} sectors of at most {:.0f} degrees) of "
          "scatter-maximum ratios from the TMR and Sp tables, circles as equal-area squares, TMR(d, 0) and "
          "Sp(0) extrapolated linearly through the two smallest fields; parts under leaves or blocks count "
          "with their transmission, jaw transmission is ignored, the OAR multiplies the primary only{}. "
          "The equivalent-square (4A/P) dose is {:.4f} Gy ({:+.2f} %).",
          a.part_count, a.max_step_deg,
          a.beyond_largest_field ? "; scatter from beyond the largest tabulated field is not counted" : "",
          dose.equivalent_square_dose_gy, dose.sector_vs_equivalent_square_percent);
    case engine::ApproximationKind::scatter_at_body_outline:
      return fmt::format(
          "Missing tissue: the scatter was truncated at the body outline in {} part{}: each sector ray "
          "ends where the body ends in the plane through the point perpendicular to the central axis "
          "(scaled to the isocentre plane by SAD/SPD), so the scatter of tissue that is not there is not "
          "counted; the outline in that plane stands for the tissue above and below it, and beyond an "
          "air gap the body is not counted again.",
          a.part_count, a.part_count == 1 ? "" : "s");
    case engine::ApproximationKind::mlc_shape_equivalent_square:
      return "MLC-shaped field: equivalent square from area and perimeter (4A/P), not sector integration.";
    case engine::ApproximationKind::mlc_envelope_as_collimator:
      return "No jaw positions for one axis: the MLC envelope stands in for the collimator field (Sc).";
    case engine::ApproximationKind::blocks_as_outlines:
      return "Blocks: their outlines (Block Data) as stated at the isocentre plane, sharp edges without "
             "penumbra, a uniform transmission (Block Transmission, else the library's block_transmission); "
             "the equivalent square ignores them.";
    case engine::ApproximationKind::mayneord_f_factor:
      return fmt::format(
          "PDD at SSD {:.1f} cm from the table at {:.1f} cm by the Mayneord F factor, which ignores the "
          "change in "
          "phantom scatter (about half a percent).",
          a.ssd_cm, a.table_ssd_cm);
    case engine::ApproximationKind::electron_cutout_size:
    case engine::ApproximationKind::electron_pdd_at_standard_ssd:
    case engine::ApproximationKind::electron_bolus_added:
    case engine::ApproximationKind::electron_normal_incidence:
      return electron_sentence(a, dose);
  }
  return {};
}

std::string medium_description(const engine::BeamDose& dose) {
  if (dose.patient) {
    switch (dose.patient->method) {
      case engine::Heterogeneity::epl:
        return "radiological depth from the CT (effective path length)";
      case engine::Heterogeneity::batho:
        return "Batho power-law correction from the CT, on the homogeneous dose at the CT's geometric depth";
      case engine::Heterogeneity::off:
        return "homogeneous water at the CT's geometric depth (heterogeneity correction off)";
    }
  }
  if (dose.depth.chosen &&
      (dose.depth.equivalent_by_policy || dose.depth.kind == engine::DepthChoice::equivalent)) {
    return "equivalent depth from the plan (not independent), otherwise homogeneous water";
  }
  return "homogeneous water with the plan's depths";
}

CalculationWords describe_calculation(const engine::BeamDose& dose) {
  CalculationWords words;
  words.medium = medium_description(dose);
  if (dose.problem) words.problem = finding_for(*dose.problem);
  words.method_reason = method_reason(dose);
  words.depth_description = depth_description(dose.depth);
  for (const engine::Approximation& a : dose.approximations)
    words.approximations.push_back(approximation_sentence(a, dose));
  return words;
}

}  // namespace countersign::check
