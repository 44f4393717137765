#include <countersign/geometry/aperture.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

namespace countersign::geometry {

namespace {

constexpr const char* positions_tag = "(300A,011C)";

double row_width(const ApertureRow& r) { return r.open() ? r.hi_mm - r.lo_mm : 0.0; }

double distance_to_segment(double px, double py, double ax, double ay, double bx, double by) {
  const double dx = bx - ax;
  const double dy = by - ay;
  const double length2 = dx * dx + dy * dy;
  double t = length2 > 0.0 ? ((px - ax) * dx + (py - ay) * dy) / length2 : 0.0;
  t = std::clamp(t, 0.0, 1.0);
  return std::hypot(px - (ax + t * dx), py - (ay + t * dy));
}

// Calls f(x0, y0, x1, y1) for every edge segment of the opening's outline.
template <class F>
void for_each_edge(const std::vector<ApertureRow>& rows, F&& f) {
  const ApertureRow empty{};
  for (std::size_t i = 0; i <= rows.size(); ++i) {
    const ApertureRow& below = i == 0 ? empty : rows[i - 1];
    const ApertureRow& above = i == rows.size() ? empty : rows[i];
    if (i < rows.size() && above.open()) {
      f(above.lo_mm, above.y_lower_mm, above.lo_mm, above.y_upper_mm);
      f(above.hi_mm, above.y_lower_mm, above.hi_mm, above.y_upper_mm);
    }
    // Horizontal edges at the boundary between two rows: the symmetric difference of their openings.
    const double y = i < rows.size() ? above.y_lower_mm : below.y_upper_mm;
    const bool a = above.open();
    const bool b = below.open();
    if (a && !b) f(above.lo_mm, y, above.hi_mm, y);
    if (b && !a) f(below.lo_mm, y, below.hi_mm, y);
    if (a && b) {
      const double lo_min = std::min(above.lo_mm, below.lo_mm);
      const double lo_max = std::max(above.lo_mm, below.lo_mm);
      const double hi_min = std::min(above.hi_mm, below.hi_mm);
      const double hi_max = std::max(above.hi_mm, below.hi_mm);
      if (lo_max >= hi_min) {  // no overlap: both openings are edges
        f(above.lo_mm, y, above.hi_mm, y);
        f(below.lo_mm, y, below.hi_mm, y);
      } else {
        if (lo_max > lo_min) f(lo_min, y, lo_max, y);
        if (hi_max > hi_min) f(hi_min, y, hi_max, y);
      }
    }
  }
}

Error positions_error(ErrorKind kind, const std::string& device, const std::string& detail) {
  return Error{kind, "", "LeafJawPositions", positions_tag, device + ": " + detail};
}

}  // namespace

double JawOpening::centre_offset_mm() const {
  return std::hypot(0.5 * (x1_mm + x2_mm), 0.5 * (y1_mm + y2_mm));
}

Aperture::Aperture(JawOpening jaws, std::vector<ApertureRow> rows, bool shaped_by_mlc)
    : jaws_(jaws), rows_(std::move(rows)), shaped_by_mlc_(shaped_by_mlc) {
  for (const ApertureRow& r : rows_) area_mm2_ += row_width(r) * (r.y_upper_mm - r.y_lower_mm);
  for_each_edge(rows_, [this](double x0, double y0, double x1, double y1) {
    perimeter_mm_ += std::hypot(x1 - x0, y1 - y0);
  });
}

double Aperture::equivalent_square_mm() const {
  return perimeter_mm_ > 0.0 ? 4.0 * area_mm2_ / perimeter_mm_ : 0.0;
}

bool Aperture::contains(double x_mm, double y_mm) const {
  return std::any_of(rows_.begin(), rows_.end(), [&](const ApertureRow& r) {
    return r.open() && y_mm >= r.y_lower_mm && y_mm <= r.y_upper_mm && x_mm >= r.lo_mm && x_mm <= r.hi_mm;
  });
}

double Aperture::distance_to_edge_mm(double x_mm, double y_mm) const {
  double nearest = std::numeric_limits<double>::infinity();
  for_each_edge(rows_, [&](double x0, double y0, double x1, double y1) {
    nearest = std::min(nearest, distance_to_segment(x_mm, y_mm, x0, y0, x1, y1));
  });
  return nearest;
}

Expected<Aperture> build_aperture(const plan::Beam& beam, const plan::ControlPoint& cp,
                                  double leaf_end_offset_mm) {
  const auto find = [&cp](plan::DeviceType a, plan::DeviceType b) {
    const plan::DevicePositions* d = cp.device(a);
    return d != nullptr ? d : cp.device(b);
  };
  const plan::DevicePositions* x = find(plan::DeviceType::asymx, plan::DeviceType::x);
  const plan::DevicePositions* y = find(plan::DeviceType::asymy, plan::DeviceType::y);
  const plan::DevicePositions* mlc = cp.device(plan::DeviceType::mlcx);
  if (cp.device(plan::DeviceType::mlcy) != nullptr) {
    return positions_error(ErrorKind::bad_value, "MLCY",
                           "an MLC with leaves moving along Y is not supported");
  }
  for (const plan::DevicePositions* jaw : {x, y}) {
    if (jaw != nullptr && jaw->positions_mm.size() != 2) {
      return positions_error(ErrorKind::bad_value, jaw->type.text,
                             "expected 2 jaw positions, found " + std::to_string(jaw->positions_mm.size()));
    }
    if (jaw != nullptr && jaw->positions_mm[1] < jaw->positions_mm[0]) {
      return positions_error(ErrorKind::bad_value, jaw->type.text,
                             "jaw 2 lies on the negative side of jaw 1");
    }
  }

  std::vector<double> boundaries;
  std::size_t pairs = 0;
  if (mlc != nullptr) {
    const auto def =
        std::find_if(beam.beam_limiting_devices.begin(), beam.beam_limiting_devices.end(),
                     [](const plan::BeamLimitingDevice& d) { return d.type == plan::DeviceType::mlcx; });
    if (def == beam.beam_limiting_devices.end() || def->leaf_boundaries_mm.size() < 2) {
      return Error{ErrorKind::missing_attribute, "", "LeafPositionBoundaries", "(300A,00BE)",
                   "MLCX positions are given but the beam defines no leaf boundaries"};
    }
    boundaries = def->leaf_boundaries_mm;
    pairs = boundaries.size() - 1;
    if (mlc->positions_mm.size() != 2 * pairs) {
      return positions_error(ErrorKind::bad_value, "MLCX",
                             "expected " + std::to_string(2 * pairs) + " leaf positions, found " +
                                 std::to_string(mlc->positions_mm.size()));
    }
  }
  if (mlc == nullptr && (x == nullptr || y == nullptr)) {
    return positions_error(ErrorKind::missing_attribute, x == nullptr ? "X jaws" : "Y jaws",
                           "no jaw positions and no MLC at this control point");
  }

  JawOpening jaws;
  if (x != nullptr) {
    jaws.x1_mm = x->positions_mm[0];
    jaws.x2_mm = x->positions_mm[1];
  } else {  // no X jaws: the envelope of the open leaves stands in for them
    jaws.x_source = JawSource::mlc_envelope;
    jaws.x1_mm = std::numeric_limits<double>::infinity();
    jaws.x2_mm = -std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < pairs; ++i) {
      if (mlc->positions_mm[pairs + i] > mlc->positions_mm[i]) {
        jaws.x1_mm = std::min(jaws.x1_mm, mlc->positions_mm[i]);
        jaws.x2_mm = std::max(jaws.x2_mm, mlc->positions_mm[pairs + i]);
      }
    }
    if (jaws.x1_mm > jaws.x2_mm) jaws.x1_mm = jaws.x2_mm = 0.0;
  }
  if (y != nullptr) {
    jaws.y1_mm = y->positions_mm[0];
    jaws.y2_mm = y->positions_mm[1];
  } else {
    jaws.y_source = JawSource::mlc_envelope;
    jaws.y1_mm = boundaries.front();
    jaws.y2_mm = boundaries.back();
  }

  std::vector<ApertureRow> rows;
  if (mlc == nullptr) {
    rows.push_back({jaws.y1_mm, jaws.y2_mm, jaws.x1_mm, jaws.x2_mm});
    return Aperture(jaws, std::move(rows), false);
  }
  rows.reserve(pairs);
  for (std::size_t i = 0; i < pairs; ++i) {
    if (boundaries[i + 1] <= boundaries[i]) {
      return Error{ErrorKind::bad_value, "", "LeafPositionBoundaries", "(300A,00BE)",
                   "boundaries not increasing"};
    }
    const double y_lower = std::max(boundaries[i], jaws.y1_mm);
    const double y_upper = std::min(boundaries[i + 1], jaws.y2_mm);
    if (y_upper <= y_lower) continue;  // leaf pair hidden behind the Y jaws
    double lo = mlc->positions_mm[i];
    double hi = mlc->positions_mm[pairs + i];
    if (hi > lo) {  // a closed pair stays closed: the offset describes an open pair's tips
      lo -= leaf_end_offset_mm;
      hi += leaf_end_offset_mm;
    }
    rows.push_back({y_lower, y_upper, std::max(lo, jaws.x1_mm), std::min(hi, jaws.x2_mm)});
  }
  return Aperture(jaws, std::move(rows), true);
}

}  // namespace countersign::geometry
