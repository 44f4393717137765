#pragma once

// A second, independent photon dose model for the INVENTED demo and for the tests: a pencil-beam
// convolution. It is a tool, not part of the product (no product program links it); it plays the
// "planning system" of the demo plans and is the reference the tests hold the product's sector
// integration against for irregular fields. Not for clinical use.
//
// Method (common practice in shape, no source for the numbers; every parameter is fitted to the
// beam-data tables, see fit_kernel):
// - Fluence: the opening at the isocentre plane on a square grid; each cell carries the share of it
//   that is open (1), under leaves (leaf transmission), under a block (block transmission), or
//   outside the jaws (0). Leaf tips are moved apart by the library's leaf-end offset (rounded ends).
// - Kernel: a sum of radially symmetric 2-D Gaussians of fixed widths (in the point's plane),
//   K_d(r) = sum_i w_i(d) exp(-r^2 / 2 sigma_i^2) / (2 pi sigma_i^2). The narrowest one carries the
//   primary dose and the penumbra; the wider ones the phantom scatter. The weights w_i(d) are fitted
//   per tabulated depth and interpolated linearly between depths.
// - Dose at a point: Sp.TMR-like quantity C = sum over cells of fluence x (kernel integrated over the
//   cell, exactly, as a product of error functions), times the in-field off-axis ratio at the point,
//   times output, Sc of the jaws, wedge and tray factors and the inverse square
//   ((SSD_cal + d_cal)/SPD)^2.
// Being a convolution over the fluence, it shares nothing with the product's sector integration
// (equal-area circles, scatter-maximum ratios) except the tables it was fitted to.

#include <countersign/beamdata/library.hpp>

#include <array>
#include <cstddef>
#include <optional>
#include <vector>

namespace pencil_beam {

// A block at the isocentre plane (mm): a polygon, open inside (APERTURE) or blocked inside (SHIELDING).
struct Block {
  std::vector<std::array<double, 2>> outline_mm;
  bool aperture = false;
  double transmission = 0.0;
};

// What limits the beam at the isocentre plane (mm, IEC beam limiting device x, y).
struct Opening {
  std::array<double, 4> jaws_mm{};         // X1, X2, Y1, Y2
  std::vector<double> leaf_boundaries_mm;  // MLCX pair boundaries along y; empty: no MLC
  std::vector<double> leaf_positions_mm;   // bank A (x1) of every pair, then bank B (x2)
  double leaf_transmission = 0.0;          // under the leaves, inside the jaws
  double leaf_end_offset_mm = 0.0;         // each open pair's tips move apart by this much
  std::vector<Block> blocks;
};

// Relative fluence on a grid of square cells at the isocentre plane covering the jaws.
struct FluenceGrid {
  double x0_mm = 0.0;  // left edge of the first column
  double y0_mm = 0.0;  // lower edge of the first row
  double cell_mm = 1.0;
  int nx = 0;
  int ny = 0;
  std::vector<double> values;  // row-major: values[j * nx + i]
  [[nodiscard]] std::size_t index(int i, int j) const {
    return static_cast<std::size_t>(j) * static_cast<std::size_t>(nx) + static_cast<std::size_t>(i);
  }
  [[nodiscard]] double at(int i, int j) const { return values[index(i, j)]; }
};

// The opening as fluence on cells of cell_mm; block cells are sampled 4 x 4 within each cell.
[[nodiscard]] FluenceGrid rasterise(const Opening& opening, double cell_mm = 1.0);

// The fixed widths of the Gaussians (cm, in the point's plane): the first is the primary and penumbra.
[[nodiscard]] const std::vector<double>& kernel_sigmas_cm();

// One fitted point of the tables: Sp.TMR of an open square field centred on the point.
struct FitResidual {
  double depth_cm = 0.0;
  double field_cm = 0.0;  // square side at the point's depth
  double table = 0.0;     // Sp(s) TMR(d, s) from the tables
  double model = 0.0;     // the kernel's integral over the square
  [[nodiscard]] double percent() const { return 100.0 * (model - table) / table; }
};

// A beam's fitted kernel: weights per tabulated depth, and how well the fit reproduces the tables.
class Kernel {
 public:
  Kernel(std::vector<double> depths_cm, std::vector<std::vector<double>> weights,
         std::vector<FitResidual> residuals);
  // The weights at a depth, linear between tabulated depths, clamped at the ends.
  [[nodiscard]] std::vector<double> weights_at(double depth_cm) const;
  [[nodiscard]] const std::vector<double>& depths_cm() const { return depths_cm_; }
  [[nodiscard]] const std::vector<FitResidual>& residuals() const { return residuals_; }
  // Largest |model - table| / table over the fitted points, in percent.
  [[nodiscard]] double max_abs_residual_percent() const;

 private:
  std::vector<double> depths_cm_;
  std::vector<std::vector<double>> weights_;
  std::vector<FitResidual> residuals_;
};

// Fits non-negative weights at every depth of the TMR table so that open squares (every TMR field
// column) reproduce Sp(s) TMR(d, s), least squares in relative error.
[[nodiscard]] Kernel fit_kernel(const countersign::beamdata::BeamData& beam);

// A dose point: where it lies in the isocentre plane (mm) and how deep it is.
struct PointGeometry {
  double x_mm = 0.0;
  double y_mm = 0.0;
  double depth_cm = 0.0;
  double spd_cm = 100.0;  // source to the point's plane along the central axis
};

// The convolution C at the point (the model's Sp.TMR for this fluence), without the off-axis ratio.
[[nodiscard]] double convolve(const Kernel& kernel, const FluenceGrid& fluence, const PointGeometry& point,
                              double sad_cm);

// The accessories' factors of a beam (1 when absent) and the field that sets head scatter.
struct Accessories {
  double wedge_factor = 1.0;
  double tray_factor = 1.0;
  // Head scatter shaped below the jaws too: Sc = Sc(jaws)^(1 - share) x Sc(field)^share, with
  // `field` the square (cm, isocentre plane) of the final opening; nullopt: Sc of the jaws alone
  // (Sterling's 4A/P).
  std::optional<double> head_scatter_field_cm;
  double head_scatter_share = 1.0;
};

// Dose per MU (cGy/MU) at the point: output x Sc (see Accessories) x OAR(d, r) x C x wedge x tray
// x ((SSD_cal + d_cal) / SPD)^2.
[[nodiscard]] double dose_per_mu_cgy(const countersign::beamdata::BeamData& beam, const Kernel& kernel,
                                     const Opening& opening, const PointGeometry& point, double sad_cm,
                                     const Accessories& accessories = {});

}  // namespace pencil_beam
