#pragma once

// The area a modulated beam opens over its delivery, for drawings: per leaf pair, from the smaller
// to the larger opening of each pair of control points that delivers meterset (leaves move
// linearly between control points), merged into non-overlapping rows, and the envelope of the jaws.

#include <countersign/geometry/aperture.hpp>
#include <countersign/plan/plan.hpp>

#include <optional>
#include <vector>

namespace countersign::geometry {

struct SweptOpening {
  JawOpening envelope;
  std::vector<ApertureRow> open;
};

// nullopt when no aperture of a delivering pair can be built.
[[nodiscard]] std::optional<SweptOpening> swept_opening(const plan::Beam& beam);

// Rows with the same leaf-pair band merged into non-overlapping intervals.
[[nodiscard]] std::vector<ApertureRow> merge_rows(std::vector<ApertureRow> rows);

// Widens `envelope` to hold `jaws` too; the first call (first == true) copies them and clears first.
void widen_envelope(JawOpening& envelope, const JawOpening& jaws, bool& first);

}  // namespace countersign::geometry
