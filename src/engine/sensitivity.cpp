#include <countersign/engine/sensitivity.hpp>

#include <algorithm>
#include <cmath>
#include <limits>

namespace countersign::engine {

std::string_view to_code(SensitivityQuantity quantity) {
  switch (quantity) {
    case SensitivityQuantity::depth:
      return "depth";
    case SensitivityQuantity::ssd:
      return "ssd";
    case SensitivityQuantity::field_size:
      return "field_size";
  }
  return "unknown";
}

namespace {

constexpr int scan_steps = 400;      // per side: fine enough to separate the roots of a smooth dose curve
constexpr int bisection_steps = 60;  // halves the bracket far below any clinical significance
constexpr double same_dose_fraction = 1e-9;

double baseline_of(const DoseInputs& in, SensitivityQuantity quantity) {
  switch (quantity) {
    case SensitivityQuantity::depth:
      return in.depth_cm;
    case SensitivityQuantity::ssd:
      return in.ssd_cm;
    case SensitivityQuantity::field_size:
      return in.field_at_isocentre_cm;
  }
  return 0.0;
}

// The most negative change that keeps every part's input at or above its minimum.
double lowest_change(std::span<const DoseInputs> parts, SensitivityQuantity quantity,
                     const SensitivityLimits& limits) {
  double lowest = -std::numeric_limits<double>::infinity();
  for (const DoseInputs& in : parts) {
    switch (quantity) {
      case SensitivityQuantity::depth:
        lowest = std::max(lowest, limits.min_depth_cm - in.depth_cm);
        break;
      case SensitivityQuantity::ssd:
        lowest = std::max(lowest, limits.min_ssd_cm - in.ssd_cm);
        break;
      case SensitivityQuantity::field_size:
        lowest = std::max(lowest,
                          limits.min_field_cm - std::min(in.collimator_field_cm, in.field_at_isocentre_cm));
        break;
    }
  }
  return lowest;
}

double search_limit(SensitivityQuantity quantity, const SensitivityLimits& limits) {
  switch (quantity) {
    case SensitivityQuantity::depth:
      return limits.depth_cm;
    case SensitivityQuantity::ssd:
      return limits.ssd_cm;
    case SensitivityQuantity::field_size:
      return limits.field_cm;
  }
  return 0.0;
}

template <class F>
double bisect(F&& residual, double a, double b) {
  double fa = residual(a);
  for (int i = 0; i < bisection_steps; ++i) {
    const double m = 0.5 * (a + b);
    const double fm = residual(m);
    if (fm == 0.0) return m;
    if ((fm < 0.0) == (fa < 0.0)) {
      a = m;
      fa = fm;
    } else {
      b = m;
    }
  }
  return 0.5 * (a + b);
}

bool any_extrapolated(const beamdata::BeamData& beam, std::span<const DoseInputs> parts,
                      SensitivityQuantity quantity, double change_cm) {
  return std::any_of(parts.begin(), parts.end(), [&](const DoseInputs& in) {
    return compute_point_dose(beam, with_change(in, quantity, change_cm)).first_extrapolated() != nullptr;
  });
}

}  // namespace

DoseInputs with_change(const DoseInputs& inputs, SensitivityQuantity quantity, double change_cm) {
  DoseInputs in = inputs;
  switch (quantity) {
    case SensitivityQuantity::depth:
      in.depth_cm += change_cm;
      // PDD form: the SSD is what the setup fixes, so a deeper point is farther from the source.
      if (in.method == Method::pdd) in.spd_cm += change_cm;
      break;
    case SensitivityQuantity::ssd:
      in.ssd_cm += change_cm;
      in.spd_cm += change_cm;
      break;
    case SensitivityQuantity::field_size:
      in.collimator_field_cm += change_cm;
      in.field_at_isocentre_cm += change_cm;
      break;
  }
  return in;
}

double dose_with_change_cgy(const beamdata::BeamData& beam, std::span<const DoseInputs> parts,
                            SensitivityQuantity quantity, double change_cm) {
  double total = 0.0;
  for (const DoseInputs& in : parts)
    total += compute_point_dose(beam, with_change(in, quantity, change_cm)).dose_cgy;
  return total;
}

Sensitivity reconcile(const beamdata::BeamData& beam, std::span<const DoseInputs> parts,
                      double target_dose_cgy, const SensitivityLimits& limits) {
  Sensitivity result;
  result.target_dose_cgy = target_dose_cgy;
  result.baseline_dose_cgy = dose_with_change_cgy(beam, parts, SensitivityQuantity::depth, 0.0);
  if (parts.empty()) return result;

  for (SensitivityQuantity quantity :
       {SensitivityQuantity::depth, SensitivityQuantity::ssd, SensitivityQuantity::field_size}) {
    Reconciliation r;
    r.quantity = quantity;
    r.baseline_cm = baseline_of(parts.front(), quantity);
    const double limit = search_limit(quantity, limits);
    r.search_max_change_cm = limit;
    r.search_min_change_cm = std::min(0.0, std::max(-limit, lowest_change(parts, quantity, limits)));
    const auto residual = [&](double change) {
      return dose_with_change_cgy(beam, parts, quantity, change) - target_dose_cgy;
    };

    const double f0 = residual(0.0);
    if (std::abs(f0) <= same_dose_fraction * std::max(1.0, std::abs(target_dose_cgy))) {
      r.change_cm = 0.0;
    } else {
      // Walk outward from zero on both sides; the first bracket found holds the nearest root.
      const double step = limit / scan_steps;
      double previous_up = f0;
      double previous_down = f0;
      for (int k = 1; k <= scan_steps && !r.change_cm; ++k) {
        std::optional<double> up_root, down_root;
        const double up = k * step;
        if (up <= r.search_max_change_cm + 1e-12) {
          const double f = residual(up);
          if ((f < 0.0) != (previous_up < 0.0) || f == 0.0) up_root = bisect(residual, up - step, up);
          previous_up = f;
        }
        const double down = -k * step;
        if (down >= r.search_min_change_cm - 1e-12) {
          const double f = residual(down);
          if ((f < 0.0) != (previous_down < 0.0) || f == 0.0) down_root = bisect(residual, down, down + step);
          previous_down = f;
        }
        if (up_root && down_root) {
          r.change_cm = std::abs(*up_root) <= std::abs(*down_root) ? up_root : down_root;
        } else if (up_root) {
          r.change_cm = up_root;
        } else if (down_root) {
          r.change_cm = down_root;
        }
      }
    }

    if (r.change_cm) r.extrapolated = any_extrapolated(beam, parts, quantity, *r.change_cm);
    result.changes.push_back(r);
  }
  return result;
}

}  // namespace countersign::engine
