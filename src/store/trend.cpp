#include <countersign/store/trend.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <tuple>

namespace countersign::store {

namespace {

// Welford's running mean and sum of squared differences: stable for long histories.
struct Accumulator {
  std::size_t count = 0;
  double mean = 0.0;
  double squares = 0.0;
  double minimum = 0.0;
  double maximum = 0.0;

  void add(double value) {
    ++count;
    const double delta = value - mean;
    mean += delta / static_cast<double>(count);
    squares += delta * (value - mean);
    minimum = count == 1 ? value : std::min(minimum, value);
    maximum = count == 1 ? value : std::max(maximum, value);
  }
};

// Energies are grouped on a 0.01 MV grid, the same tolerance the beam-data match uses.
std::optional<long long> energy_key(const std::optional<double>& energy_mv) {
  if (!energy_mv) return std::nullopt;
  return std::llround(*energy_mv * 100.0);
}

}  // namespace

std::vector<TrendGroup> summarize_trends(const std::vector<CheckRecord>& checks, const CheckFilter& filter) {
  using Key = std::tuple<std::string, std::optional<long long>, std::string>;
  std::map<Key, std::pair<TrendGroup, Accumulator>> groups;

  for (const auto& check : checks) {
    for (const auto& beam : check.beams) {
      if (beam.verdict == BeamVerdict::skipped || !filter.beam_matches(beam)) continue;
      auto [it, inserted] = groups.try_emplace(Key{beam.machine, energy_key(beam.energy_mv), beam.technique});
      auto& [group, accumulator] = it->second;
      if (inserted) {
        group.machine = beam.machine;
        group.energy_mv = beam.energy_mv;
        group.technique = beam.technique;
      }
      const bool has_difference =
          (beam.verdict == BeamVerdict::within_tolerance || beam.verdict == BeamVerdict::outside_tolerance) &&
          beam.deviation_percent && std::isfinite(*beam.deviation_percent);
      if (!has_difference) {
        ++group.not_checked_beams;
        continue;
      }
      accumulator.add(*beam.deviation_percent);
      if (beam.verdict == BeamVerdict::outside_tolerance) ++group.outside_tolerance_beams;
    }
  }

  std::vector<TrendGroup> result;
  result.reserve(groups.size());
  for (auto& [key, entry] : groups) {
    auto& [group, accumulator] = entry;
    group.checked_beams = accumulator.count;
    if (accumulator.count > 0) {
      group.mean_deviation_percent = accumulator.mean;
      group.min_deviation_percent = accumulator.minimum;
      group.max_deviation_percent = accumulator.maximum;
      group.share_outside_tolerance =
          static_cast<double>(group.outside_tolerance_beams) / static_cast<double>(accumulator.count);
    }
    if (accumulator.count > 1) {
      group.sd_deviation_percent =
          std::sqrt(accumulator.squares / static_cast<double>(accumulator.count - 1));
    }
    result.push_back(std::move(group));
  }
  return result;
}

}  // namespace countersign::store
