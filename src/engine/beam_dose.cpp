#include <countersign/engine/beam_dose.hpp>

#include <countersign/beamdata/conversions.hpp>
#include <countersign/util/units.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace countersign::engine {

namespace {

constexpr double on_axis_limit_mm = 1.0;  // closer than this to the axis, an absent OAR table is harmless
constexpr double sad_match_mm = 1.0;

Finding missing(const std::string& attribute, const std::string& context) {
  return Finding{Reason::missing_plan_data, attribute + " is absent " + context};
}

std::optional<Finding> check_accessories(const plan::Beam& beam, const beamdata::BeamData& data,
                                         const beamdata::WedgeData*& wedge, const beamdata::TrayData*& tray) {
  if (!beam.compensators.empty()) {
    return Finding{Reason::unsupported_accessory,
                   "the beam has a compensator (300A,00E3); compensators are not modelled"};
  }
  if (!beam.applicators.empty()) {
    return Finding{Reason::unsupported_accessory,
                   "the beam has an applicator (300A,0107); photon applicators are not modelled"};
  }
  if (beam.wedges.size() > 1) {
    return Finding{Reason::unsupported_accessory, "the beam has more than one wedge (300A,00D1)"};
  }
  if (beam.wedges.size() == 1) {
    const plan::Wedge& w = beam.wedges.front();
    wedge = data.wedge(w.id);
    if (wedge == nullptr) {
      return Finding{Reason::unknown_accessory,
                     fmt::format("Wedge ID (300A,00D4) \"{}\" is not in the beam data of {} {}", w.id,
                                 data.id, data.radiation)};
    }
    const bool plan_dynamic = w.type == plan::WedgeType::dynamic;
    if (plan_dynamic != (wedge->kind == beamdata::WedgeKind::dynamic)) {
      return Finding{
          Reason::unknown_accessory,
          fmt::format("Wedge Type (300A,00D3) \"{}\" does not match the library's kind of wedge \"{}\"",
                      w.type.text, w.id)};
    }
  }
  std::string tray_id;
  for (const plan::Accessory& block : beam.blocks) {
    if (block.id.empty()) continue;
    if (!tray_id.empty() && block.id != tray_id) {
      return Finding{Reason::unsupported_accessory,
                     "the beam's blocks name more than one Block Tray ID (300A,00F5)"};
    }
    tray_id = block.id;
  }
  if (!tray_id.empty()) {
    tray = data.tray(tray_id);
    if (tray == nullptr) {
      return Finding{
          Reason::unknown_accessory,
          fmt::format("Block Tray ID (300A,00F5) \"{}\" is not in the beam data of {}", tray_id, data.id)};
    }
  }
  return std::nullopt;
}

Reason reason_for_geometry_error(const Error& e) {
  return e.kind == ErrorKind::missing_attribute ? Reason::missing_plan_data : Reason::unsupported_geometry;
}

// Signed gantry (or other) rotation from a to b, following the stated direction when there is one.
double rotation_step_deg(double from_deg, double to_deg, plan::RotationDirection direction) {
  double step = std::fmod(to_deg - from_deg, 360.0);
  if (direction == plan::RotationDirection::cw) {
    if (step < 0.0) step += 360.0;
  } else if (direction == plan::RotationDirection::cc) {
    if (step > 0.0) step -= 360.0;
  } else {
    if (step > 180.0) step -= 360.0;
    if (step < -180.0) step += 360.0;
  }
  return step;
}

double wrap_deg(double angle_deg) {
  double a = std::fmod(angle_deg, 360.0);
  return a < 0.0 ? a + 360.0 : a;
}

// A control point between a and b at fraction t: angles and device positions interpolated linearly.
plan::ControlPoint interpolate(const plan::ControlPoint& a, const plan::ControlPoint& b, double t) {
  plan::ControlPoint c = a;
  if (a.gantry_deg && b.gantry_deg) {
    c.gantry_deg = wrap_deg(*a.gantry_deg +
                            t * rotation_step_deg(*a.gantry_deg, *b.gantry_deg, a.gantry_rotation.value));
  }
  if (a.collimator_deg && b.collimator_deg) {
    c.collimator_deg =
        wrap_deg(*a.collimator_deg +
                 t * rotation_step_deg(*a.collimator_deg, *b.collimator_deg, a.collimator_rotation.value));
  }
  if (a.couch_deg && b.couch_deg) {
    c.couch_deg =
        wrap_deg(*a.couch_deg + t * rotation_step_deg(*a.couch_deg, *b.couch_deg, a.couch_rotation.value));
  }
  for (plan::DevicePositions& d : c.devices) {
    const plan::DevicePositions* other = b.device(d.type);
    if (other == nullptr || other->positions_mm.size() != d.positions_mm.size()) continue;
    for (std::size_t i = 0; i < d.positions_mm.size(); ++i) {
      d.positions_mm[i] += t * (other->positions_mm[i] - d.positions_mm[i]);
    }
  }
  if (a.ssd_mm && b.ssd_mm) c.ssd_mm = *a.ssd_mm + t * (*b.ssd_mm - *a.ssd_mm);
  return c;
}

struct PartPlan {
  int from_control_point = 0;
  double meterset_mu = 0.0;
  const plan::ControlPoint* control_point = nullptr;  // the part's geometry: a plan control point ...
  std::optional<plan::ControlPoint> interpolated;     // ... or one interpolated at the middle of the part
};

// Whether nothing that shapes or aims the beam changes between two control points.
bool same_geometry(const plan::ControlPoint& a, const plan::ControlPoint& b) {
  if (a.gantry_deg != b.gantry_deg || a.collimator_deg != b.collimator_deg || a.couch_deg != b.couch_deg ||
      a.isocenter_mm != b.isocenter_mm || a.ssd_mm != b.ssd_mm || a.devices.size() != b.devices.size()) {
    return false;
  }
  for (const plan::DevicePositions& d : a.devices) {
    const plan::DevicePositions* other = b.device(d.type);
    if (other == nullptr || other->positions_mm != d.positions_mm) return false;
  }
  return true;
}

}  // namespace

const Factor* BeamDose::first_extrapolated() const {
  for (const Segment& s : segments) {
    if (const Factor* f = s.dose.first_extrapolated()) return f;
  }
  return nullptr;
}

BeamDose compute_beam_dose(const plan::Plan& plan, const plan::Beam& beam,
                           const plan::ReferencedBeam& referenced, const DosePoint& point,
                           const beamdata::Library& library, const EngineOptions& options) {
  BeamDose r;
  r.dose_point = point;
  const auto fail = [&r](Finding finding) {
    r.problem = std::move(finding);
    return r;
  };

  if (beam.radiation_type != plan::RadiationType::photon) {
    return fail({Reason::unsupported_radiation,
                 fmt::format("Radiation Type (300A,00C6) is \"{}\"; only PHOTON beams are checked",
                             beam.radiation_type.text)});
  }
  if (!beam.primary_dosimeter_unit.absent() && beam.primary_dosimeter_unit != plan::DosimeterUnit::mu) {
    return fail({Reason::unsupported_technique,
                 fmt::format("Primary Dosimeter Unit (300A,00B3) is \"{}\"; only MU is supported",
                             beam.primary_dosimeter_unit.text)});
  }
  if (beam.control_points.empty())
    return fail(missing("Control Point Sequence (300A,0111)", "from the beam"));
  const plan::ControlPoint& cp0 = beam.control_points.front();
  if (!cp0.nominal_energy_mv) return fail(missing("Nominal Beam Energy (300A,0114)", "at control point 0"));
  if (!referenced.meterset_mu) return fail(missing("Beam Meterset (300A,0086)", "from the fraction group"));
  r.meterset_mu = *referenced.meterset_mu;

  const beamdata::BeamMatch match =
      library.match(beam.machine_name, beam.radiation_type.text, *cp0.nominal_energy_mv);
  r.machine = match.machine;
  if (match.beam == nullptr) {
    Reason reason = Reason::unknown_energy;
    if (match.failure == beamdata::MatchFailure::unknown_machine) reason = Reason::unknown_machine;
    if (match.failure == beamdata::MatchFailure::unknown_radiation) reason = Reason::unsupported_radiation;
    return fail(
        {reason,
         fmt::format("Treatment Machine Name (300A,00B2) \"{}\", Radiation Type (300A,00C6) {}, Nominal "
                     "Beam Energy (300A,0114) {:g} MV: {}",
                     beam.machine_name, beam.radiation_type.text, *cp0.nominal_energy_mv,
                     match.explanation)});
  }
  r.beam_data = match.beam;
  const beamdata::BeamData& data = *match.beam;

  const beamdata::WedgeData* wedge = nullptr;
  const beamdata::TrayData* tray = nullptr;
  if (auto finding = check_accessories(beam, data, wedge, tray)) return fail(std::move(*finding));
  r.features.wedged = wedge != nullptr;
  r.features.tray = tray != nullptr;
  r.features.blocks = !beam.blocks.empty();

  const plan::PatientSetup* setup = nullptr;
  if (beam.referenced_patient_setup_number) {
    setup = plan.patient_setup(*beam.referenced_patient_setup_number);
  } else if (plan.patient_setups.size() == 1) {
    setup = &plan.patient_setups.front();
  }
  if (setup == nullptr) {
    return fail(missing("Patient Setup (300A,0180) referenced by Referenced Patient Setup Number (300C,006A)",
                        "from the plan"));
  }
  r.patient_position = geometry::supported_patient_position(setup->patient_position.value);
  if (!r.patient_position) {
    return fail({Reason::unsupported_patient_position,
                 fmt::format("Patient Position (0018,5100) \"{}\" is not supported (HFS, HFP, FFS, FFP are)",
                             setup->patient_position.text)});
  }

  if (!cp0.gantry_deg) return fail(missing("Gantry Angle (300A,011E)", "at control point 0"));
  if (!cp0.collimator_deg)
    return fail(missing("Beam Limiting Device Angle (300A,0120)", "at control point 0"));
  if (!cp0.couch_deg) return fail(missing("Patient Support Angle (300A,0122)", "at control point 0"));
  if (!cp0.isocenter_mm) return fail(missing("Isocenter Position (300A,012C)", "at control point 0"));
  r.angles = {*cp0.gantry_deg, *cp0.collimator_deg, *cp0.couch_deg};
  r.isocenter_mm = *cp0.isocenter_mm;

  r.sad_mm = util::cm_to_mm(r.machine->sad_cm);
  if (beam.sad_mm && std::abs(*beam.sad_mm - r.sad_mm) > sad_match_mm) {
    return fail({Reason::sad_mismatch,
                 fmt::format("Source-Axis Distance (300A,00B4) is {:.1f} mm but machine {} has {:.1f} mm",
                             *beam.sad_mm, r.machine->name, r.sad_mm)});
  }

  const geometry::BeamFrame frame0(*r.patient_position, r.angles, r.isocenter_mm, r.sad_mm);
  r.point = frame0.locate(point.point_mm);
  if (r.point.spd_mm <= 0.0) {
    return fail({Reason::unsupported_geometry, "the dose point is not in front of the source"});
  }
  auto aperture0 = geometry::build_aperture(beam, cp0);
  if (!aperture0)
    return fail(
        {reason_for_geometry_error(aperture0.error()), aperture0.error().message() + " at control point 0"});
  r.aperture = std::move(aperture0.value());
  r.point_in_field = r.aperture.contains(r.point.iso_plane_x_mm, r.point.iso_plane_y_mm);
  r.edge_distance_mm = r.aperture.distance_to_edge_mm(r.point.iso_plane_x_mm, r.point.iso_plane_y_mm);
  r.features.jaw_centre_offset_mm = r.aperture.jaws().centre_offset_mm();
  const double jaw_area_mm2 = r.aperture.jaws().width_mm() * r.aperture.jaws().length_mm();
  r.features.open_to_jaw_area_ratio = jaw_area_mm2 > 0.0 ? r.aperture.area_mm2() / jaw_area_mm2 : 0.0;
  r.ssd_mm = cp0.ssd_mm;

  // Depth.
  DepthUsed& depth = r.depth;
  depth.kind = options.depth;
  const PlanDistances distances = plan_distances_for(beam, referenced, point);
  if (distances.distances != nullptr) {
    depth.plan_depth_mm = distances.distances->depth_mm;
    depth.plan_equivalent_depth_mm = distances.distances->equivalent_depth_mm;
  }
  if (r.ssd_mm) depth.spd_minus_ssd_mm = r.point.spd_mm - *r.ssd_mm;
  if (options.depth == DepthChoice::equivalent) {
    if (!depth.plan_equivalent_depth_mm) {
      return fail(missing("Beam Dose Point Equivalent Depth (300A,0089)",
                          "for this dose point; the equivalent depth was asked for"));
    }
    depth.depth_mm = *depth.plan_equivalent_depth_mm;
    depth.source = distances.layout;
    depth.description =
        fmt::format("the plan's equivalent (radiological) depth, {}, as asked", to_code(distances.layout));
  } else if (depth.plan_depth_mm) {
    depth.depth_mm = *depth.plan_depth_mm;
    depth.source = distances.layout;
    depth.description =
        fmt::format("the plan's Beam Dose Point Depth (300A,0088), {}", to_code(distances.layout));
  } else if (distances.distances != nullptr && distances.distances->ssd_mm) {
    depth.depth_mm = r.point.ray_length_mm - *distances.distances->ssd_mm;
    depth.source = DepthSource::derived_from_dose_point_ssd;
    depth.description =
        "derived: source-to-point distance along the ray minus the plan's Beam Dose Point SSD (300A,008A)";
  } else if (depth.spd_minus_ssd_mm) {
    depth.depth_mm = *depth.spd_minus_ssd_mm;
    depth.source = DepthSource::derived_spd_minus_ssd;
    depth.description =
        "derived: SPD - SSD at control point 0, assuming a flat surface perpendicular to the central axis";
  } else {
    return fail(
        missing("Beam Dose Point Depth (300A,0088)",
                "for this dose point and so is Source to Surface Distance (300A,0130) at control point 0"));
  }
  if (depth.depth_mm <= 0.0) {
    return fail({Reason::unsupported_geometry,
                 fmt::format("the depth of the dose point is {:.1f} mm: the point is not inside the patient",
                             depth.depth_mm)});
  }
  const bool depth_derived = depth.source == DepthSource::derived_spd_minus_ssd ||
                             depth.source == DepthSource::derived_from_dose_point_ssd;
  if (!beam.boli.empty()) {
    if (depth_derived) {
      return fail(
          {Reason::unsupported_accessory,
           "the beam has a bolus (300C,00B0) and the plan gives no depth for the dose point to include it"});
    }
    r.approximations.push_back("Bolus: the plan's depth is taken to include the bolus.");
  }
  if (depth_derived) r.approximations.push_back("Depth " + depth.description + ".");

  // Formalism.
  switch (options.method) {
    case MethodChoice::tmr:
      r.method = Method::tmr;
      r.method_reason = "isocentric (TMR) form, chosen by the user";
      break;
    case MethodChoice::pdd:
      r.method = Method::pdd;
      r.method_reason = "fixed-SSD (PDD) form, chosen by the user";
      break;
    case MethodChoice::by_setup_technique:
      if (setup->setup_technique == plan::SetupTechnique::fixed_ssd) {
        r.method = Method::pdd;
        r.method_reason = "fixed-SSD (PDD) form: Setup Technique (300A,01B0) is FIXED_SSD";
      } else {
        r.method = Method::tmr;
        r.method_reason =
            setup->setup_technique.absent()
                ? "isocentric (TMR) form: Setup Technique (300A,01B0) is absent"
                : "isocentric (TMR) form: Setup Technique (300A,01B0) is " + setup->setup_technique.text;
      }
      break;
  }
  const double ssd0_mm = r.ssd_mm.value_or(r.point.spd_mm - depth.depth_mm);
  if (!r.ssd_mm && r.method == Method::pdd) {
    r.approximations.push_back(
        "SSD derived as SPD - depth: control point 0 has no Source to Surface Distance (300A,0130).");
  }

  // The parts of the meterset: one per pair of control points between which meterset is delivered,
  // arcs split into gantry steps of at most max_arc_step_deg.
  const double final_weight = beam.final_cumulative_meterset_weight.value_or(
      beam.control_points.back().cumulative_meterset_weight.value_or(0.0));
  if (!(final_weight > 0.0))
    return fail(missing("Final Cumulative Meterset Weight (300A,010E)", "or not positive"));
  std::vector<PartPlan> parts;
  bool moving = false;
  if (beam.control_points.size() == 1) {
    parts.push_back({cp0.index, r.meterset_mu, &cp0, std::nullopt});
  }
  for (std::size_t i = 0; i + 1 < beam.control_points.size(); ++i) {
    const plan::ControlPoint& a = beam.control_points[i];
    const plan::ControlPoint& b = beam.control_points[i + 1];
    if (!a.cumulative_meterset_weight || !b.cumulative_meterset_weight) {
      return fail(
          missing("Cumulative Meterset Weight (300A,0134)", fmt::format("at control point {}", b.index)));
    }
    const double weight = *b.cumulative_meterset_weight - *a.cumulative_meterset_weight;
    if (weight <= 1e-9 * final_weight) continue;
    const double gantry_step = (a.gantry_deg && b.gantry_deg)
                                   ? rotation_step_deg(*a.gantry_deg, *b.gantry_deg, a.gantry_rotation.value)
                                   : 0.0;
    if (std::abs(gantry_step) > 1e-6) moving = true;
    const int steps =
        std::max(1, static_cast<int>(std::ceil(std::abs(gantry_step) / max_arc_step_deg - 1e-9)));
    const double part_mu = r.meterset_mu * weight / final_weight / steps;
    if (steps == 1 && same_geometry(a, b)) {
      parts.push_back({a.index, part_mu, &a, std::nullopt});
      continue;
    }
    for (int k = 0; k < steps; ++k) {
      parts.push_back({a.index, part_mu, nullptr, interpolate(a, b, (k + 0.5) / steps)});
    }
  }
  if (parts.empty())
    return fail(missing("a delivered meterset between control points", "(all weights equal)"));
  r.features.modulated = moving || parts.size() > 1;

  if (r.features.modulated && !data.mlc_transmission) {
    const bool needs_transmission = std::any_of(parts.begin(), parts.end(), [](const PartPlan& p) {
      return (p.interpolated ? *p.interpolated : *p.control_point).device(plan::DeviceType::mlcx) != nullptr;
    });
    if (needs_transmission) {
      return fail({Reason::missing_beam_data,
                   fmt::format("beam {} of machine {} has no mlc_transmission; modulated beams need it",
                               data.id, r.machine->name)});
    }
  }

  r.segments.reserve(parts.size());
  double total_cgy = 0.0;
  for (const PartPlan& part : parts) {
    const plan::ControlPoint& cp = part.interpolated ? *part.interpolated : *part.control_point;
    Segment s;
    s.from_control_point = part.from_control_point;
    s.meterset_mu = part.meterset_mu;
    s.angles = {cp.gantry_deg.value_or(r.angles.gantry_deg),
                cp.collimator_deg.value_or(r.angles.collimator_deg),
                cp.couch_deg.value_or(r.angles.couch_deg)};
    const geometry::BeamFrame frame(*r.patient_position, s.angles, cp.isocenter_mm.value_or(r.isocenter_mm),
                                    r.sad_mm);
    s.point = frame.locate(point.point_mm);
    if (s.point.spd_mm <= 0.0) {
      return fail({Reason::unsupported_geometry,
                   fmt::format("the dose point is not in front of the source at control point {}",
                               s.from_control_point)});
    }
    // Control point 0's aperture is already built; other parts build their own.
    std::optional<geometry::Aperture> own_aperture;
    if (&cp != &cp0 && !same_geometry(cp, cp0)) {
      auto built = geometry::build_aperture(beam, cp);
      if (!built) {
        return fail({reason_for_geometry_error(built.error()),
                     fmt::format("{} at control point {}", built.error().message(), s.from_control_point)});
      }
      own_aperture = std::move(built.value());
    }
    const geometry::Aperture* aperture = own_aperture ? &*own_aperture : &r.aperture;
    s.jaws = aperture->jaws();
    s.open_area_mm2 = aperture->area_mm2();
    s.open_perimeter_mm = aperture->perimeter_mm();
    const double x = s.point.iso_plane_x_mm;
    const double y = s.point.iso_plane_y_mm;
    s.point_in_opening = aperture->area_mm2() > 0.0 && aperture->contains(x, y);
    s.point_in_jaws = x >= s.jaws.x1_mm && x <= s.jaws.x2_mm && y >= s.jaws.y1_mm && y <= s.jaws.y2_mm;
    // Depth moves with the source-to-point distance and the SSD relative to control point 0.
    s.ssd_mm = cp.ssd_mm.value_or(ssd0_mm);
    s.depth_mm = depth.depth_mm + (s.point.spd_mm - r.point.spd_mm) - (s.ssd_mm - ssd0_mm);
    if (s.depth_mm <= 0.0) {
      return fail({Reason::unsupported_geometry,
                   fmt::format("the dose point is not inside the patient at control point {}",
                               s.from_control_point)});
    }

    DoseInputs& in = s.inputs;
    in.method = r.method;
    in.meterset_mu = s.meterset_mu;
    in.depth_cm = util::mm_to_cm(s.depth_mm);
    in.spd_cm = util::mm_to_cm(s.point.spd_mm);
    in.ssd_cm = util::mm_to_cm(s.ssd_mm);
    in.sad_cm = util::mm_to_cm(r.sad_mm);
    in.off_axis_cm = util::mm_to_cm(s.point.off_axis_mm);
    in.collimator_field_cm =
        beamdata::equivalent_square_cm(util::mm_to_cm(s.jaws.width_mm()), util::mm_to_cm(s.jaws.length_mm()));
    in.field_at_isocentre_cm = util::mm_to_cm(aperture->equivalent_square_mm());
    in.wedge = wedge;
    in.tray = tray;
    const bool counts = !r.features.modulated || s.point_in_opening || s.point_in_jaws;
    if (r.features.modulated && !s.point_in_opening && s.point_in_jaws) {
      // Under the leaves: the jaw field's dose times the MLC transmission.
      in.field_at_isocentre_cm = in.collimator_field_cm;
      in.transmission = data.mlc_transmission.value_or(1.0);
    }
    if (counts) {
      if (!data.oar && s.point.off_axis_mm > on_axis_limit_mm) {
        return fail({Reason::missing_beam_data,
                     fmt::format("beam {} has no OAR table and the point is {:.1f} cm off axis", data.id,
                                 util::mm_to_cm(s.point.off_axis_mm))});
      }
      s.dose = compute_point_dose(data, in);
      total_cgy += s.dose.dose_cgy;
    } else {
      s.dose.method = r.method;  // outside the jaws: no dose counted
    }
    r.segments.push_back(std::move(s));
  }

  r.inputs = r.segments.front().inputs;
  r.dose = r.segments.front().dose;
  r.computed_dose_gy = util::cgy_to_gy(total_cgy);
  r.dose_computed = true;

  if (r.features.modulated) {
    r.approximations.push_back(
        fmt::format("Modulated beam: dose summed over {} parts weighted by meterset; each part uses the "
                    "equivalent square "
                    "(4A/P) of its aperture, edge penumbra is ignored, a point under the leaves gets the jaw "
                    "field's dose times "
                    "the MLC transmission ({:.3f}), and jaw transmission is ignored.",
                    r.segments.size(), data.mlc_transmission.value_or(0.0)));
  }
  if (moving) {
    r.approximations.push_back(
        fmt::format("Arc: split into gantry steps of at most {:.0f} degrees; each step's depth is the beam's "
                    "depth shifted by the "
                    "change in source-to-point distance and in SSD from control point 0 (where the plan "
                    "gives no SSD per control "
                    "point, the surface is taken to stay at control point 0's SSD).",
                    max_arc_step_deg));
  }
  if (r.aperture.shaped_by_mlc() && r.features.open_to_jaw_area_ratio < 0.999 && !r.features.modulated) {
    r.approximations.push_back(
        "MLC-shaped field: equivalent square from area and perimeter (4A/P), not sector integration.");
  }
  if (r.aperture.jaws().x_source == geometry::JawSource::mlc_envelope ||
      r.aperture.jaws().y_source == geometry::JawSource::mlc_envelope) {
    r.approximations.push_back(
        "No jaw positions for one axis: the MLC envelope stands in for the collimator field (Sc).");
  }
  if (r.features.blocks) {
    r.approximations.push_back(
        "Block shapes are not modelled: the field inside the jaws and MLC is used for Sp and TMR/PDD.");
  }
  if (r.method == Method::pdd && std::abs(util::mm_to_cm(ssd0_mm) - data.pdd_ssd_cm) > 0.05) {
    r.approximations.push_back(
        fmt::format("PDD at SSD {:.1f} cm from the table at {:.1f} cm by the Mayneord F factor, which "
                    "ignores the change in "
                    "phantom scatter (about half a percent).",
                    util::mm_to_cm(ssd0_mm), data.pdd_ssd_cm));
  }
  return r;
}

}  // namespace countersign::engine
