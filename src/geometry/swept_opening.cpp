#include <countersign/geometry/swept_opening.hpp>

#include <algorithm>
#include <cmath>

namespace countersign::geometry {

namespace {

bool same(double a, double b) { return std::abs(a - b) < 1e-6; }

// Per leaf pair, the area swept between two openings: from the smaller to the larger.
void add_swept_rows(const Aperture& a, const Aperture& b, std::vector<ApertureRow>& rows) {
  for (const Aperture* ap : {&a, &b}) {
    for (const ApertureRow& r : ap->rows()) {
      if (r.open()) rows.push_back(r);
    }
  }
  for (const ApertureRow& ra : a.rows()) {
    for (const ApertureRow& rb : b.rows()) {
      if (ra.open() && rb.open() && same(ra.y_lower_mm, rb.y_lower_mm) &&
          same(ra.y_upper_mm, rb.y_upper_mm)) {
        rows.push_back(
            {ra.y_lower_mm, ra.y_upper_mm, std::min(ra.lo_mm, rb.lo_mm), std::max(ra.hi_mm, rb.hi_mm)});
      }
    }
  }
}

}  // namespace

std::vector<ApertureRow> merge_rows(std::vector<ApertureRow> rows) {
  std::sort(rows.begin(), rows.end(), [](const auto& a, const auto& b) {
    if (!same(a.y_lower_mm, b.y_lower_mm)) return a.y_lower_mm < b.y_lower_mm;
    if (!same(a.y_upper_mm, b.y_upper_mm)) return a.y_upper_mm < b.y_upper_mm;
    return a.lo_mm < b.lo_mm;
  });
  std::vector<ApertureRow> merged;
  for (const auto& r : rows) {
    if (!merged.empty()) {
      auto& last = merged.back();
      if (same(last.y_lower_mm, r.y_lower_mm) && same(last.y_upper_mm, r.y_upper_mm) &&
          r.lo_mm <= last.hi_mm) {
        last.hi_mm = std::max(last.hi_mm, r.hi_mm);
        continue;
      }
    }
    merged.push_back(r);
  }
  return merged;
}

std::optional<SweptOpening> swept_opening(const plan::Beam& beam) {
  SweptOpening result;
  std::vector<ApertureRow> rows;
  bool first = true;
  const auto& cps = beam.control_points;
  for (std::size_t i = 0; i + 1 < cps.size(); ++i) {
    const auto& a = cps[i];
    const auto& b = cps[i + 1];
    if (!a.cumulative_meterset_weight || !b.cumulative_meterset_weight) continue;
    if (*b.cumulative_meterset_weight - *a.cumulative_meterset_weight <= 0.0) continue;
    auto aperture_a = build_aperture(beam, a);
    auto aperture_b = build_aperture(beam, b);
    if (!aperture_a || !aperture_b) continue;
    widen_envelope(result.envelope, aperture_a->jaws(), first);
    widen_envelope(result.envelope, aperture_b->jaws(), first);
    add_swept_rows(*aperture_a, *aperture_b, rows);
  }
  if (first) return std::nullopt;
  result.open = merge_rows(std::move(rows));
  return result;
}

void widen_envelope(JawOpening& envelope, const JawOpening& jaws, bool& first) {
  if (first) {
    envelope = jaws;
    first = false;
    return;
  }
  envelope.x1_mm = std::min(envelope.x1_mm, jaws.x1_mm);
  envelope.x2_mm = std::max(envelope.x2_mm, jaws.x2_mm);
  envelope.y1_mm = std::min(envelope.y1_mm, jaws.y1_mm);
  envelope.y2_mm = std::max(envelope.y2_mm, jaws.y2_mm);
}

}  // namespace countersign::geometry
