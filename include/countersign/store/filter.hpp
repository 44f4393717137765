#pragma once

// Which checks a listing includes. Every set field must match; an empty filter lists every check,
// flagged and superseded ones included. Values are validated where they come from outside
// (parse_time_bound): a filter that cannot match because its value is malformed is an error, never
// an empty list.

#include <countersign/store/verdict.hpp>
#include <countersign/util/error.hpp>

#include <cstddef>
#include <optional>
#include <string>
#include <string_view>

namespace countersign::store {

enum class Superseded { include, exclude };

enum class ReviewFilter {
  any,
  open,      // flagged or not checked, and no decision covers it yet
  reviewed,  // at least one review recorded
};

struct CheckFilter {
  std::optional<std::string> sop_instance_uid;
  std::optional<std::string> patient_id;
  std::optional<PlanVerdict> verdict;
  // Bounds on checked_at_utc, inclusive, as prefixes of its ISO 8601 form ("2026", "2026-12",
  // "2026-12-01", "2026-12-01T08", "2026-12-01T08:15", "2026-12-01T08:15:00Z").
  std::optional<std::string> since_utc;
  std::optional<std::string> until_utc;
  // Beam-level fields select the checks with at least one matching beam (and the beams in trends).
  std::optional<std::string> machine;
  std::optional<double> energy_mv;  // matched within 0.01 MV
  std::optional<std::string> technique;
  std::optional<std::string> station;
  Superseded superseded = Superseded::include;
  ReviewFilter review = ReviewFilter::any;
  std::optional<std::size_t> limit;  // newest first
  std::size_t offset = 0;            // skip this many of the newest first (pages of a list)

  [[nodiscard]] bool beam_matches(const BeamOutcome& beam) const;
  [[nodiscard]] bool has_beam_fields() const { return machine || energy_mv || technique; }
};

// A time bound as the user typed it, validated and normalised to a prefix of checked_at_utc:
// "2026-12-01", "2026-12-01T08:15", "2026-12-01 08:15:00" and "2026-12-01T08:15:00Z" are accepted;
// "2026-13-01", "yesterday" or "2026-12-1" are errors (kind usage) naming `option`.
[[nodiscard]] Expected<std::string> parse_time_bound(std::string_view text, std::string_view option);

}  // namespace countersign::store
