#pragma once

// Internal steps of the plan reader. Each reads one part of the dataset into the model and
// records the first problem in the reader's ErrorSink.

#include "item_reader.hpp"

#include <countersign/plan/plan.hpp>

#include <optional>
#include <vector>

namespace countersign::dicom::detail {

// Beam Sequence (300A,00B0): every beam with its carried-forward control points.
[[nodiscard]] std::vector<plan::Beam> parse_beams(const ItemReader& dataset);

// Fraction Group Sequence (300A,0070).
[[nodiscard]] std::vector<plan::FractionGroup> parse_fraction_groups(
    const ItemReader& dataset, const std::vector<plan::DoseReference>& dose_refs);

// Dose-point distances of the first item of a Beam Dose Verification Control Point Sequence.
[[nodiscard]] plan::DosePointDistances parse_verification_distances(const ItemReader& item);

// Cross-references between the parts (beam numbers, setups, dose references).
void check_references(const ItemReader& dataset, const plan::Plan& plan);

}  // namespace countersign::dicom::detail
