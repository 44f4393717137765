#pragma once

// The individuals control chart of a series of beam deviations (one value per checked beam, in the
// order they were checked): centre line at the mean, control limits at the mean ± 3 σ̂ with σ̂ estimated
// from the mean moving range of consecutive values, σ̂ = MR̄ / d2, d2 = 1.128 for ranges of two values.
// So the limits are mean ± 2.66 MR̄. Source: SAS/QC User's Guide, SHEWHART procedure, IRCHART
// statement, "Constructing Charts for Individual Measurements and Moving Ranges" (moving ranges of
// n = 2 consecutive values, σ̂ = R̄ / d2(n), limits X̄ ± 3σ̂); d2(2) = 1.128 from the standard table
// of control-chart constants (Montgomery, "Introduction to Statistical Quality Control"; from memory).

#include <cstddef>
#include <optional>
#include <span>

namespace countersign::store {

// d2 for moving ranges of two consecutive values (see above).
inline constexpr double d2_two_values = 1.128;

struct IndividualsChart {
  std::size_t values = 0;
  double centre = 0.0;             // the mean of the values
  double mean_moving_range = 0.0;  // MR̄ = mean of |x[i] - x[i-1]| over the n - 1 consecutive pairs
  double sigma_estimate = 0.0;     // MR̄ / d2
  double upper_limit = 0.0;        // centre + 3 σ̂
  double lower_limit = 0.0;        // centre - 3 σ̂
  [[nodiscard]] bool beyond_limits(double value) const { return value > upper_limit || value < lower_limit; }
};

// The chart of `values` in time order; nullopt below two values (no moving range).
[[nodiscard]] std::optional<IndividualsChart> individuals_chart(std::span<const double> values);

}  // namespace countersign::store
