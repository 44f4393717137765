#pragma once

// The deviation of one machine/energy/technique group against date, as an inline SVG individuals
// chart: the tolerance band, the centre line and the control limits, one point per checked beam
// linking to its check (private to the web module).

#include <countersign/store/control_chart.hpp>

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace countersign::web {

struct TrendPoint {
  std::int64_t check_id = 0;
  std::string checked_at_utc;
  int beam_number = 0;
  std::string beam_name;
  double deviation_percent = 0.0;
  std::optional<double> tolerance_percent;
  bool outside_tolerance = false;
};

// Seconds since 1970 of "YYYY-MM-DDThh:mm:ssZ" (0 when malformed).
[[nodiscard]] std::int64_t utc_seconds(const std::string& iso_utc);

[[nodiscard]] std::string trend_chart_svg(const std::vector<TrendPoint>& points,
                                          const std::optional<store::IndividualsChart>& chart);

}  // namespace countersign::web
