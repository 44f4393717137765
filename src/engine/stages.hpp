#pragma once

// The stages of one beam's calculation (internal to the engine; DEVELOPERS.md, "Engine stages").
// compute_beam_dose (beam_dose.cpp) runs them in this order:
//
//   1. resolve      resolve_beam.cpp   the beam's data in the library, accessories, patient setup
//   2. geometry     beam_geometry.cpp  IEC 61217 frame of control point 0, the point seen from it, SAD
//   3. depth        depth.cpp          the depth at the point: the plan's, or derived by a stated method
//   4. apertures    apertures.cpp      the opening of each part (and the outline a drawing shows)
//   5. scatter      scatter.cpp        the scatter inputs of each part: today equivalent squares
//   6. primary      primary.cpp        the primary's path to the point: open, under the leaves, blocked
//   7. formula      formula.cpp        the formalism (TMR/PDD) and the point-dose formula's inputs
//   8. segments     segments.cpp       the meterset split into parts, each part through 4-7, summed
//   9. consistency  consistency.cpp    facts on the model's trust: plan geometry, other formalism,
//   uncertainty
//
// Each stage returns its facts or the CalculationProblem that stops the calculation; a stage reads
// only what the stages before it produced.

#include <countersign/beamdata/library.hpp>
#include <countersign/engine/beam_dose.hpp>
#include <countersign/engine/patient_geometry.hpp>
#include <countersign/engine/problem.hpp>
#include <countersign/engine/sector_scatter.hpp>
#include <countersign/geometry/aperture.hpp>
#include <countersign/geometry/beam_frame.hpp>
#include <countersign/plan/plan.hpp>
#include <countersign/util/error.hpp>

#include <optional>
#include <vector>

namespace countersign::engine::stages {

// What a stage gives: its facts, or what stopped the calculation.
template <class T>
using StageResult = Expected<T, CalculationProblem>;

// ---- 1. resolve ----------------------------------------------------------------------------------
struct ResolvedBeam {
  const beamdata::Machine* machine = nullptr;
  const beamdata::BeamData* data = nullptr;
  const beamdata::WedgeData* wedge = nullptr;   // the wedge in the beam, or none
  std::optional<double> wedge_orientation_deg;  // its Wedge Orientation (300A,00D8), as the plan gives it
  const beamdata::TrayData* tray = nullptr;     // the block tray in the beam, or none
  const plan::PatientSetup* setup = nullptr;
  geometry::PatientPosition position = geometry::PatientPosition::hfs;
  double meterset_mu = 0.0;
  std::vector<BlockShape> blocks;  // the beam's blocks at the isocentre plane (Block Data)
  // Electron beams (data is then nullptr): the beam data, the applicator in the plan and in the
  // library, the cutout (the APERTURE block; none: the open applicator) and the bolus.
  const beamdata::ElectronBeamData* electron = nullptr;
  const plan::Applicator* plan_applicator = nullptr;
  const beamdata::ApplicatorData* applicator = nullptr;
  const plan::Block* cutout = nullptr;
  const plan::Accessory* bolus = nullptr;
  std::optional<double> bolus_thickness_cm;  // from the library's [[bolus]] of the plan's Bolus ID
};

// The beam's machine and energy in the library, its accessories, its patient setup and meterset.
// Fills `r` (machine, beam data, features of accessories, patient position) as it goes, so that a
// report can show what was found before a problem.
[[nodiscard]] StageResult<ResolvedBeam> resolve_beam(const plan::Plan& plan, const plan::Beam& beam,
                                                     const plan::ReferencedBeam& referenced,
                                                     const beamdata::Library& library, BeamDose& r);

// Electron beams (electron_resolve.cpp): the electron beam data by machine and energy, the single
// applicator, the cutout, the bolus and its thickness (fills the electron fields of `resolved`).
[[nodiscard]] StageResult<void> resolve_electron(const plan::Beam& beam, double energy_mev,
                                                 const beamdata::Library& library, ResolvedBeam& resolved,
                                                 BeamDose& r);

// ---- 2. geometry ---------------------------------------------------------------------------------
// Angles, isocentre and SAD of control point 0, and the dose point seen from the source (sets
// r.angles, r.isocenter_mm, r.sad_mm, r.point, r.ssd_mm).
[[nodiscard]] StageResult<void> locate_point(const plan::Beam& beam, const ResolvedBeam& resolved,
                                             const DosePoint& point, BeamDose& r);

// ---- 3. depth ------------------------------------------------------------------------------------
// The depth at the point (control point 0), into r.depth: today the plan's Beam Dose Point Depth
// (or equivalent depth when asked for), else derived from the dose point SSD or from SPD - SSD with
// a flat surface; a bolus needs the plan's depth. Adds the approximations it makes.
// Seam: a depth along the ray through a CT volume would be one more DepthSource chosen here.
[[nodiscard]] StageResult<void> choose_depth(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                                             const DosePoint& point, const EngineOptions& options,
                                             BeamDose& r);

// With a CT (ct_depth.cpp): the ray from a part's source to the point through the CT, the SSD along
// its central axis and the missing tissue of its jaw opening at the point's depth.
[[nodiscard]] StageResult<CtRay> trace_ct(const patient::PatientModel& model,
                                          const geometry::BeamFrame& frame, const plan::PointMm& point_mm,
                                          const geometry::JawOpening& jaws, std::optional<int> control_point);

// With a CT: control point 0's depth from the CT (r.patient, r.depth); the method says which depth.
[[nodiscard]] StageResult<void> choose_ct_depth(const patient::PatientModel& model, Heterogeneity method,
                                                const DosePoint& point, BeamDose& r);

// The depth a part's dose is looked up at, and its geometric depth (homogeneous dose).
struct PartDepths {
  double dose_depth_mm = 0.0;
  double geometric_depth_mm = 0.0;
};
[[nodiscard]] PartDepths ct_part_depths(const CtRay& ray, Heterogeneity method);

// The SSD of control point 0: the plan's, else SPD - depth (the surface the depth implies).
[[nodiscard]] double surface_distance_mm(const BeamDose& r);

// The depth of a later part: the depth of control point 0 moved by the change in source-to-point
// distance and in SSD (flat surface).
[[nodiscard]] double part_depth_mm(const BeamDose& r, double part_spd_mm, double part_ssd_mm, double ssd0_mm);

// ---- 4. apertures --------------------------------------------------------------------------------
// The opening at one control point, in the isocentre plane: jaws intersected with the MLC.
// Seam: blocks and polygon apertures would be intersected here.
// Rounded leaf ends open every open leaf pair by twice the library's mlc_leaf_end_offset_mm.
[[nodiscard]] StageResult<geometry::Aperture> aperture_at(const plan::Beam& beam,
                                                          const plan::ControlPoint& cp,
                                                          int control_point_index,
                                                          const beamdata::BeamData& data);

// Whether a point of the isocentre plane sees the source through the opening and past every block
// (inside an APERTURE block's outline, outside a SHIELDING block's).
[[nodiscard]] bool in_open_field(const geometry::Aperture& aperture, const std::vector<BlockShape>& blocks,
                                 double x_mm, double y_mm);
// Distance from a point of the isocentre plane to the nearest edge of the open field: the opening's
// edges and the parts of block edges that lie inside the opening.
[[nodiscard]] double open_field_edge_distance_mm(const geometry::Aperture& aperture,
                                                 const std::vector<BlockShape>& blocks, double x_mm,
                                                 double y_mm);

// Whether the opening is shaped by anything but the jaws (MLC or blocks): such parts get sector
// integration.
[[nodiscard]] bool shaped_field(const geometry::Aperture& aperture, const ResolvedBeam& resolved);

// What the beam's-eye view draws: control point 0's opening for a static beam, the swept area of
// every delivering pair of control points for a modulated one.
// The blocks are drawn as the calculation used them (Block Data at the isocentre plane).
[[nodiscard]] BeamOutline beam_outline(const plan::Beam& beam, const geometry::Aperture& aperture0,
                                       const std::vector<BlockShape>& blocks, bool modulated);

// ---- 5. scatter ----------------------------------------------------------------------------------
// The field sizes the scatter factors are looked up with, at the isocentre plane.
struct ScatterInputs {
  double collimator_field_cm = 0.0;      // s_c: equivalent square of the opening named by head_scatter_field
  double open_field_cm = 0.0;            // equivalent square (4A/P) of the opening (Sp, TMR/PDD column)
  std::optional<SectorScatter> sectors;  // shaped fields: the sector integration at the point
};
// Where a part's sectors are integrated: the point, its depth and distance, the sector width.
struct SectorSetup {
  geometry::PointInBeam point;
  double depth_mm = 0.0;
  double spd_mm = 0.0;
  double sad_mm = 0.0;
  double max_sector_deg = 10.0;
  const EngineOptions* options = nullptr;      // the body-outline hook, when one is given
  const geometry::BeamFrame* frame = nullptr;  // the part's beam direction (for the body outline)
  plan::PointMm point_mm{};                    // the dose point, patient coordinates
};
// Equivalent squares always (Sterling's 4A/P: Sc from the opening head_scatter_field names, Sp and
// the TMR/PDD column from the opening); with `sectors`, the sector integration at the point too.
[[nodiscard]] ScatterInputs scatter_inputs(const geometry::Aperture& aperture, const ResolvedBeam& resolved,
                                           const SectorSetup* sectors);
// The sector integration in the dose: the factor sector Sp·TMR / equivalent-square Sp·TMR (the OAR
// multiplies only the sector primary) set on `dose` and its dose scaled by it.
void apply_sector_scatter(const beamdata::BeamData& data, const DoseInputs& inputs,
                          const SectorScatter& sectors, PointDose& dose);

// ---- 6. primary and transmission -----------------------------------------------------------------
struct PrimaryPath {
  bool in_opening = false;    // the point sees the source through the opening
  bool in_jaws = false;       // the point lies inside the jaw rectangle
  bool under_leaves = false;  // modulated part: inside the jaws, behind the leaves
  bool under_block = false;   // behind a block (static or modulated)
  bool counted = false;       // the part contributes dose at the point
  double transmission = 1.0;  // 1 in the open field; the MLC's under the leaves, times the block's
};
// Where the point lies relative to one part's opening, and what reaches it.
[[nodiscard]] PrimaryPath primary_path(const geometry::Aperture& aperture, const geometry::PointInBeam& point,
                                       bool modulated, const ResolvedBeam& resolved);
// The point against the wedge's gradient, when the wedge's orientation table applies (the library
// has one and the plan gives the Wedge Orientation); else nullopt. IEC 61217 as DICOM states it:
// Wedge Orientation turns the wedge filter system about +Z of the beam-limiting-device system, and
// the wedge's thin end lies along the wedge system's +Y, so at orientation θ the thin end points
// along (−sin θ, cos θ) of the beam-limiting-device system (which carries the collimator angle).
[[nodiscard]] std::optional<WedgeAxes> wedge_axes(const ResolvedBeam& resolved, double iso_plane_x_mm,
                                                  double iso_plane_y_mm);
// The off-axis ratio needs a table off the axis (closer than 1 mm an absent table is harmless).
[[nodiscard]] StageResult<void> require_oar(const beamdata::BeamData& data,
                                            const geometry::PointInBeam& point);

// ---- 7. formula ----------------------------------------------------------------------------------
// The formalism: the user's choice, else by the patient setup's Setup Technique (sets r.method,
// r.method_basis, r.setup_technique).
void choose_method(const ResolvedBeam& resolved, MethodChoice choice, BeamDose& r);

// The point-dose formula's inputs for one part (units converted here, mm to cm).
struct PartGeometry {
  double meterset_mu = 0.0;
  double depth_mm = 0.0;
  double spd_mm = 0.0;
  double ssd_mm = 0.0;
  double off_axis_mm = 0.0;
  double iso_plane_x_mm = 0.0;  // the point at the isocentre plane, beam-limiting-device system
  double iso_plane_y_mm = 0.0;
};
[[nodiscard]] DoseInputs formula_inputs(const BeamDose& r, const ResolvedBeam& resolved,
                                        const PartGeometry& part, const ScatterInputs& scatter,
                                        const PrimaryPath& path);

// Electron beams (electron_beam.cpp), stage 4: the applicator's open square at the isocentre plane
// as the opening (what a drawing and the CT's missing-tissue rule see) and control point 0's SSD.
void electron_opening(const plan::Beam& beam, const ResolvedBeam& resolved, BeamDose& r);
// Electron beams (electron_beam.cpp): after stages 1-3, the TG-71 electron formula at the point
// (cutout size, bolus, effective-SSD inverse square, R80, with a CT the obliquity), one part, into r.
[[nodiscard]] StageResult<void> compute_electron_beam(const ResolvedBeam& resolved, const DosePoint& point,
                                                      const EngineOptions& options, BeamDose& r);

// ---- 8. segments ---------------------------------------------------------------------------------
// One part of the meterset: a plan control point, or one interpolated in the middle of an arc step.
struct PartPlan {
  int from_control_point = 0;
  double meterset_mu = 0.0;
  const plan::ControlPoint* control_point = nullptr;  // the part's geometry: a plan control point ...
  std::optional<plan::ControlPoint> interpolated;     // ... or one interpolated at the middle of the part
  [[nodiscard]] const plan::ControlPoint& geometry() const;
};
struct MetersetSplit {
  std::vector<PartPlan> parts;
  bool moving = false;  // the gantry moves while meterset is delivered
};
// One part per pair of control points between which meterset is delivered; arcs split into gantry
// steps of at most max_arc_step_deg.
[[nodiscard]] StageResult<MetersetSplit> split_meterset(const plan::Beam& beam, double meterset_mu);

// Every part through apertures, scatter, primary and formula; their doses summed into r (sets
// r.segments, r.computed_dose_gy, the equivalent-square and homogeneous columns). A beam with leaves
// needs the MLC transmission and the leaf-end offset from the library. With a CT (options.patient)
// each part's depth comes from its own ray through the CT.
[[nodiscard]] StageResult<void> compute_segments(const plan::Beam& beam, const DosePoint& point,
                                                 const ResolvedBeam& resolved, const MetersetSplit& split,
                                                 const EngineOptions& options, BeamDose& r);

// Whether nothing that shapes or aims the beam changes between two control points.
[[nodiscard]] bool same_geometry(const plan::ControlPoint& a, const plan::ControlPoint& b);

// ---- 9. consistency ------------------------------------------------------------------------------
// After the dose: the plan's distances against each other, the other formalism (static beams) and
// the estimated uncertainty, into r.model. Never stops the calculation.
void assess_model(const plan::Beam& beam, const plan::ReferencedBeam& referenced, const DosePoint& point,
                  BeamDose& r);
// Electron beams: the plan's distances against each other only (no other formalism; the
// uncertainty estimate covers photon tables).
void assess_electron_model(const plan::Beam& beam, const plan::ReferencedBeam& referenced,
                           const DosePoint& point, BeamDose& r);

}  // namespace countersign::engine::stages
