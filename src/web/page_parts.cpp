#include "page_parts.hpp"

#include <countersign/report/html_escape.hpp>

#include <array>
#include <cmath>
#include <cstdio>

namespace countersign::web::parts {

std::string esc(std::string_view text) { return report::html_escape(text); }

namespace {

std::string badge_html(std::string_view css_class, std::string_view mark, std::string_view words) {
  return "<span class=\"badge " + std::string{css_class} + "\"><span class=\"mark\" aria-hidden=\"true\">" +
         std::string{mark} + "</span> " + std::string{words} + "</span>";
}

}  // namespace

std::string verdict_words(store::PlanVerdict verdict) {
  switch (verdict) {
    case store::PlanVerdict::within_tolerance:
      return "Within tolerance";
    case store::PlanVerdict::outside_tolerance:
      return "Outside tolerance";
    case store::PlanVerdict::not_checked:
      return "Not checked";
  }
  return "Not checked";
}

std::string badge(store::PlanVerdict verdict) {
  switch (verdict) {
    case store::PlanVerdict::within_tolerance:
      return badge_html("within", "&#10003;", "Within tolerance");
    case store::PlanVerdict::outside_tolerance:
      return badge_html("outside", "&#10007;", "Outside tolerance");
    case store::PlanVerdict::not_checked:
      return badge_html("not-checked", "?", "Not checked");
  }
  return badge_html("not-checked", "?", "Not checked");
}

std::string badge(store::BeamVerdict verdict) {
  switch (verdict) {
    case store::BeamVerdict::within_tolerance:
      return badge(store::PlanVerdict::within_tolerance);
    case store::BeamVerdict::outside_tolerance:
      return badge(store::PlanVerdict::outside_tolerance);
    case store::BeamVerdict::not_checked:
      return badge(store::PlanVerdict::not_checked);
    case store::BeamVerdict::skipped:
      return badge_html("skipped", "&#8211;", "Skipped");
  }
  return badge(store::PlanVerdict::not_checked);
}

std::string review_words(store::ReviewStatus status) {
  switch (status) {
    case store::ReviewStatus::not_needed:
      return "No review needed";
    case store::ReviewStatus::open:
      return "Awaiting review";
    case store::ReviewStatus::accepted:
      return "Accepted";
    case store::ReviewStatus::rejected:
      return "Rejected";
  }
  return "Awaiting review";
}

std::string review_badge(store::ReviewStatus status) {
  const char* css = status == store::ReviewStatus::open       ? "review-open"
                    : status == store::ReviewStatus::rejected ? "review-rejected"
                                                              : "review-done";
  return "<span class=\"review " + std::string{css} + "\">" + review_words(status) + "</span>";
}

std::string fixed(const std::optional<double>& value, int decimals) {
  if (!value || !std::isfinite(*value)) return "&#8211;";
  std::array<char, 64> text{};
  std::snprintf(text.data(), text.size(), "%.*f", decimals, *value);
  return text.data();
}

std::string signed_percent(const std::optional<double>& value, int decimals) {
  if (!value || !std::isfinite(*value)) return "&#8211;";
  std::array<char, 64> text{};
  std::snprintf(text.data(), text.size(), "%+.*f", decimals, *value);
  return text.data();
}

std::string energy_text(const std::optional<double>& energy_mv) {
  if (!energy_mv) return "&#8211;";
  std::array<char, 64> text{};
  std::snprintf(text.data(), text.size(), "%g MV", *energy_mv);
  return text.data();
}

std::string time_text(const std::string& iso_utc) {
  if (iso_utc.size() < 16) return esc(iso_utc);
  return esc(iso_utc.substr(0, 10) + " " + iso_utc.substr(11, 5) + " UTC");
}

std::string csrf_field(const std::string& token) {
  return "<input type=\"hidden\" name=\"csrf\" value=\"" + esc(token) + "\">";
}

std::string url_encode(std::string_view text) {
  static constexpr char hex[] = "0123456789ABCDEF";
  std::string out;
  for (const char c : text) {
    const auto u = static_cast<unsigned char>(c);
    if ((u >= 'a' && u <= 'z') || (u >= 'A' && u <= 'Z') || (u >= '0' && u <= '9') || c == '-' || c == '_' ||
        c == '.' || c == '~') {
      out += c;
    } else {
      out += '%';
      out += hex[u >> 4U];
      out += hex[u & 0x0FU];
    }
  }
  return out;
}

}  // namespace countersign::web::parts
