#pragma once

// The point-dose formulas of DEVELOPERS.md, "Physics" (AAPM TG-71), as a pure function of explicit inputs:
// no plan, no geometry, no file I/O. Callers (the beam calculation, `explain`, sensitivity
// searches) change one input and call again.
//
// Isocentric (TMR) form:
//   D = MU · Ḋref / TMR(d_c, s_ref) · Sc(s_c) · Sp(s_d) · TMR(d, s_d) · WF · TF · OAR(d, r) · (SCDref / SPD)²
// SSD (PDD) form, normalised at d0 = dmax:
//   D = MU · Ḋref / (PDD(d_c, s_ref)/100) · Sc(s_c) · Sp(s_d0) · F · PDD(d, s_s, SSDt)/100 · WF · TF · OAR
//       · ((SSDref + d0)/(SSD + d0))²
// Both forms are normalised so that they give exactly Ḋref at the library's calibration conditions:
// the output is divided by the same factors evaluated there (Sc, Sp and TMR or PDD of the reference
// field). Where the reference field_cm lies follows the library's [beam.calibration] geometry
// (beamdata FORMAT.md): "SSD" - at the surface (the field at the calibration point is
// field_cm (ssd_cm + depth_cm)/ssd_cm); "SAD" - at the calibration point. An SSD- and an
// SAD-calibrated library of the same machine therefore give the same dose.

#include <countersign/beamdata/library.hpp>

#include <optional>
#include <string_view>

namespace countersign::engine {

// tmr and pdd: the photon forms below; electron: engine/electron_dose.hpp.
enum class Method { tmr, pdd, electron };
[[nodiscard]] std::string_view to_code(Method method);

// A point's place against a wedge's gradient at the isocentre plane (cm): along the gradient,
// positive towards the thick end (the orientation table's axis, beamdata/FORMAT.md), and across it.
struct WedgeAxes {
  double towards_thick_cm = 0.0;
  double across_cm = 0.0;
};

// Everything the formula needs, resolved from the plan and the geometry. Units in the names.
struct DoseInputs {
  Method method = Method::tmr;
  double meterset_mu = 0.0;
  double depth_cm = 0.0;               // depth of the point
  double spd_cm = 0.0;                 // source to the point's plane along the central axis
  double ssd_cm = 0.0;                 // source to surface along the central axis (PDD form)
  double sad_cm = 100.0;               // source to isocentre
  double off_axis_cm = 0.0;            // distance of the point from the central axis at the isocentre plane
  double collimator_field_cm = 0.0;    // s_c: equivalent square of the jaw opening at the isocentre
  double field_at_isocentre_cm = 0.0;  // equivalent square of the irradiated field at the isocentre plane
  const beamdata::WedgeData* wedge = nullptr;  // the wedge in the beam (library data), or none
  // Set when the wedge's orientation table applies: the OAR is then the wedged off-axis ratio along
  // the gradient times the open-field OAR across it (separable profiles, common practice, no source).
  std::optional<WedgeAxes> wedge_axes;
  const beamdata::TrayData* tray = nullptr;  // the tray in the beam, or none
  double transmission = 1.0;                 // 1 in the open field; the MLC transmission under closed leaves
};

// How a factor's value was obtained.
enum class FactorBasis {
  table,              // interpolated in a table; lookup holds the provenance
  manifest_constant,  // a constant from machine.toml (wedge or tray factor, MLC transmission)
  formula,            // computed from distances (inverse square, Mayneord F)
  not_applicable,     // not part of this beam or this formalism: 1
  on_axis_unity,      // OAR taken as 1: point on the central axis and the library has no OAR table
};
[[nodiscard]] std::string_view to_code(FactorBasis basis);

struct Factor {
  double value = 1.0;
  FactorBasis basis = FactorBasis::not_applicable;
  std::optional<beamdata::Lookup> lookup;  // set when basis == table
  [[nodiscard]] bool extrapolated() const { return lookup && lookup->extrapolated(); }
};

// Square-field sides (cm) at each plane the formulas use.
struct FieldSizes {
  double collimator_cm = 0.0;           // s_c, jaws at the isocentre
  double isocentre_cm = 0.0;            // irradiated field at the isocentre plane
  double surface_cm = 0.0;              // s_s, at the SSD
  double point_cm = 0.0;                // s_d, at the point's distance
  double normalisation_depth_cm = 0.0;  // s_d0, at SSD + dmax (PDD form)
};

// The reference conditions the output is normalised at, from the library's calibration.
struct ReferenceConditions {
  beamdata::CalibrationGeometry geometry = beamdata::CalibrationGeometry::ssd;
  bool geometry_defaulted = false;   // the library does not state it (FORMAT.md default rule used)
  double source_to_point_cm = 0.0;   // ssd_cm + depth_cm
  double field_at_point_cm = 0.0;    // reference field at the calibration point
  double field_at_surface_cm = 0.0;  // reference field at the calibration SSD
  double collimator_field_cm = 0.0;  // reference collimator setting projected to the isocentre plane
};
[[nodiscard]] ReferenceConditions reference_conditions(const beamdata::BeamData& beam, double sad_cm);

struct DoseFactors {
  double output_cgy_per_mu = 0.0;
  Factor calibration_depth;  // TMR(d_c, s_ref) or PDD(d_c, s_ref, SSD_ref)/100: the output divides by it
  Factor calibration_sc;     // Sc of the reference collimator setting: the output divides by it
  Factor calibration_sp;     // Sp of the reference field (at d_c, or at dmax in the PDD form): divides
  Factor sc;
  Factor sp;
  Factor tmr;         // TMR form
  Factor pdd;         // PDD form, as a fraction (table percent / 100) at the table's SSD
  Factor mayneord_f;  // PDD form
  Factor oar;
  Factor wedge;
  Factor wedge_profile;  // wedged off-axis ratio along the gradient (the wedge's orientation table)
  Factor tray;
  Factor transmission;  // MLC transmission when the point is under the leaves
  Factor inverse_square;
  // Shaped fields: sector-integrated Sp·TMR·OAR / the equivalent square's (set by the engine's
  // scatter stage after this formula; 1 and not_applicable otherwise).
  Factor sector_scatter;
  // Electron form (engine/electron_dose.hpp): applicator (cone) factor and cutout factor.
  Factor applicator;
  Factor cutout;
};

struct PointDose {
  Method method = Method::tmr;
  ReferenceConditions reference;
  FieldSizes fields;
  DoseFactors factors;
  double dose_per_mu_cgy = 0.0;
  double dose_cgy = 0.0;  // meterset_mu × dose_per_mu_cgy
  // The first factor whose lookup extrapolated, or nullptr.
  [[nodiscard]] const Factor* first_extrapolated() const;
};

// The dose at the point. Table lookups outside a table are computed (extrapolated linearly) and
// marked; judging them is the caller's job. The OAR is looked up when the library has a table,
// else taken as 1 (basis on_axis_unity) and the caller decides whether that is acceptable. With
// wedge_axes the OAR is looked up at the distance across the gradient and the wedge's orientation
// table at the distance along it.
[[nodiscard]] PointDose compute_point_dose(const beamdata::BeamData& beam, const DoseInputs& inputs);

}  // namespace countersign::engine
