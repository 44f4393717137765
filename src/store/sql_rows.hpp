#pragma once

// Rows of the store's tables as records (internal to the store module).

#include "sql_store.hpp"

#include <string>
#include <vector>

namespace countersign::store::detail {

// The columns select_checks reads, in the order check_from_row expects; `c` is the checks table.
extern const char* const check_columns;
[[nodiscard]] CheckRecord check_from_row(const Row& row);

extern const char* const beam_columns;  // check_id first
[[nodiscard]] BeamOutcome beam_from_row(const Row& row);

extern const char* const review_columns;
[[nodiscard]] Review review_from_row(const Row& row);

// What differs between the inputs of a replaced check and of the one replacing it (empty hashes of
// a first-version record are not compared).
[[nodiscard]] std::vector<InputChange> inputs_changed(
    const std::string& beamdata_before, const std::string& policy_before, const std::string& software_before,
    const std::string& beamdata_now, const std::string& policy_now, const std::string& software_now);

// Where the reviews of `check` (its beams attached) stand, given all its reviews oldest first.
[[nodiscard]] ReviewStatus review_status_of(const CheckRecord& check, const std::vector<Review>& reviews);

// "(1, 2, 3)" for an SQL IN list of ids.
[[nodiscard]] std::string id_list(const std::vector<std::int64_t>& ids, std::size_t from, std::size_t count);

}  // namespace countersign::store::detail
