#pragma once

// The sector-integration dose beside the equivalent-square dose (Sterling's 4A/P of the same
// opening), for the beam and for every part that used sector integration, with their difference.
// Numbers the engine computed; the terminal text, `explain` (text and JSON) and the record show them.

#include <countersign/engine/beam_dose.hpp>

#include <vector>

namespace countersign::report {

struct ScatterComparison {
  int part = 0;  // 0: the whole beam; else the part's 1-based position in BeamDose::segments
  int from_control_point = 0;
  double sector_dose_gy = 0.0;             // the dose computed (sector integration where it applied)
  double equivalent_square_dose_gy = 0.0;  // the same beam or part through the equivalent square
  double difference_percent = 0.0;         // 100 (sector − equivalent square) / equivalent square
};

// Empty when no dose was computed or no part used sector integration. Else the beam first, then,
// for a beam of several parts, each part that used sector integration in delivery order.
[[nodiscard]] std::vector<ScatterComparison> scatter_comparisons(const engine::BeamDose& dose);

}  // namespace countersign::report
