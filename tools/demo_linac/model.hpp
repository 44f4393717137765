#pragma once

// Physical model of FERN-LINAC-1, the INVENTED linear accelerator of the fictional Fernhollow
// Radiotherapy Unit. It is demo data only, not a model of any real machine and not for clinical use.
//
// Two uses: make_demo_beamdata.cpp tabulates it into beamdata/FERN-LINAC-1/, and the demo-plan
// generator uses it as a stand-in "planning system" for the planned doses. Both therefore see the
// same beam. All functions are pure; the model has no mutable state.
//
// Construction (common practice, no source, unless a line says otherwise):
// - TMR: narrow-beam attenuation exp(-mu x) times a scatter term that grows with the field at
//   depth and with the depth below dmax (x = d - dmax); TMR(dmax, s) = 1 for every s. In the
//   build-up region a rise from a field-dependent surface value to 1 at dmax.
// - Sc and Sp: saturating functions of the field side, normalised to 1 at 10 cm.
// - PDD is NOT modelled separately: it follows from TMR and Sp through the PDD->TMR relation of
//   DEVELOPERS.md, "Physics", inverted, so PDD, TMR and Sp are mutually consistent by construction.
// - OAR: the in-field off-axis ratio of a flattened beam (horns near the surface, flatter with
//   depth); the penumbra at the field edge is not part of it.
// The parameters were fitted by hand so that the tables land near typical published magnitudes
// for 6 MV and 10 MV beams (values from memory, e.g. 6 MV PDD(10 cm, 10x10, SSD 100) about
// 66.8 %, 10 MV about 73 %); see tests/beamdata/demo_library_test.cpp.

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>
#include <string>
#include <vector>

namespace demo_linac {

// The invented machine's identity, as the demo plans and the demo library spell it.
inline constexpr const char* machine_name = "FERN-LINAC-1";
inline constexpr double sad_cm = 100.0;

// The invented MLC: 72 leaf pairs of one width, 5 mm at the isocentre, spanning -180 to +180 mm in
// IEC Y (a layout of this project's own, not that of any commercial collimator).
inline constexpr int mlc_leaf_pairs = 72;
inline constexpr double mlc_leaf_width_mm = 5.0;
// Rounded leaf ends: each leaf's radiological tip lies this far beyond its nominal position (invented).
inline constexpr double mlc_leaf_end_offset_mm = 0.6;

// SSDs at which the demo beam data is meant to be trusted (invented).
inline constexpr double trusted_ssd_min_cm = 80.0;
inline constexpr double trusted_ssd_max_cm = 130.0;

struct BeamModel {
  const char* beam_id;       // "6X", "10X"
  double energy_mv;          // nominal energy
  double dmax_cm;            // depth of maximum dose, 10x10
  double output_cgy_per_mu;  // at dmax, 10x10, SSD 100 cm (the calibration point)
  // TMR beyond dmax: exp(-mu x) (1 + scatter_amplitude (1 - exp(-s/scatter_field_cm)) x / (1 +
  // x/scatter_depth_cm))
  double mu_per_cm;
  double scatter_amplitude_per_cm;
  double scatter_field_cm;
  double scatter_depth_cm;
  // Build-up: TMR(0, s) = surface_base + surface_field_gain (1 - exp(-s / 20 cm))
  double surface_base;
  double surface_field_gain;
  // Sc(s) and Sp(s): (1 + amplitude (1 - exp(-s/scale))) normalised at 10 cm
  double sc_amplitude;
  double sc_scale_cm;
  double sp_amplitude;
  double sp_scale_cm;
  // OAR(d, r) = 1 + (oar_horn_at_surface - oar_horn_slope_per_cm d) (r / 20 cm)^2
  double oar_horn_at_surface;
  double oar_horn_slope_per_cm;
  // Physical wedges W15, W30, W45, W60 (constant factors), the one tray, the MLC.
  double wedge_factor_w15;
  double wedge_factor_w30;
  double wedge_factor_w45;
  double wedge_factor_w60;
  double tray_factor_tray_a;
  double mlc_transmission;
  double block_transmission;  // default for blocks whose plan states none (invented)
};

// The two invented photon beams. 6 MV: dmax 1.5 cm; 10 MV: dmax 2.4 cm (typical, from memory).
inline constexpr BeamModel beam_6x{.beam_id = "6X",
                                   .energy_mv = 6.0,
                                   .dmax_cm = 1.5,
                                   .output_cgy_per_mu = 1.000,
                                   .mu_per_cm = 0.0485,
                                   .scatter_amplitude_per_cm = 0.0436,
                                   .scatter_field_cm = 11.1,
                                   .scatter_depth_cm = 28.8,
                                   .surface_base = 0.30,
                                   .surface_field_gain = 0.25,
                                   .sc_amplitude = 0.15,
                                   .sc_scale_cm = 10.0,
                                   .sp_amplitude = 0.12,
                                   .sp_scale_cm = 12.0,
                                   .oar_horn_at_surface = 0.045,
                                   .oar_horn_slope_per_cm = 0.002,
                                   .wedge_factor_w15 = 0.80,
                                   .wedge_factor_w30 = 0.66,
                                   .wedge_factor_w45 = 0.52,
                                   .wedge_factor_w60 = 0.42,
                                   .tray_factor_tray_a = 0.970,
                                   .mlc_transmission = 0.015,
                                   .block_transmission = 0.035};
inline constexpr BeamModel beam_10x{.beam_id = "10X",
                                    .energy_mv = 10.0,
                                    .dmax_cm = 2.4,
                                    .output_cgy_per_mu = 1.000,
                                    .mu_per_cm = 0.0386,
                                    .scatter_amplitude_per_cm = 0.0346,
                                    .scatter_field_cm = 10.7,
                                    .scatter_depth_cm = 22.9,
                                    .surface_base = 0.18,
                                    .surface_field_gain = 0.25,
                                    .sc_amplitude = 0.14,
                                    .sc_scale_cm = 10.0,
                                    .sp_amplitude = 0.09,
                                    .sp_scale_cm = 12.0,
                                    .oar_horn_at_surface = 0.035,
                                    .oar_horn_slope_per_cm = 0.0015,
                                    .wedge_factor_w15 = 0.82,
                                    .wedge_factor_w30 = 0.69,
                                    .wedge_factor_w45 = 0.56,
                                    .wedge_factor_w60 = 0.46,
                                    .tray_factor_tray_a = 0.975,
                                    .mlc_transmission = 0.017,
                                    .block_transmission = 0.040};

// The model of a nominal energy; only 6 and 10 MV exist on this machine.
inline const BeamModel& beam_model(double energy_mv) {
  if (std::abs(energy_mv - 6.0) < 0.01) return beam_6x;
  if (std::abs(energy_mv - 10.0) < 0.01) return beam_10x;
  throw std::invalid_argument("FERN-LINAC-1 has no " + std::to_string(energy_mv) + " MV photon beam");
}

inline double dmax_cm(const BeamModel& m) { return m.dmax_cm; }

// cGy per MU at dmax for a 10x10 field at SSD 100 cm.
inline double output_cgy_per_mu(const BeamModel& m) { return m.output_cgy_per_mu; }

namespace detail {
inline double saturating(double amplitude, double scale_cm, double field_cm) {
  return 1.0 + amplitude * (1.0 - std::exp(-field_cm / scale_cm));
}
}  // namespace detail

// Collimator scatter factor vs the collimator field side at the isocentre; Sc(10) = 1.
inline double sc(const BeamModel& m, double collimator_field_cm) {
  return detail::saturating(m.sc_amplitude, m.sc_scale_cm, collimator_field_cm) /
         detail::saturating(m.sc_amplitude, m.sc_scale_cm, 10.0);
}

// Phantom scatter factor vs the field side in the phantom; Sp(10) = 1.
inline double sp(const BeamModel& m, double phantom_field_cm) {
  return detail::saturating(m.sp_amplitude, m.sp_scale_cm, phantom_field_cm) /
         detail::saturating(m.sp_amplitude, m.sp_scale_cm, 10.0);
}

// Share of the linear part in the build-up rise of the TMR (see tmr()).
inline constexpr double build_up_linear_share = 0.2;

// Tissue-maximum ratio at a depth for a square field side at that depth; TMR(dmax, s) = 1.
inline double tmr(const BeamModel& m, double depth_cm, double field_at_depth_cm) {
  if (depth_cm < m.dmax_cm) {
    // Build-up: a rise from the surface value to 1 at dmax, mostly a quarter sine plus a linear
    // part, so that TMR still climbs at dmax (>= 0.045/cm). That keeps the maximum of the PDD at
    // dmax even though the inverse-square factor in the PDD falls by about 2 %/cm there.
    const double surface =
        m.surface_base + m.surface_field_gain * (1.0 - std::exp(-field_at_depth_cm / 20.0));
    const double u = std::max(depth_cm, 0.0) / m.dmax_cm;
    const double rise =
        (1.0 - build_up_linear_share) * std::sin(std::numbers::pi / 2.0 * u) + build_up_linear_share * u;
    return surface + (1.0 - surface) * rise;
  }
  const double x_cm = depth_cm - m.dmax_cm;
  const double scatter = m.scatter_amplitude_per_cm *
                         (1.0 - std::exp(-field_at_depth_cm / m.scatter_field_cm)) * x_cm /
                         (1.0 + x_cm / m.scatter_depth_cm);
  return std::exp(-m.mu_per_cm * x_cm) * (1.0 + scatter);
}

// Percent depth dose for a square field side at the surface and an SSD, from TMR and Sp
// (DEVELOPERS.md, "Physics" relation solved for PDD): PDD = 100 TMR(d, s_d) Sp(s_d)/Sp(s_dm) ((f+dm)/(f+d))^2,
// s_d = s (f+d)/f, s_dm = s (f+dm)/f. PDD(dmax) = 100 for every field.
inline double pdd(const BeamModel& m, double depth_cm, double field_at_surface_cm, double ssd_cm) {
  const double f = ssd_cm;
  const double dm = m.dmax_cm;
  const double field_at_depth_cm = field_at_surface_cm * (f + depth_cm) / f;
  const double field_at_dmax_cm = field_at_surface_cm * (f + dm) / f;
  const double inverse_square = ((f + dm) / (f + depth_cm)) * ((f + dm) / (f + depth_cm));
  return 100.0 * tmr(m, depth_cm, field_at_depth_cm) * sp(m, field_at_depth_cm) / sp(m, field_at_dmax_cm) *
         inverse_square;
}

// In-field off-axis ratio at a depth, off-axis distance measured in the isocentre plane.
inline double oar(const BeamModel& m, double depth_cm, double off_axis_at_isocentre_cm) {
  const double horn = m.oar_horn_at_surface - m.oar_horn_slope_per_cm * depth_cm;
  const double r = off_axis_at_isocentre_cm / 20.0;
  return 1.0 + horn * r * r;
}

// Wedge factor of a physical wedge ("W15", "W30", "W45", "W60"); throws for any other id.
inline double wedge_factor(const BeamModel& m, const std::string& wedge_id) {
  if (wedge_id == "W15") return m.wedge_factor_w15;
  if (wedge_id == "W30") return m.wedge_factor_w30;
  if (wedge_id == "W45") return m.wedge_factor_w45;
  if (wedge_id == "W60") return m.wedge_factor_w60;
  throw std::invalid_argument("FERN-LINAC-1 has no wedge " + wedge_id);
}

// Nominal wedge angle of a wedge id, in degrees.
inline double wedge_angle_deg(const std::string& wedge_id) {
  if (wedge_id == "W15") return 15.0;
  if (wedge_id == "W30") return 30.0;
  if (wedge_id == "W45") return 45.0;
  if (wedge_id == "W60") return 60.0;
  throw std::invalid_argument("FERN-LINAC-1 has no wedge " + wedge_id);
}

// Tray transmission factor ("TRAY-A"); throws for any other id.
inline double tray_factor(const BeamModel& m, const std::string& tray_id) {
  if (tray_id == "TRAY-A") return m.tray_factor_tray_a;
  throw std::invalid_argument("FERN-LINAC-1 has no tray " + tray_id);
}

// Fraction of the open-field dose transmitted under closed MLC leaves.
inline double mlc_transmission(const BeamModel& m) { return m.mlc_transmission; }

// Leaf boundaries of the invented MLC in IEC Y at the isocentre (mm), mlc_leaf_pairs + 1 values.
inline std::vector<double> mlc_leaf_boundaries_mm() {
  std::vector<double> boundaries;
  const double first = -0.5 * mlc_leaf_pairs * mlc_leaf_width_mm;
  for (int i = 0; i <= mlc_leaf_pairs; ++i) boundaries.push_back(first + i * mlc_leaf_width_mm);
  return boundaries;
}

// Wedged off-axis ratio of a physical wedge at a depth and a signed distance x (cm) along the
// wedge gradient at the isocentre plane, thin end negative: the open beam's OAR times the wedge's
// transmission relative to the central axis, exp(-k x). k = mu tan(angle), so that an isodose tilts
// by the nominal wedge angle where the depth dose falls as exp(-mu d) (an invented model).
inline double wedge_oar(const BeamModel& m, const std::string& wedge_id, double depth_cm, double x_cm) {
  const double k_per_cm = m.mu_per_cm * std::tan(wedge_angle_deg(wedge_id) * std::numbers::pi / 180.0);
  return oar(m, depth_cm, std::abs(x_cm)) * std::exp(-k_per_cm * x_cm);
}

}  // namespace demo_linac
