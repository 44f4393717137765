#pragma once

// Phantom scatter by sector integration (Clarkson 1941; Cunningham's scatter-air-ratio method
// (1972), here in its isocentric form with scatter-maximum ratios). The point's surroundings are cut
// into equal angular sectors; along each sector's central ray the scatter of a circular field whose
// radius is the ray's length is taken from the tables, and the parts of the ray under leaves or
// blocks count with their transmission.
//
//   SMR(d, r) = TMR(d, s_r) · Sp(s_r) / Sp(0) − TMR(d, 0)         s_r = √π · r (equal-area square)
//   Sp·TMR of the field at the point = Sp(0) · [ TMR(d, 0) · T_point + mean over sectors of SMR ]
//
// Zero-field values: TMR(d, 0) and Sp(0) extrapolated linearly through the two smallest tabulated
// fields (common practice, no source; stated in every result). Radii are taken in the plane of the
// point (the tables' TMR and Sp are indexed by the field at the point's depth). Beyond the largest
// tabulated field a ray's SMR keeps its value at that field (scatter from farther is not counted; the
// result says when that happened).

#include <countersign/beamdata/library.hpp>
#include <countersign/geometry/aperture.hpp>

#include <array>
#include <functional>
#include <optional>
#include <vector>

namespace countersign::engine {

// A square of the same area as a circle of radius r: side r·√π (equal-area rule).
[[nodiscard]] double circle_equivalent_square_cm(double radius_cm);

// Linear extrapolation to a field of zero size through (s1, v1) and (s2, v2), s1 < s2.
[[nodiscard]] double extrapolate_to_zero_field(double s1, double v1, double s2, double v2);

// SMR(d, r) at one depth, tabulated on a fine radius grid from the TMR and Sp tables.
class ScatterMaximumRatios {
 public:
  ScatterMaximumRatios(const beamdata::BeamData& data, double depth_cm);
  [[nodiscard]] double tmr0() const { return tmr0_; }  // TMR(d, 0), extrapolated
  [[nodiscard]] double sp0() const { return sp0_; }    // Sp(0), extrapolated
  // SMR at a radius in the point's plane (cm); beyond the largest field, its value there.
  [[nodiscard]] double at_radius_cm(double radius_cm) const;
  // The radius whose equal-area square is the largest tabulated field.
  [[nodiscard]] double largest_radius_cm() const { return largest_radius_cm_; }

 private:
  double tmr0_ = 0.0;
  double sp0_ = 1.0;
  double step_cm_ = 0.1;
  double largest_radius_cm_ = 0.0;
  std::vector<double> grid_;  // SMR at radius i * step_cm_
};

// A block of the beam's Block Sequence, as a polygon at the isocentre plane (mm).
struct BlockShape {
  std::vector<std::array<double, 2>> outline_mm;  // vertices, either orientation, not closed
  bool aperture = false;                          // APERTURE: open inside; SHIELDING: blocked inside
  double transmission = 0.0;                      // the fraction through the block
  [[nodiscard]] bool contains(double x_mm, double y_mm) const;
};

// What the rays run through: the opening of one part (jaws ∩ MLC) and the blocks in the beam.
struct SectorField {
  const geometry::Aperture* aperture = nullptr;
  const std::vector<BlockShape>* blocks = nullptr;  // may be null: no blocks
  double leaf_transmission = 0.0;                   // under the leaves, inside the jaws
  // Optional: the body outline. For a direction (degrees, IEC beam-limiting-device x towards y) and
  // the ray's reach (mm, isocentre plane: where it leaves the jaws), the distance (mm, isocentre
  // plane) from the point at which the body ends, or nullopt where it does not end before; a ray
  // ends there.
  std::function<std::optional<double>(double direction_deg, double reach_mm)> outline_radius_mm;
};

// The transmission a point of the isocentre plane sees: 0 outside the jaws, the leaves' under the
// leaves, times the block's under a block.
[[nodiscard]] double transmission_at(const SectorField& field, double x_mm, double y_mm);

struct SectorScatter {
  int sectors = 0;
  double tmr0 = 0.0;                  // TMR(d, 0)
  double sp0 = 1.0;                   // Sp(0)
  double smr = 0.0;                   // mean over sectors of the transmission-weighted SMR
  double primary_transmission = 1.0;  // at the point: 1 open, leaves' or block's behind them
  bool beyond_largest_field = false;  // some ray ran past the largest tabulated field
  bool body_outline = false;          // the rays were tested against the body outline
  int rays_ended_at_body = 0;         // sectors whose ray the body outline shortened
  // Sp·TMR of the field at the point, before the OAR (which multiplies the primary only).
  [[nodiscard]] double sp_tmr(double primary_oar = 1.0) const {
    return sp0 * (tmr0 * primary_transmission * primary_oar + smr);
  }
};

// Sector integration at the point (x, y) of the isocentre plane. plane_scale converts isocentre-plane
// distances to the point's plane (SPD / SAD). Sectors: the fewest of width at most max_sector_deg.
[[nodiscard]] SectorScatter integrate_sectors(const SectorField& field, double x_mm, double y_mm,
                                              double plane_scale, const ScatterMaximumRatios& smr,
                                              double max_sector_deg);

}  // namespace countersign::engine
