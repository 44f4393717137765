#include <countersign/store/control_chart.hpp>

#include <cmath>

namespace countersign::store {

std::optional<IndividualsChart> individuals_chart(std::span<const double> values) {
  if (values.size() < 2) return std::nullopt;
  IndividualsChart chart;
  chart.values = values.size();
  double sum = 0.0;
  double ranges = 0.0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    sum += values[i];
    if (i > 0) ranges += std::abs(values[i] - values[i - 1]);
  }
  chart.centre = sum / static_cast<double>(values.size());
  chart.mean_moving_range = ranges / static_cast<double>(values.size() - 1);
  chart.sigma_estimate = chart.mean_moving_range / d2_two_values;
  chart.upper_limit = chart.centre + 3.0 * chart.sigma_estimate;
  chart.lower_limit = chart.centre - 3.0 * chart.sigma_estimate;
  return chart;
}

}  // namespace countersign::store
