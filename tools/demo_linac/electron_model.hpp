#pragma once

// The electron beams of FERN-LINAC-1, the INVENTED linear accelerator of the fictional Fernhollow
// Radiotherapy Unit: 6, 9 and 12 MeV with square applicators of 6, 10, 15 and 20 cm. Demo data only,
// not a model of any real machine and not for clinical use.
//
// Two uses, as for the photon model (model.hpp): make_demo_beamdata tabulates it into
// beamdata/FERN-LINAC-1/<E>E/, and make_demo_plans uses the continuous functions as the stand-in
// planning system of the electron demo plans. All functions are pure.
//
// Construction (rules of thumb of the trade as recalled, "common practice, no source", with
// invented coefficients):
// - Depths in water scale with the nominal energy E (MeV): the depth of 50 % dose of a broad beam
//   R50 = E / 2.4 cm, the practical range Rp = E / 2 cm (from memory: R50 about E/2.33, Rp about E/2).
// - Depth dose of a cutout of equivalent square s (cm): a build-up from the surface value
//   Ds = 0.70 + 0.012 E towards 1, times a logistic fall-off 1 / (1 + exp((d - R50(s)) / w)),
//   w = 0.115 R50, plus a bremsstrahlung tail 0.002 E (0.2 % per MeV); small cutouts lose lateral
//   equilibrium, so R50(s) = R50 (1 - 0.25 exp(-s / (0.6 Rp))) and the build-up is faster
//   (rate 3 (1 + 0.5 exp(-s / Rp)) / d_ref). Each column is normalised to 100 at its maximum over
//   the tabulated depths, as the format requires.
// - Cutout factor relative to the applicator's open field a: f(s) / f(a), f(s) = 1 - 0.3 exp(-s /
//   (0.45 Rp)) (lateral equilibrium is reached at larger fields for higher energies).
// - Applicator factor relative to the 10 cm applicator: 1 - 0.0045 (10 - a) below 10 cm,
//   1 - 0.0015 (a - 10) above.
// - Effective SSD (cm): 94 + 0.5 E - 18 exp(-a / 8) (shorter for small applicators and low energies;
//   within 15 % of the standard SSD, as FORMAT.md requires).
// - Output 1.000 cGy/MU at dmax of the 10 cm applicator, SSD 100 cm, for every energy.

#include <cmath>
#include <string>
#include <vector>

namespace demo_linac {

inline const std::vector<double> electron_energies_mev{6.0, 9.0, 12.0};
inline const std::vector<double> applicator_fields_cm{6.0, 10.0, 15.0, 20.0};
inline constexpr double electron_reference_applicator_cm = 10.0;
inline constexpr double electron_standard_ssd_cm = 100.0;
// SSDs at which the electron data is meant to be trusted (invented).
inline constexpr double electron_trusted_ssd_min_cm = 95.0;
inline constexpr double electron_trusted_ssd_max_cm = 120.0;

// The demo clinic's bolus sheets (invented): id and water-equivalent thickness (cm).
struct BolusModel {
  const char* id;
  double thickness_cm;
};
inline const std::vector<BolusModel> demo_boli{{"FERN-BOLUS-5MM", 0.5}, {"FERN-BOLUS-10MM", 1.0}};

inline std::string electron_beam_id(double energy_mev) {
  return std::to_string(static_cast<int>(std::lround(energy_mev))) + "E";
}
inline std::string applicator_id(double field_cm) {
  return "A" + std::to_string(static_cast<int>(std::lround(field_cm)));
}

inline double r50_cm(double energy_mev) { return energy_mev / 2.4; }
inline double practical_range_cm(double energy_mev) { return energy_mev / 2.0; }

// The cutout's R50: shallower for cutouts too small for lateral equilibrium.
inline double r50_cm(double energy_mev, double cutout_cm) {
  return r50_cm(energy_mev) * (1.0 - 0.25 * std::exp(-cutout_cm / (0.6 * practical_range_cm(energy_mev))));
}

// Un-normalised depth dose of a cutout of equivalent square `cutout_cm` at depth d (cm).
inline double electron_depth_dose(double energy_mev, double depth_cm, double cutout_cm) {
  const double r50 = r50_cm(energy_mev, cutout_cm);
  const double width_cm = 0.115 * r50_cm(energy_mev);
  const double surface = 0.70 + 0.012 * energy_mev;
  const double reference_depth_cm = 0.233 * energy_mev;  // where the build-up of a broad beam ends
  const double rate =
      3.0 * (1.0 + 0.5 * std::exp(-cutout_cm / practical_range_cm(energy_mev))) / reference_depth_cm;
  const double buildup = 1.0 - (1.0 - surface) * std::exp(-rate * depth_cm);
  const double falloff = 1.0 / (1.0 + std::exp((depth_cm - r50) / width_cm));
  return buildup * falloff + 0.002 * energy_mev;
}

// The depth of maximum dose of a cutout (fine search, 0.01 cm steps to Rp).
inline double electron_dmax_cm(double energy_mev, double cutout_cm) {
  double best_depth = 0.0;
  double best = 0.0;
  for (double d = 0.0; d <= practical_range_cm(energy_mev); d += 0.01) {
    const double value = electron_depth_dose(energy_mev, d, cutout_cm);
    if (value > best) {
      best = value;
      best_depth = d;
    }
  }
  return best_depth;
}

// Percent depth dose, 100 at the cutout's own maximum (continuous: the planning system's view).
inline double electron_pdd(double energy_mev, double depth_cm, double cutout_cm) {
  const double peak = electron_depth_dose(energy_mev, electron_dmax_cm(energy_mev, cutout_cm), cutout_cm);
  return 100.0 * electron_depth_dose(energy_mev, depth_cm, cutout_cm) / peak;
}

inline double cutout_factor(double energy_mev, double applicator_cm, double cutout_cm) {
  const double length_cm = 0.45 * practical_range_cm(energy_mev);
  const auto f = [&](double s) { return 1.0 - 0.3 * std::exp(-s / length_cm); };
  return f(cutout_cm) / f(applicator_cm);
}

inline double applicator_factor(double applicator_cm) {
  return applicator_cm <= 10.0 ? 1.0 - 0.0045 * (10.0 - applicator_cm)
                               : 1.0 - 0.0015 * (applicator_cm - 10.0);
}

inline double effective_ssd_cm(double energy_mev, double applicator_cm) {
  return 94.0 + 0.5 * energy_mev - 18.0 * std::exp(-applicator_cm / 8.0);
}

inline constexpr double electron_output_cgy_per_mu = 1.0;

}  // namespace demo_linac
