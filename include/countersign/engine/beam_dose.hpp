#pragma once

// The dose one beam delivers at one point, computed from the plan's geometry and the clinic's
// tables, with everything that went into it: the beam data used, the geometry (depth and its
// source, SPD, off-axis distance, apertures), every factor with its provenance, and the
// approximations made, as facts. No file I/O, no sentences, no verdict: a plan and a loaded
// library in, a value out. The calculation runs in named stages (DEVELOPERS.md, "Engine stages").

#include <countersign/beamdata/library.hpp>
#include <countersign/engine/approximation.hpp>
#include <countersign/engine/body_outline_radius.hpp>
#include <countersign/engine/dose_point.hpp>
#include <countersign/engine/electron_dose.hpp>
#include <countersign/engine/model_facts.hpp>
#include <countersign/engine/patient_geometry.hpp>
#include <countersign/engine/point_dose.hpp>
#include <countersign/engine/problem.hpp>
#include <countersign/engine/sector_scatter.hpp>
#include <countersign/geometry/aperture.hpp>
#include <countersign/geometry/beam_frame.hpp>
#include <countersign/plan/plan.hpp>

#include <algorithm>
#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::engine {

enum class MethodChoice { by_setup_technique, tmr, pdd };

// Why the formalism is the one used.
enum class MethodBasis {
  user_choice,      // --method tmr or pdd
  setup_technique,  // the patient setup's Setup Technique (FIXED_SSD: pdd; anything else or absent: tmr)
};

struct EngineOptions {
  MethodChoice method = MethodChoice::by_setup_technique;  // FIXED_SSD -> pdd, otherwise tmr
  DepthChoice depth = DepthChoice::planned;
  double max_sector_deg = 10.0;  // sector integration: widest sector (the policy's sectors.max_sector_deg)
  double segment_edge_distance_mm = 10.0;  // a part's point closer than this to its opening's edge counts
                                           // towards edge_meterset_share (the policy's min_edge_distance_cm)
  // The body outline for sector integration (with a CT: check::use_study sets it from the study's
  // patient model, body_outline_radius.hpp): a shaped part's sector rays end where the body ends in
  // the plane through the point. Unset: rays end at the aperture's edges only (full scatter).
  OutlineRadius outline_radius_mm;
  // The patient's CT and body outline (check --study): depths and SSD come from it. Not owned; the
  // model (and its study) must outlive the calculation. nullptr: the plan's depths, in water.
  const patient::PatientModel* patient = nullptr;
  Heterogeneity heterogeneity = Heterogeneity::epl;  // with a CT only
  // Without a CT: when the plan's equivalent depth differs from its depth by more than this (percent
  // of the depth), the dose uses the plan's equivalent depth (policy key
  // patient.plan_equivalent_depth_switch_percent).
  double equivalent_depth_switch_percent = 5.0;
};

// How phantom scatter was obtained for a part.
enum class ScatterMethod {
  equivalent_square,   // an open jaw rectangle: Sterling's 4A/P
  sector_integration,  // an MLC- or block-shaped opening: sector integration (sector_scatter.hpp)
};
[[nodiscard]] std::string_view to_code(ScatterMethod method);

// The depth used and how it was obtained.
struct DepthUsed {
  double depth_mm = 0.0;
  DepthSource source = DepthSource::derived_spd_minus_ssd;
  DepthChoice kind = DepthChoice::planned;
  bool chosen = false;                  // a source was found (false when the calculation stopped before)
  std::optional<double> plan_depth_mm;  // the plan's Beam Dose Point Depth for this point
  std::optional<double> plan_equivalent_depth_mm;  // the plan's Beam Dose Point Equivalent Depth
  std::optional<double> plan_dose_point_ssd_mm;    // the plan's Beam Dose Point SSD (300A,008A)
  std::optional<double> spd_minus_ssd_mm;          // the flat-surface depth, when the SSD is known
  // Set when the dose uses another depth than the geometric one (the CT's radiological depth or the
  // plan's equivalent depth): the geometric depth, at which the homogeneous dose beside it is computed.
  std::optional<double> geometric_depth_mm;
  // The plan's equivalent depth is used although --depth planned, because it differs from the
  // plan's depth by more than the policy limit (no CT).
  bool equivalent_by_policy = false;
};

// A wedged beam: where the off-axis ratio along the wedge's gradient comes from.
enum class WedgeProfile {
  not_wedged,
  orientation_table,  // the library's orientation_table, aimed by Wedge Orientation and the collimator angle
  no_table,           // the library has no orientation_table for the wedge: the open-field OAR only
  no_orientation,     // the plan gives no Wedge Orientation (300A,00D8): the open-field OAR only
};
[[nodiscard]] std::string_view to_code(WedgeProfile profile);

// Facts the tolerance policy sorts beams by.
struct BeamFeatures {
  bool modulated = false;  // more than one segment, or a moving gantry
  bool wedged = false;
  WedgeProfile wedge_profile = WedgeProfile::not_wedged;
  bool tray = false;
  bool blocks = false;                  // block shapes present (not modelled)
  double jaw_centre_offset_mm = 0.0;    // distance of the jaw rectangle's centre from the axis
  double open_to_jaw_area_ratio = 1.0;  // aperture area / jaw rectangle area (1 without MLC shaping)
};

// What the beam's-eye view draws, decided where the apertures are built: for a static beam the
// opening of control point 0; for a modulated beam the area swept open in any part and the envelope
// of the jaws.
struct BeamOutline {
  geometry::JawOpening jaws;
  std::vector<geometry::ApertureRow> open;  // in the leaves' frame (see leaf_travel)
  geometry::LeafTravel leaf_travel = geometry::LeafTravel::x;
  bool shaped_by_mlc = false;      // static beam with an MLC: the leaves are drawn inside the jaws
  bool known = false;              // false: no outline could be built (nothing to draw but the jaws)
  std::vector<BlockShape> blocks;  // the beam's blocks at the isocentre plane, as the calculation used them
};

// One part of the meterset delivered with one aperture and one beam direction.
struct Segment {
  int from_control_point = 0;  // the control point index the part starts at
  double meterset_mu = 0.0;
  geometry::BeamAngles angles;
  geometry::PointInBeam point;
  double depth_mm = 0.0;
  double ssd_mm = 0.0;
  geometry::JawOpening jaws;
  double open_area_mm2 = 0.0;
  double open_perimeter_mm = 0.0;
  bool point_in_opening = false;
  bool point_in_jaws = false;
  double edge_distance_mm =
      0.0;  // from the point to the nearest edge of this part's opening (isocentre plane)
  ScatterMethod scatter_method = ScatterMethod::equivalent_square;
  std::optional<SectorScatter> sectors;  // sector_integration: the sums at the point
  double primary = 0.0;  // sector_integration: Sp(0)·TMR(d,0)·T·OAR, the primary part of Sp·TMR·OAR
  double equivalent_square_dose_cgy = 0.0;  // the same part by Sterling's 4A/P (equals dose without sectors)
  DoseInputs inputs;
  PointDose dose;
  std::optional<CtRay> ct;             // with a CT: this part's ray (its own source position)
  std::optional<double> batho_factor;  // heterogeneity batho
  double homogeneous_dose_cgy = 0.0;   // in water at the geometric depth (equals dose without a correction)
};

struct BeamDose {
  // Set when the dose could not be computed (dose fields are then not meaningful); the fields
  // filled before the stage that stopped stay filled.
  std::optional<CalculationProblem> problem;
  bool dose_computed = false;

  const beamdata::Machine* machine = nullptr;  // points into the library passed in
  const beamdata::BeamData* beam_data = nullptr;              // photon beams
  const beamdata::ElectronBeamData* electron_data = nullptr;  // electron beams (beam_data is then nullptr)
  std::optional<ElectronFacts> electron;  // electron beams: applicator, cutout, bolus, R80
  DosePoint dose_point;
  std::optional<geometry::PatientPosition> patient_position;
  geometry::BeamAngles angles;  // control point 0
  plan::PointMm isocenter_mm{};
  double sad_mm = 0.0;
  std::optional<double> ssd_mm;  // control point 0's Source to Surface Distance
  geometry::PointInBeam point;   // the dose point seen from control point 0
  DepthUsed depth;
  geometry::Aperture aperture;    // control point 0 (the field of a static beam)
  bool point_in_field = false;    // inside the aperture of control point 0
  double edge_distance_mm = 0.0;  // to the nearest edge of that aperture (isocentre plane)
  Method method = Method::tmr;
  std::optional<MethodBasis> method_basis;            // why this formalism (set once it is chosen)
  plan::Coded<plan::SetupTechnique> setup_technique;  // the patient setup's, as the plan has it
  BeamOutline outline;                                // what a drawing of the beam shows
  DoseInputs inputs;                                  // static beam: the inputs of `dose`
  PointDose dose;                                     // static beam: the dose and its factors
  std::vector<Segment> segments;                      // modulated beam: each part (static beam: its one part)
  BeamFeatures features;
  double meterset_mu = 0.0;
  double computed_dose_gy = 0.0;
  // The same beam with every part through Sterling's equivalent square (a second column), and the
  // percentage by which the dose computed differs from it: one component of the calculation's
  // uncertainty, as a plain number.
  double equivalent_square_dose_gy = 0.0;
  double sector_vs_equivalent_square_percent = 0.0;
  [[nodiscard]] bool used_sector_integration() const {
    return std::any_of(segments.begin(), segments.end(), [](const Segment& s) {
      return s.scatter_method == ScatterMethod::sector_integration;
    });
  }
  // Some part's sector rays ended at the body outline (scatter of the missing tissue not counted).
  [[nodiscard]] bool scatter_truncated_at_body() const {
    return std::any_of(segments.begin(), segments.end(),
                       [](const Segment& s) { return s.sectors && s.sectors->rays_ended_at_body > 0; });
  }
  // The share of the meterset delivered (in parts that reach the point) with the point closer than
  // EngineOptions::segment_edge_distance_mm to the part's opening's edge.
  double edge_meterset_share = 0.0;
  // With a CT: what the CT said (control point 0) and how it entered the dose.
  std::optional<PatientDose> patient;
  // Set when the dose used a depth other than the geometric one: the same beam in homogeneous water
  // at the geometric depth, shown beside it.
  std::optional<double> homogeneous_dose_gy;
  std::vector<Approximation> approximations;
  ModelFacts model;  // consistency step: geometry consistency, other formalism, uncertainty

  // The first extrapolated factor in any part, or nullptr.
  [[nodiscard]] const Factor* first_extrapolated() const;
};

// Computes the dose the beam delivers at `point` with the meterset of `referenced`.
[[nodiscard]] BeamDose compute_beam_dose(const plan::Plan& plan, const plan::Beam& beam,
                                         const plan::ReferencedBeam& referenced, const DosePoint& point,
                                         const beamdata::Library& library, const EngineOptions& options);

// Largest gantry step (degrees) of one arc segment; longer moves are split.
inline constexpr double max_arc_step_deg = 5.0;

}  // namespace countersign::engine
