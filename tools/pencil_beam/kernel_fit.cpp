// The kernel of the pencil-beam model and its fit to a beam's tables (pencil_beam.hpp).

#include "pencil_beam.hpp"

#include <Eigen/Dense>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <stdexcept>

namespace pencil_beam {

namespace {

// Share of a unit 2-D Gaussian of width sigma inside a square of side s centred on it.
double gaussian_in_square(double sigma_cm, double side_cm) {
  const double e = std::erf(side_cm / (2.0 * std::numbers::sqrt2 * sigma_cm));
  return e * e;
}

struct DepthFit {
  std::vector<double> weights;
  double cost = std::numeric_limits<double>::infinity();
};

// Least squares restricted to the columns in `mask` (a bit per Gaussian); the others are 0.
DepthFit solve_subset(const Eigen::MatrixXd& a, const Eigen::VectorXd& b, unsigned mask) {
  const auto n = static_cast<unsigned>(a.cols());
  std::vector<Eigen::Index> columns;
  for (unsigned i = 0; i < n; ++i) {
    if ((mask >> i) & 1U) columns.push_back(static_cast<Eigen::Index>(i));
  }
  Eigen::MatrixXd sub(a.rows(), static_cast<Eigen::Index>(columns.size()));
  for (std::size_t k = 0; k < columns.size(); ++k) sub.col(static_cast<Eigen::Index>(k)) = a.col(columns[k]);
  const Eigen::VectorXd x = sub.colPivHouseholderQr().solve(b);
  DepthFit fit;
  fit.weights.assign(n, 0.0);
  for (std::size_t k = 0; k < columns.size(); ++k) {
    const double w = x(static_cast<Eigen::Index>(k));
    if (w < 0.0) return {};  // not admissible: a kernel may not be negative
    fit.weights[static_cast<std::size_t>(columns[k])] = w;
  }
  fit.cost = (sub * x - b).squaredNorm();
  return fit;
}

// Non-negative least squares by trying every subset of Gaussians (2^6 small problems): exact, and
// simple enough to read.
std::vector<double> fit_depth(const std::vector<double>& fields_cm, const std::vector<double>& targets) {
  const auto& sigmas = kernel_sigmas_cm();
  const auto rows = static_cast<Eigen::Index>(fields_cm.size());
  const auto cols = static_cast<Eigen::Index>(sigmas.size());
  Eigen::MatrixXd a(rows, cols);
  Eigen::VectorXd b(rows);
  for (Eigen::Index r = 0; r < rows; ++r) {
    const double t = targets[static_cast<std::size_t>(r)];
    for (Eigen::Index c = 0; c < cols; ++c) {
      // Divided by the target: least squares in relative error.
      a(r, c) =
          gaussian_in_square(sigmas[static_cast<std::size_t>(c)], fields_cm[static_cast<std::size_t>(r)]) / t;
    }
    b(r) = 1.0;
  }
  DepthFit best;
  for (unsigned mask = 1; mask < (1U << sigmas.size()); ++mask) {
    DepthFit fit = solve_subset(a, b, mask);
    if (fit.cost < best.cost) best = std::move(fit);
  }
  if (best.weights.empty()) throw std::runtime_error("no non-negative kernel fits the tables");
  return best.weights;
}

}  // namespace

const std::vector<double>& kernel_sigmas_cm() {
  // Invented widths spanning a penumbra (0.3 cm) to the largest tabulated fields.
  static const std::vector<double> sigmas{0.3, 1.0, 2.5, 5.0, 10.0, 20.0};
  return sigmas;
}

Kernel::Kernel(std::vector<double> depths_cm, std::vector<std::vector<double>> weights,
               std::vector<FitResidual> residuals)
    : depths_cm_(std::move(depths_cm)), weights_(std::move(weights)), residuals_(std::move(residuals)) {
  if (depths_cm_.empty() || depths_cm_.size() != weights_.size())
    throw std::invalid_argument("a kernel needs weights at each of its depths");
}

std::vector<double> Kernel::weights_at(double depth_cm) const {
  if (depth_cm <= depths_cm_.front()) return weights_.front();
  if (depth_cm >= depths_cm_.back()) return weights_.back();
  const auto upper = std::upper_bound(depths_cm_.begin(), depths_cm_.end(), depth_cm);
  const auto k = static_cast<std::size_t>(upper - depths_cm_.begin());
  const double t = (depth_cm - depths_cm_[k - 1]) / (depths_cm_[k] - depths_cm_[k - 1]);
  std::vector<double> w(weights_[k].size());
  for (std::size_t i = 0; i < w.size(); ++i) w[i] = (1.0 - t) * weights_[k - 1][i] + t * weights_[k][i];
  return w;
}

double Kernel::max_abs_residual_percent() const {
  double worst = 0.0;
  for (const auto& r : residuals_) worst = std::max(worst, std::abs(r.percent()));
  return worst;
}

Kernel fit_kernel(const countersign::beamdata::BeamData& beam) {
  const auto& fields = beam.tmr.columns();
  const auto& sigmas = kernel_sigmas_cm();
  std::vector<double> depths;
  std::vector<std::vector<double>> weights;
  std::vector<FitResidual> residuals;
  for (std::size_t r = 0; r < beam.tmr.rows().size(); ++r) {
    const double depth = beam.tmr.rows()[r];
    std::vector<double> targets;
    for (std::size_t c = 0; c < fields.size(); ++c)
      targets.push_back(beam.sp.at(fields[c]).value * beam.tmr.cell(r, c));
    auto w = fit_depth(fields, targets);
    for (std::size_t c = 0; c < fields.size(); ++c) {
      double model = 0.0;
      for (std::size_t i = 0; i < sigmas.size(); ++i)
        model += w[i] * gaussian_in_square(sigmas[i], fields[c]);
      residuals.push_back({depth, fields[c], targets[c], model});
    }
    depths.push_back(depth);
    weights.push_back(std::move(w));
  }
  return Kernel(std::move(depths), std::move(weights), std::move(residuals));
}

}  // namespace pencil_beam
