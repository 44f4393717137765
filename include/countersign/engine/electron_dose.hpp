#pragma once

// The electron point-dose formula (AAPM TG-71, Gibbons et al. 2014, electron section), a pure function
// of explicit inputs like point_dose.hpp:
//
//   D = MU · Ḋ0 / (PDD_ref(d_cal)/100) · AF · CF(cutout) · PDD(d, cutout)/100
//         · ((SSD_eff + d_m) / (SSD_eff + g + d_m))²
//
// Ḋ0 is the library's output at its calibration point (reference applicator, standard SSD, depth
// d_cal; PDD_ref(d_cal) is 100 when d_cal is d_m); AF the applicator (cone) factor and CF the cutout
// factor, both at d_m and the standard SSD SSD0 of the tables; g = SSD - SSD0 the air gap beyond the
// standard SSD; SSD_eff the applicator's effective SSD. The PDD is the table's at SSD0 (its change with
// SSD is ignored, and the check says so). Cutout size: its equivalent square 4A/P, or for an
// elongated cutout the square-root rule of the one-dimensional factors,
// CF(X, Y) = sqrt(CF(X) · CF(Y)) and PDD(d, X, Y) = sqrt(PDD(d, X) · PDD(d, Y)), with X and Y the
// sides of the rectangle that has the cutout's area and the aspect of its principal axes (X/Y the
// square root of the ratio of its principal second moments; a rectangle gives its own sides).

#include <countersign/beamdata/electron.hpp>
#include <countersign/engine/point_dose.hpp>

#include <array>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::engine {

enum class CutoutMethod {
  open_applicator,    // no cutout: the applicator's open square field
  equivalent_square,  // 4A/P of the cutout
  square_root_rule,   // elongated cutout: the square-root rule of the one-dimensional factors
};
[[nodiscard]] std::string_view to_code(CutoutMethod method);

// A cutout is elongated (square-root rule) when its equivalent rectangle's long side is more than
// this many times its short side (our choice, common practice, no source).
inline constexpr double elongated_cutout_ratio = 1.25;

// The cutout's size at the plane of the tables (the standard SSD).
struct CutoutSize {
  CutoutMethod method = CutoutMethod::open_applicator;
  double area_cm2 = 0.0;
  double perimeter_cm = 0.0;
  double equivalent_square_cm = 0.0;  // 4A/P; the applicator's side when open
  double side_x_cm = 0.0;             // square_root_rule: the sides of the rectangle with the cutout's
  double side_y_cm = 0.0;             // area and principal-axes aspect (x the shorter)
  // The smallest field the tables are looked up with (the equivalent square, or the shorter side).
  [[nodiscard]] double smallest_lookup_cm() const;
};

// The size of a cutout outline (Block Data, isocentre plane, mm), scaled by `scale_to_table_plane`
// (standard SSD / SAD) to the plane of the tables. nullopt: not a polygon with an area.
[[nodiscard]] std::optional<CutoutSize> cutout_size(const std::vector<std::array<double, 2>>& outline_mm,
                                                    double scale_to_table_plane);
// The open applicator's field as a cutout size.
[[nodiscard]] CutoutSize open_applicator_size(const beamdata::ApplicatorData& applicator);

struct ElectronInputs {
  double meterset_mu = 0.0;
  double depth_cm = 0.0;  // water-equivalent depth below the surface the beam enters (bolus included)
  double ssd_cm = 0.0;    // source to that surface on the central axis
  CutoutSize cutout;
};

// The effective-SSD inverse square for an air gap g beyond the standard SSD:
// ((SSD_eff + d_m) / (SSD_eff + g + d_m))².
[[nodiscard]] double effective_ssd_inverse_square(double effective_ssd_cm, double air_gap_cm, double dmax_cm);

// PDD(d, cutout) in percent with its provenance (two field brackets under the square-root rule).
[[nodiscard]] beamdata::Lookup electron_pdd(const beamdata::ApplicatorData& applicator, double depth_cm,
                                            const CutoutSize& cutout);

// R80: the depth beyond d_m at which the cutout's PDD falls to 80 %, interpolated linearly between
// the table's depth rows; nullopt when the table never falls that low.
[[nodiscard]] std::optional<double> depth_of_80_percent_cm(const beamdata::ElectronBeamData& beam,
                                                           const beamdata::ApplicatorData& applicator,
                                                           const CutoutSize& cutout);

// The dose at the point on the central axis (OAR 1, basis on_axis_unity). Lookups outside a table
// are computed and marked, as in compute_point_dose; judging them is the caller's job.
[[nodiscard]] PointDose compute_electron_dose(const beamdata::ElectronBeamData& beam,
                                              const beamdata::ApplicatorData& applicator,
                                              const ElectronInputs& inputs);

// What an electron calculation used, beyond the factors: facts for the check and the reports.
struct ElectronFacts {
  std::string applicator_id;    // Applicator ID (300A,0108)
  std::string applicator_type;  // Applicator Type (300A,0109) as the plan spells it
  double applicator_field_cm = 0.0;
  double effective_ssd_cm = 0.0;
  double standard_ssd_cm = 0.0;  // pdd_ssd_cm of the beam
  CutoutSize cutout;
  double smallest_table_cutout_cm = 0.0;  // the smallest field of the cutout and PDD tables
  std::string bolus_id;                   // Bolus ID (300A,00DC), empty without a bolus
  std::optional<double> bolus_thickness_cm;
  double skin_depth_cm = 0.0;           // the depth below the skin (the plan's or derived)
  double depth_cm = 0.0;                // skin depth + bolus thickness: the depth the tables are read at
  double entrance_ssd_cm = 0.0;         // SSD of the surface the beam enters (the bolus's with a bolus)
  double air_gap_cm = 0.0;              // entrance SSD - standard SSD
  std::optional<double> r80_cm;         // depth of 80 % dose of the cutout's PDD
  std::optional<double> obliquity_deg;  // with a CT: angle between the beam axis and the surface normal
};

}  // namespace countersign::engine
