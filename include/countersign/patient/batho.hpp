#pragma once

// Batho power-law correction for a point below layers of different density (Batho 1964; the
// generalisation to any number of layers by Sontag and Cunningham 1978; form as in Khan, "The
// Physics of Radiation Therapy", inhomogeneity chapter; formulas from memory):
//
//   CF = prod over layers m = 1..N (surface to the point's layer) of R(X_m) ^ (rho_m - rho_(m-1)),
//
// rho_0 = 1 (water), X_m the distance from the point up to the upstream face of layer m, R the
// tissue-air ratio of the field at the point (power_law). The modified form (for megavoltage beams,
// "A modified power-law formula for inhomogeneity corrections in beams of high-energy x rays",
// Med. Phys. 1991, doi 10.1118/1.596665) uses the tissue-maximum ratio at X_m + the build-up depth.
// The ratio of mass energy-absorption coefficients of the point's medium to water is taken as 1
// (dose to water-like tissue). CF multiplies the homogeneous dose at the geometric depth.

#include <countersign/patient/ray_depth.hpp>

#include <functional>
#include <optional>
#include <span>

namespace countersign::patient {

enum class BathoForm {
  power_law,  // R = TAR (or the ratio the caller gives) at X_m
  modified,   // R = TMR at X_m + build-up depth
};

// nullopt when the ratio is not positive and finite at some X_m (e.g. a table that does not reach).
[[nodiscard]] std::optional<double> batho_correction(
    std::span<const DensityLayer> layers_from_surface,
    const std::function<double(double depth_cm)>& tissue_ratio, BathoForm form,
    double buildup_depth_cm = 0.0);

}  // namespace countersign::patient
