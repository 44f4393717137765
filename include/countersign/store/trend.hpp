#pragma once

// Trend statistics over the history, per machine, energy and technique: the count of checked beams,
// the mean and standard deviation of their differences, and the share outside tolerance. AAPM TG-114
// (2011) recommends that a clinic derive its own action levels from such a distribution.

#include <countersign/store/filter.hpp>
#include <countersign/store/records.hpp>

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace countersign::store {

struct TrendGroup {
  std::string machine;
  std::optional<double> energy_mv;
  std::string technique;
  std::size_t checked_beams = 0;  // beams with a difference: within or outside tolerance
  std::size_t outside_tolerance_beams = 0;
  std::size_t not_checked_beams = 0;             // counted apart; they have no difference
  std::optional<double> mean_deviation_percent;  // absent when no beam was checked
  std::optional<double> sd_deviation_percent;    // sample standard deviation (n - 1); absent below 2 beams
  std::optional<double> min_deviation_percent;
  std::optional<double> max_deviation_percent;
  std::optional<double> share_outside_tolerance;  // outside / checked, 0..1; absent when none checked
};

// Groups the beams of `checks` that pass `filter.beam_matches`, sorted by machine, energy, technique.
// Skipped beams (setup fields, beams without MU) are not counted at all.
[[nodiscard]] std::vector<TrendGroup> summarize_trends(const std::vector<CheckRecord>& checks,
                                                       const CheckFilter& filter);

}  // namespace countersign::store
