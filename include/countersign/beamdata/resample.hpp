#pragma once

// Resampling of measured curves onto a table's grid, for `beamdata import`. Interpolation only:
// a grid node outside the measured range, or inside a gap between measured points wider than the
// stated limit, is refused with the reason, never bridged or extrapolated.

#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace countersign::beamdata {

enum class ResamplingMethod {
  linear,          // straight lines between measured points
  monotone_cubic,  // piecewise cubic Hermite that keeps the data's monotonicity (no overshoot):
                   // Fritsch & Carlson, SIAM J. Numer. Anal. 17 (1980) 238; slopes by the weighted
                   // harmonic mean of Fritsch & Butland, SIAM J. Sci. Stat. Comput. 5 (1984) 300
};

// "linear" or "monotone-cubic" (the command-line spelling), and a sentence for provenance notes.
[[nodiscard]] std::string_view to_string(ResamplingMethod method);
[[nodiscard]] std::string describe(ResamplingMethod method);

// Measured points along one axis: sorted, strictly increasing x (repeated positions averaged).
class Curve {
 public:
  Curve() = default;
  explicit Curve(std::vector<std::pair<double, double>> points);

  [[nodiscard]] const std::vector<double>& x() const { return x_; }
  [[nodiscard]] const std::vector<double>& y() const { return y_; }
  [[nodiscard]] bool empty() const { return x_.empty(); }
  [[nodiscard]] std::size_t repeated_positions() const { return repeated_; }

 private:
  std::vector<double> x_, y_;
  std::size_t repeated_ = 0;
};

// Why a node could not be resampled.
enum class ResampleRefusal { none, below_measured_range, above_measured_range, gap_too_wide };

struct ResampledValue {
  double value = 0.0;
  ResampleRefusal refusal = ResampleRefusal::none;
  double gap_from = 0.0;  // the measured points around the node (gap_too_wide), or the measured
  double gap_to = 0.0;    // range's end (below/above range)

  [[nodiscard]] bool ok() const { return refusal == ResampleRefusal::none; }
  // "no measurement below 0.1" / "measured points 5 and 12 are 7 apart (limit 5)".
  [[nodiscard]] std::string reason(double max_gap) const;
};

// The curve's value at x. A node that coincides with a measured point takes its value; a node
// between two points farther apart than max_gap is refused.
[[nodiscard]] ResampledValue resample(const Curve& curve, double x, ResamplingMethod method, double max_gap);

}  // namespace countersign::beamdata
