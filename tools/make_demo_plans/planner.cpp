#include "planner.hpp"

#include "pencil_planner.hpp"

#include <demo_linac/model.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <optional>
#include <stdexcept>

namespace make_demo_plans {

namespace {

constexpr double calibration_ssd_cm = 100.0;  // the demo machine's calibration SSD (model.hpp)

double round_to(double value, double step) { return std::round(value / step) * step; }

double rectangle_equivalent_square_cm(double width_cm, double length_cm) {
  return 4.0 * width_cm * length_cm / (2.0 * (width_cm + length_cm));
}

// Dose per MU (cGy/MU) at the dose point for one aperture, by the hand-calculation forms.
double hand_dose_per_mu_cgy(const BeamSpec& beam, const std::vector<double>& mlc_mm) {
  const auto& model = demo_linac::beam_model(beam.energy_mv);
  const double dmax_cm = demo_linac::dmax_cm(model);
  const double sad_cm = demo_linac::sad_cm;
  const double jaw_x_cm = (beam.jaws_mm[1] - beam.jaws_mm[0]) / 10.0;
  const double jaw_y_cm = (beam.jaws_mm[3] - beam.jaws_mm[2]) / 10.0;
  const double collimator_cm = rectangle_equivalent_square_cm(jaw_x_cm, jaw_y_cm);
  const double aperture_iso_cm = aperture_equivalent_square_cm(beam.jaws_mm, mlc_mm);
  const double depth_cm = beam.depth_mm / 10.0;
  const double ssd_cm = beam.ssd_mm / 10.0;
  double factors = demo_linac::output_cgy_per_mu(model) * demo_linac::sc(model, collimator_cm) *
                   demo_linac::oar(model, depth_cm, beam.off_axis_mm / 10.0);
  if (!beam.wedge_id.empty()) factors *= demo_linac::wedge_factor(model, beam.wedge_id);
  if (!beam.tray_id.empty()) factors *= demo_linac::tray_factor(model, beam.tray_id);
  if (beam.fixed_ssd) {
    const double surface_cm = aperture_iso_cm * ssd_cm / sad_cm;
    const double at_dmax_cm = aperture_iso_cm * (ssd_cm + dmax_cm) / sad_cm;
    const double inverse_square = std::pow((calibration_ssd_cm + dmax_cm) / (ssd_cm + dmax_cm), 2);
    return factors * demo_linac::sp(model, at_dmax_cm) *
           demo_linac::pdd(model, depth_cm, surface_cm, ssd_cm) / 100.0 * inverse_square;
  }
  const double spd_cm = ssd_cm + depth_cm;  // source to point along the central axis
  const double at_depth_cm = aperture_iso_cm * spd_cm / sad_cm;
  const double inverse_square = std::pow((calibration_ssd_cm + dmax_cm) / spd_cm, 2);
  return factors * demo_linac::sp(model, at_depth_cm) * demo_linac::tmr(model, depth_cm, at_depth_cm) *
         inverse_square;
}

std::vector<double> mean_aperture(const std::vector<double>& a, const std::vector<double>& b) {
  std::vector<double> mean(a.size());
  for (std::size_t i = 0; i < a.size(); ++i) mean[i] = 0.5 * (a[i] + b[i]);
  return mean;
}

// The planning system's model for this beam: the pencil beam when it is MLC-shaped or blocked.
double dose_per_mu_cgy(const PencilPlanner* pencil, const BeamSpec& beam, const std::vector<double>& mlc_mm) {
  return pencil != nullptr && uses_pencil_beam(beam) ? pencil->dose_per_mu_cgy(beam, mlc_mm)
                                                     : hand_dose_per_mu_cgy(beam, mlc_mm);
}

void plan_beam(BeamSpec& beam, const PencilPlanner* pencil) {
  const std::size_t n = beam.control_points.size();
  if (n < 2) throw std::logic_error("a beam needs at least two control points");
  beam.cumulative_weights.assign(n, 0.0);
  beam.cumulative_dose_fraction.assign(n, 0.0);
  if (beam.delivery_type == "SETUP") {
    beam.cumulative_weights.back() = 1.0;
    beam.cumulative_dose_fraction.back() = 1.0;
    return;  // no MU, no dose
  }
  // Interval i runs from control point i to i + 1 and carries weight[i] of the MU.
  std::vector<double> weights(n - 1, 0.0);
  std::vector<double> interval_dose_per_mu(n - 1, 0.0);
  const bool step_and_shoot = !beam.segment_weights.empty();
  if (step_and_shoot) {
    if (beam.segment_weights.size() * 2 != n)
      throw std::logic_error("step-and-shoot needs two control points per segment");
    const double total = std::accumulate(beam.segment_weights.begin(), beam.segment_weights.end(), 0.0);
    for (std::size_t k = 0; k < beam.segment_weights.size(); ++k) {
      weights[2 * k] = beam.segment_weights[k] / total;  // the beam is on between the segment's two CPs
      interval_dose_per_mu[2 * k] = dose_per_mu_cgy(pencil, beam, beam.control_points[2 * k].mlc_mm);
    }
  } else {
    for (std::size_t i = 0; i + 1 < n; ++i) {
      weights[i] = 1.0 / static_cast<double>(n - 1);
      // Arcs: the leaves move linearly between control points; the interval's aperture is
      // approximated by the mean of the two (stated in testdata/plans/README.md).
      const auto aperture =
          beam.control_points[i].mlc_mm.empty()
              ? std::vector<double>{}
              : mean_aperture(beam.control_points[i].mlc_mm, beam.control_points[i + 1].mlc_mm);
      interval_dose_per_mu[i] = dose_per_mu_cgy(pencil, beam, aperture);
    }
  }
  double dose_per_mu = 0.0;
  for (std::size_t i = 0; i + 1 < n; ++i) dose_per_mu += weights[i] * interval_dose_per_mu[i];
  const double mu = round_to(beam.planned_dose_gy * 100.0 / dose_per_mu, 0.1);
  const double dose_gy = mu * dose_per_mu / 100.0;
  beam.meterset_mu = round_to(mu * beam.mu_error_factor, 0.1);
  beam.beam_dose_gy = round_to(dose_gy, 1e-5);
  double weight_sum = 0.0;
  double dose_sum = 0.0;
  for (std::size_t i = 0; i + 1 < n; ++i) {
    weight_sum += weights[i];
    dose_sum += weights[i] * interval_dose_per_mu[i] / dose_per_mu;
    beam.cumulative_weights[i + 1] = round_to(weight_sum, 1e-6);
    beam.cumulative_dose_fraction[i + 1] = round_to(dose_sum, 1e-6);
  }
  beam.cumulative_weights.back() = 1.0;
  beam.cumulative_dose_fraction.back() = 1.0;
}

}  // namespace

std::vector<double> leaf_boundaries_mm() { return demo_linac::mlc_leaf_boundaries_mm(); }

double aperture_equivalent_square_cm(const std::array<double, 4>& jaws_mm,
                                     const std::vector<double>& mlc_mm) {
  if (mlc_mm.empty()) {
    return rectangle_equivalent_square_cm((jaws_mm[1] - jaws_mm[0]) / 10.0, (jaws_mm[3] - jaws_mm[2]) / 10.0);
  }
  // Union of the open leaf pairs clipped to the jaws: area, and the perimeter of that rectilinear
  // shape (leaf-end edges plus the exposed lengths between neighbouring pairs).
  const auto boundaries = leaf_boundaries_mm();
  const std::size_t pairs = boundaries.size() - 1;
  struct Open {
    double x1 = 0.0, x2 = 0.0, width = 0.0;
  };
  std::vector<Open> open(pairs);
  for (std::size_t i = 0; i < pairs; ++i) {
    const double y1 = std::max(boundaries[i], jaws_mm[2]);
    const double y2 = std::min(boundaries[i + 1], jaws_mm[3]);
    const double x1 = std::max(mlc_mm[i], jaws_mm[0]);
    const double x2 = std::min(mlc_mm[pairs + i], jaws_mm[1]);
    if (y2 > y1 && x2 > x1) open[i] = {x1, x2, y2 - y1};
  }
  double area_mm2 = 0.0;
  double perimeter_mm = 0.0;
  auto overlap = [](const Open& a, const Open& b) {
    if (a.width == 0.0 || b.width == 0.0) return 0.0;
    return std::max(0.0, std::min(a.x2, b.x2) - std::max(a.x1, b.x1));
  };
  for (std::size_t i = 0; i < pairs; ++i) {
    const Open& o = open[i];
    if (o.width == 0.0) continue;
    area_mm2 += (o.x2 - o.x1) * o.width;
    perimeter_mm += 2.0 * o.width;  // the two leaf ends
  }
  // Horizontal edges: between pair i-1 and i, the symmetric difference of their open intervals.
  for (std::size_t i = 0; i <= pairs; ++i) {
    const Open below = i > 0 ? open[i - 1] : Open{};
    const Open above = i < pairs ? open[i] : Open{};
    const double len_below = below.width > 0.0 ? below.x2 - below.x1 : 0.0;
    const double len_above = above.width > 0.0 ? above.x2 - above.x1 : 0.0;
    perimeter_mm += len_below + len_above - 2.0 * overlap(below, above);
  }
  if (area_mm2 <= 0.0) throw std::logic_error("closed MLC aperture");
  return 4.0 * area_mm2 / perimeter_mm / 10.0;
}

void plan_doses(PlanSpec& plan) {
  // The library is read and the kernels fitted only for a plan that needs them.
  std::optional<PencilPlanner> pencil;
  if (std::any_of(plan.beams.begin(), plan.beams.end(), uses_pencil_beam))
    pencil.emplace(demo_library_folder());
  for (auto& beam : plan.beams) plan_beam(beam, pencil ? &*pencil : nullptr);
}

}  // namespace make_demo_plans
