#include <countersign/beamdata/resample.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>

namespace countersign::beamdata {

namespace {

int sign(double v) { return (v > 0.0) - (v < 0.0); }

// Slope at interior point k (Fritsch & Butland 1984): zero at a local extremum, else the weighted
// harmonic mean of the neighbouring secants.
double interior_slope(const std::vector<double>& h, const std::vector<double>& delta, std::size_t k) {
  const double d0 = delta[k - 1];
  const double d1 = delta[k];
  if (sign(d0) * sign(d1) <= 0) return 0.0;
  const double w1 = 2.0 * h[k] + h[k - 1];
  const double w2 = h[k] + 2.0 * h[k - 1];
  return (w1 + w2) / (w1 / d0 + w2 / d1);
}

// Slope at an end point: the three-point formula, limited so that the end interval stays
// monotone (as in Moler's pchip, Numerical Computing with MATLAB, 2004, §3.4).
double end_slope(double h0, double h1, double d0, double d1) {
  double slope = ((2.0 * h0 + h1) * d0 - h0 * d1) / (h0 + h1);
  if (sign(slope) != sign(d0)) {
    slope = 0.0;
  } else if (sign(d0) != sign(d1) && std::abs(slope) > std::abs(3.0 * d0)) {
    slope = 3.0 * d0;
  }
  return slope;
}

double hermite(double x, double x0, double x1, double y0, double y1, double m0, double m1) {
  const double h = x1 - x0;
  const double t = (x - x0) / h;
  const double t2 = t * t;
  const double t3 = t2 * t;
  return (2 * t3 - 3 * t2 + 1) * y0 + (t3 - 2 * t2 + t) * h * m0 + (-2 * t3 + 3 * t2) * y1 +
         (t3 - t2) * h * m1;
}

// Slopes at both ends of interval i of the monotone cubic.
std::pair<double, double> interval_slopes(const std::vector<double>& x, const std::vector<double>& y,
                                          std::size_t i) {
  const std::size_t n = x.size();
  if (n == 2) {
    const double d = (y[1] - y[0]) / (x[1] - x[0]);
    return {d, d};
  }
  // Secants and widths of the (at most four) intervals around interval i.
  const std::size_t first = i == 0 ? 0 : i - 1;
  const std::size_t last = std::min(n - 2, i + 1);
  std::vector<double> h(n - 1, 0.0), delta(n - 1, 0.0);
  for (std::size_t k = first; k <= last; ++k) {
    h[k] = x[k + 1] - x[k];
    delta[k] = (y[k + 1] - y[k]) / h[k];
  }
  const auto slope_at = [&](std::size_t k) {
    if (k == 0) return end_slope(h[0], h[1], delta[0], delta[1]);
    if (k == n - 1) return end_slope(h[n - 2], h[n - 3], delta[n - 2], delta[n - 3]);
    return interior_slope(h, delta, k);
  };
  return {slope_at(i), slope_at(i + 1)};
}

}  // namespace

std::string_view to_string(ResamplingMethod method) {
  return method == ResamplingMethod::linear ? "linear" : "monotone-cubic";
}

std::string describe(ResamplingMethod method) {
  if (method == ResamplingMethod::linear) return "linear interpolation between measured points";
  return "monotone piecewise cubic Hermite interpolation (Fritsch & Carlson 1980, slopes of Fritsch & "
         "Butland "
         "1984); no overshoot between measured points";
}

Curve::Curve(std::vector<std::pair<double, double>> points) {
  std::stable_sort(points.begin(), points.end(),
                   [](const auto& a, const auto& b) { return a.first < b.first; });
  for (std::size_t i = 0; i < points.size();) {
    std::size_t j = i;
    double sum = 0.0;
    while (j < points.size() && points[j].first == points[i].first) sum += points[j++].second;
    x_.push_back(points[i].first);
    y_.push_back(sum / static_cast<double>(j - i));
    repeated_ += j - i - 1;
    i = j;
  }
}

std::string ResampledValue::reason(double max_gap) const {
  std::ostringstream text;
  switch (refusal) {
    case ResampleRefusal::below_measured_range:
      text << "no measurement at or below it (measured from " << gap_to << ")";
      break;
    case ResampleRefusal::above_measured_range:
      text << "no measurement at or above it (measured up to " << gap_to << ")";
      break;
    case ResampleRefusal::gap_too_wide:
      text << "the measured points " << gap_from << " and " << gap_to << " around it are "
           << gap_to - gap_from << " apart (limit " << max_gap << ")";
      break;
    case ResampleRefusal::none:
      break;
  }
  return text.str();
}

ResampledValue resample(const Curve& curve, double x, ResamplingMethod method, double max_gap) {
  const auto& xs = curve.x();
  const auto& ys = curve.y();
  ResampledValue r;
  if (xs.empty() || !(x >= xs.front())) {
    r.refusal = ResampleRefusal::below_measured_range;
    r.gap_to = xs.empty() ? 0.0 : xs.front();
    return r;
  }
  if (x > xs.back()) {
    r.refusal = ResampleRefusal::above_measured_range;
    r.gap_to = xs.back();
    return r;
  }
  const auto upper = std::lower_bound(xs.begin(), xs.end(), x);
  const auto k = static_cast<std::size_t>(std::distance(xs.begin(), upper));
  if (xs[k] == x) {
    r.value = ys[k];
    return r;
  }
  const std::size_t i = k - 1;
  if (xs[k] - xs[i] > max_gap) {
    r.refusal = ResampleRefusal::gap_too_wide;
    r.gap_from = xs[i];
    r.gap_to = xs[k];
    return r;
  }
  if (method == ResamplingMethod::linear || xs.size() == 2) {
    const double w = (x - xs[i]) / (xs[k] - xs[i]);
    r.value = (1.0 - w) * ys[i] + w * ys[k];
    return r;
  }
  const auto [m0, m1] = interval_slopes(xs, ys, i);
  r.value = hermite(x, xs[i], xs[k], ys[i], ys[k], m0, m1);
  return r;
}

}  // namespace countersign::beamdata
