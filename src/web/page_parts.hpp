#pragma once

// Pieces the pages share (private to the web module).

#include <countersign/store/records.hpp>
#include <countersign/store/verdict.hpp>

#include <optional>
#include <string>
#include <string_view>

namespace countersign::web::parts {

// HTML-escaped text (report::html_escape): every plan- or user-derived string goes through it.
[[nodiscard]] std::string esc(std::string_view text);

// A verdict as a labelled badge: the words are always written out, and each verdict has its own
// border style as well as colour, so that print in black and white keeps them apart; "not checked"
// never looks like a pass.
[[nodiscard]] std::string badge(store::PlanVerdict verdict);
[[nodiscard]] std::string badge(store::BeamVerdict verdict);
[[nodiscard]] std::string verdict_words(store::PlanVerdict verdict);
[[nodiscard]] std::string review_words(store::ReviewStatus status);
[[nodiscard]] std::string review_badge(store::ReviewStatus status);

// "+1.23" (sign always), or an en dash when absent.
[[nodiscard]] std::string signed_percent(const std::optional<double>& value, int decimals = 2);
[[nodiscard]] std::string fixed(const std::optional<double>& value, int decimals);
// "6 MV" or "–".
[[nodiscard]] std::string energy_text(const std::optional<double>& energy_mv);
// "2026-12-02 08:15 UTC" from "2026-12-02T08:15:00Z".
[[nodiscard]] std::string time_text(const std::string& iso_utc);

// The hidden field every POST form carries.
[[nodiscard]] std::string csrf_field(const std::string& token);

// Percent-encodes a query value.
[[nodiscard]] std::string url_encode(std::string_view text);

}  // namespace countersign::web::parts
