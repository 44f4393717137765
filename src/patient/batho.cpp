#include <countersign/patient/batho.hpp>

#include <cmath>

namespace countersign::patient {

std::optional<double> batho_correction(std::span<const DensityLayer> layers_from_surface,
                                       const std::function<double(double depth_cm)>& tissue_ratio,
                                       BathoForm form, double buildup_depth_cm) {
  // X_m for m = N..1 is a running sum from the point upwards.
  double factor = 1.0;
  double distance_cm = 0.0;
  for (std::size_t m = layers_from_surface.size(); m-- > 0;) {
    distance_cm += layers_from_surface[m].thickness_mm / 10.0;
    const double above = m == 0 ? 1.0 : layers_from_surface[m - 1].relative_density;
    const double exponent = layers_from_surface[m].relative_density - above;
    if (exponent == 0.0) continue;
    const double x_cm = form == BathoForm::modified ? distance_cm + buildup_depth_cm : distance_cm;
    const double ratio = tissue_ratio(x_cm);
    if (!std::isfinite(ratio) || ratio <= 0.0) return std::nullopt;
    factor *= std::pow(ratio, exponent);
  }
  return factor;
}

}  // namespace countersign::patient
