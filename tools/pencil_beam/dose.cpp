// The pencil-beam convolution at a point and the dose per MU (pencil_beam.hpp).

#include "pencil_beam.hpp"

#include <cmath>
#include <numbers>

namespace pencil_beam {

namespace {

// The share of a unit 1-D Gaussian (width sigma, centred at c) in each of n cells from x0 on.
std::vector<double> cell_shares(double x0, double cell, int n, double c, double sigma) {
  std::vector<double> shares(static_cast<std::size_t>(n));
  const double scale = 1.0 / (std::numbers::sqrt2 * sigma);
  double lower = std::erf((x0 - c) * scale);
  for (int k = 0; k < n; ++k) {
    const double upper = std::erf((x0 + (k + 1) * cell - c) * scale);
    shares[static_cast<std::size_t>(k)] = 0.5 * (upper - lower);
    lower = upper;
  }
  return shares;
}

double sterling_square_cm(const std::array<double, 4>& jaws_mm) {
  const double w = (jaws_mm[1] - jaws_mm[0]) / 10.0;
  const double l = (jaws_mm[3] - jaws_mm[2]) / 10.0;
  return 2.0 * w * l / (w + l);
}

double head_scatter_factor(const countersign::beamdata::BeamData& beam, const Opening& opening,
                           const Accessories& accessories) {
  const double jaws = beam.sc.at(sterling_square_cm(opening.jaws_mm)).value;
  if (!accessories.head_scatter_field_cm) return jaws;
  const double shaped = beam.sc.at(*accessories.head_scatter_field_cm).value;
  return std::pow(jaws, 1.0 - accessories.head_scatter_share) *
         std::pow(shaped, accessories.head_scatter_share);
}

}  // namespace

double convolve(const Kernel& kernel, const FluenceGrid& fluence, const PointGeometry& point, double sad_cm) {
  const auto& sigmas = kernel_sigmas_cm();
  const std::vector<double> weights = kernel.weights_at(point.depth_cm);
  // The kernel's widths are in the point's plane; the grid is at the isocentre plane.
  const double to_iso_mm = 10.0 * sad_cm / point.spd_cm;
  double total = 0.0;
  for (std::size_t i = 0; i < sigmas.size(); ++i) {
    if (weights[i] == 0.0) continue;
    const double sigma_mm = sigmas[i] * to_iso_mm;
    const auto gx = cell_shares(fluence.x0_mm, fluence.cell_mm, fluence.nx, point.x_mm, sigma_mm);
    const auto gy = cell_shares(fluence.y0_mm, fluence.cell_mm, fluence.ny, point.y_mm, sigma_mm);
    double sum = 0.0;
    for (int j = 0; j < fluence.ny; ++j) {
      const double row_weight = gy[static_cast<std::size_t>(j)];
      if (row_weight < 1e-12) continue;
      const double* row = &fluence.values[fluence.index(0, j)];
      double row_sum = 0.0;
      for (int k = 0; k < fluence.nx; ++k) row_sum += row[k] * gx[static_cast<std::size_t>(k)];
      sum += row_weight * row_sum;
    }
    total += weights[i] * sum;
  }
  return total;
}

double dose_per_mu_cgy(const countersign::beamdata::BeamData& beam, const Kernel& kernel,
                       const Opening& opening, const PointGeometry& point, double sad_cm,
                       const Accessories& accessories) {
  const FluenceGrid fluence = rasterise(opening);
  const double c = convolve(kernel, fluence, point, sad_cm);
  const double off_axis_cm = std::hypot(point.x_mm, point.y_mm) / 10.0;
  const double oar = beam.oar ? beam.oar->at(point.depth_cm, off_axis_cm).value : 1.0;
  const double sc = head_scatter_factor(beam, opening, accessories);
  const double inverse_square = std::pow(beam.calibration.source_to_point_cm() / point.spd_cm, 2);
  return beam.calibration.output_cgy_per_mu * sc * oar * c * accessories.wedge_factor *
         accessories.tray_factor * inverse_square;
}

}  // namespace pencil_beam
