#include <countersign/geometry/aperture.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>
#include <tuple>
#include <utility>

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

Aperture::Aperture(JawOpening jaws, std::vector<ApertureRow> rows, bool shaped_by_mlc, LeafTravel travel)
    : jaws_(jaws), rows_(std::move(rows)), shaped_by_mlc_(shaped_by_mlc), travel_(travel) {
  for (const ApertureRow& r : rows_) area_mm2_ += row_width(r) * (r.y_upper_mm - r.y_lower_mm);
  for_each_edge(rows_, [this](double x0, double y0, double x1, double y1) {
    perimeter_mm_ += std::hypot(x1 - x0, y1 - y0);
  });
}

double Aperture::equivalent_square_mm() const {
  return perimeter_mm_ > 0.0 ? 4.0 * area_mm2_ / perimeter_mm_ : 0.0;
}

bool Aperture::contains(double x_mm, double y_mm) const {
  if (travel_ == LeafTravel::y) std::swap(x_mm, y_mm);  // to the leaves' frame (u, v)
  return std::any_of(rows_.begin(), rows_.end(), [&](const ApertureRow& r) {
    return r.open() && y_mm >= r.y_lower_mm && y_mm <= r.y_upper_mm && x_mm >= r.lo_mm && x_mm <= r.hi_mm;
  });
}

double Aperture::distance_to_edge_mm(double x_mm, double y_mm) const {
  if (travel_ == LeafTravel::y) std::swap(x_mm, y_mm);  // distances are the same in the leaves' frame
  double nearest = std::numeric_limits<double>::infinity();
  for_each_edge(rows_, [&](double x0, double y0, double x1, double y1) {
    nearest = std::min(nearest, distance_to_segment(x_mm, y_mm, x0, y0, x1, y1));
  });
  return nearest;
}

namespace {

// The leaf boundaries of the beam's MLC of this type, or an error.
Expected<std::vector<double>> leaf_boundaries(const plan::Beam& beam, plan::DeviceType type,
                                              const std::string& name) {
  const auto def = std::find_if(beam.beam_limiting_devices.begin(), beam.beam_limiting_devices.end(),
                                [type](const plan::BeamLimitingDevice& d) { return d.type == type; });
  if (def == beam.beam_limiting_devices.end() || def->leaf_boundaries_mm.size() < 2) {
    return Error{ErrorKind::missing_attribute, "", "LeafPositionBoundaries", "(300A,00BE)",
                 name + " positions are given but the beam defines no leaf boundaries"};
  }
  return def->leaf_boundaries_mm;
}

// The jaws' limits along the leaves' travel (u) and across it (v).
struct FrameJaws {
  double u1 = 0.0;
  double u2 = 0.0;
  double v1 = 0.0;
  double v2 = 0.0;
};

// The leaf pairs' rows in the leaves' frame, clipped to the jaws; the leaf-end offset opens every open
// pair's tips.
Expected<std::vector<ApertureRow>> leaf_rows(const std::vector<double>& boundaries,
                                             const std::vector<double>& positions, const FrameJaws& j,
                                             double leaf_end_offset_mm) {
  const std::size_t pairs = boundaries.size() - 1;
  std::vector<ApertureRow> rows;
  rows.reserve(pairs);
  for (std::size_t i = 0; i < pairs; ++i) {
    if (boundaries[i + 1] <= boundaries[i]) {
      return Error{ErrorKind::bad_value, "", "LeafPositionBoundaries", "(300A,00BE)",
                   "boundaries not increasing"};
    }
    const double v_lower = std::max(boundaries[i], j.v1);
    const double v_upper = std::min(boundaries[i + 1], j.v2);
    if (v_upper <= v_lower) continue;  // leaf pair hidden behind the jaws
    double lo = positions[i];
    double hi = positions[pairs + i];
    if (hi > lo) {  // a closed pair stays closed: the offset describes an open pair's tips
      lo -= leaf_end_offset_mm;
      hi += leaf_end_offset_mm;
    }
    rows.push_back({v_lower, v_upper, std::max(lo, j.u1), std::min(hi, j.u2)});
  }
  return rows;
}

// The envelope of the open leaves along their travel (stands in for absent jaws on that axis).
std::pair<double, double> open_leaf_envelope(const std::vector<double>& positions) {
  const std::size_t pairs = positions.size() / 2;
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < pairs; ++i) {
    if (positions[pairs + i] > positions[i]) {
      lo = std::min(lo, positions[i]);
      hi = std::max(hi, positions[pairs + i]);
    }
  }
  return lo > hi ? std::pair{0.0, 0.0} : std::pair{lo, hi};
}

Expected<void> check_jaw(const plan::DevicePositions* jaw) {
  if (jaw == nullptr) return {};
  if (jaw->positions_mm.size() != 2) {
    return positions_error(ErrorKind::bad_value, jaw->type.text,
                           "expected 2 jaw positions, found " + std::to_string(jaw->positions_mm.size()));
  }
  if (jaw->positions_mm[1] < jaw->positions_mm[0]) {
    return positions_error(ErrorKind::bad_value, jaw->type.text, "jaw 2 lies on the negative side of jaw 1");
  }
  return {};
}

}  // namespace

Expected<Aperture> build_aperture(const plan::Beam& beam, const plan::ControlPoint& cp,
                                  double leaf_end_offset_mm) {
  const auto find = [&cp](plan::DeviceType a, plan::DeviceType b) {
    const plan::DevicePositions* d = cp.device(a);
    return d != nullptr ? d : cp.device(b);
  };
  const plan::DevicePositions* x = find(plan::DeviceType::asymx, plan::DeviceType::x);
  const plan::DevicePositions* y = find(plan::DeviceType::asymy, plan::DeviceType::y);
  const plan::DevicePositions* mlcx = cp.device(plan::DeviceType::mlcx);
  const plan::DevicePositions* mlcy = cp.device(plan::DeviceType::mlcy);
  if (mlcx != nullptr && mlcy != nullptr) {
    return positions_error(ErrorKind::bad_value, "MLCY", "an MLCX and an MLCY in one beam are not supported");
  }
  TRY(check_jaw(x));
  TRY(check_jaw(y));
  const plan::DevicePositions* mlc = mlcx != nullptr ? mlcx : mlcy;
  const LeafTravel travel = mlcy != nullptr ? LeafTravel::y : LeafTravel::x;
  const std::string mlc_name = travel == LeafTravel::y ? "MLCY" : "MLCX";

  std::vector<double> boundaries;
  if (mlc != nullptr) {
    TRY_ASSIGN(
        boundaries,
        leaf_boundaries(beam, travel == LeafTravel::y ? plan::DeviceType::mlcy : plan::DeviceType::mlcx,
                        mlc_name));
    const std::size_t pairs = boundaries.size() - 1;
    if (mlc->positions_mm.size() != 2 * pairs) {
      return positions_error(ErrorKind::bad_value, mlc_name,
                             "expected " + std::to_string(2 * pairs) + " leaf positions, found " +
                                 std::to_string(mlc->positions_mm.size()));
    }
  }
  if (mlc == nullptr && (x == nullptr || y == nullptr)) {
    return positions_error(ErrorKind::missing_attribute, x == nullptr ? "X jaws" : "Y jaws",
                           "no jaw positions and no MLC at this control point");
  }

  // Jaws on the leaves' travel axis (u) and across it (v); an absent pair is replaced by the
  // envelope of the open leaves (along u) or the outer leaf boundaries (along v).
  const plan::DevicePositions* u_jaw = travel == LeafTravel::x ? x : y;
  const plan::DevicePositions* v_jaw = travel == LeafTravel::x ? y : x;
  FrameJaws f;
  JawSource u_source = JawSource::jaws;
  JawSource v_source = JawSource::jaws;
  if (u_jaw != nullptr) {
    f.u1 = u_jaw->positions_mm[0];
    f.u2 = u_jaw->positions_mm[1];
  } else {
    u_source = JawSource::mlc_envelope;
    std::tie(f.u1, f.u2) = open_leaf_envelope(mlc->positions_mm);
  }
  if (v_jaw != nullptr) {
    f.v1 = v_jaw->positions_mm[0];
    f.v2 = v_jaw->positions_mm[1];
  } else {
    v_source = JawSource::mlc_envelope;
    f.v1 = boundaries.front();
    f.v2 = boundaries.back();
  }
  JawOpening jaws;
  if (travel == LeafTravel::x) {
    jaws = JawOpening{f.u1, f.u2, f.v1, f.v2, u_source, v_source};
  } else {
    jaws = JawOpening{f.v1, f.v2, f.u1, f.u2, v_source, u_source};
  }

  if (mlc == nullptr) {
    std::vector<ApertureRow> rows{{jaws.y1_mm, jaws.y2_mm, jaws.x1_mm, jaws.x2_mm}};
    return Aperture(jaws, std::move(rows), false);
  }
  std::vector<ApertureRow> rows;
  TRY_ASSIGN(rows, leaf_rows(boundaries, mlc->positions_mm, f, leaf_end_offset_mm));
  return Aperture(jaws, std::move(rows), true, travel);
}

}  // namespace countersign::geometry
