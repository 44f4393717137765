#pragma once

// What single change of input would make the independent dose equal the planned dose: the depth,
// the SSD (source-to-point distance moving with it) or the field size, each changed alone while
// every other input stays as the calculation had it. Solved by bracketing and bisection on
// compute_point_dose, so every table, interpolation and formula of the real calculation is used.

#include <countersign/beamdata/library.hpp>
#include <countersign/engine/point_dose.hpp>

#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::engine {

enum class SensitivityQuantity {
  depth,  // depth_cm alone (TMR form: the surface moves, the point stays; PDD form: the point moves, the SSD
          // stays)
  ssd,    // ssd_cm and spd_cm together, depth held (the patient moved along the central axis)
  field_size,  // collimator and irradiated equivalent squares at the isocentre, by the same amount
};
[[nodiscard]] std::string_view to_code(SensitivityQuantity quantity);

// How far each search goes (cm, either side of the calculated value).
struct SensitivityLimits {
  double depth_cm = 10.0;
  double ssd_cm = 20.0;
  double field_cm = 10.0;
  // Smallest values the search may reach, so that no input becomes unphysical.
  double min_depth_cm = 0.1;
  double min_ssd_cm = 50.0;
  double min_field_cm = 1.0;
};

struct Reconciliation {
  SensitivityQuantity quantity = SensitivityQuantity::depth;
  double baseline_cm = 0.0;           // the value the calculation used (first part for modulated beams)
  double search_min_change_cm = 0.0;  // the range searched, as changes from the baseline
  double search_max_change_cm = 0.0;
  std::optional<double> change_cm;  // the smallest change that reconciles, if one exists in the range
  bool extrapolated = false;        // the reconciling value needs a table lookup outside a table
};

struct Sensitivity {
  double target_dose_cgy = 0.0;         // the planned dose
  double baseline_dose_cgy = 0.0;       // the independent dose as calculated
  std::vector<Reconciliation> changes;  // depth, ssd, field_size in that order
};

// The dose summed over the parts (a static beam has one) after applying `change_cm` of `quantity`
// to each part's inputs.
[[nodiscard]] double dose_with_change_cgy(const beamdata::BeamData& beam, std::span<const DoseInputs> parts,
                                          SensitivityQuantity quantity, double change_cm);

// One part's inputs with the change applied (see SensitivityQuantity for what moves together).
[[nodiscard]] DoseInputs with_change(const DoseInputs& inputs, SensitivityQuantity quantity,
                                     double change_cm);

// Solves dose(change) = target for each quantity alone. The nearest root to zero change is
// reported; "no change within the range reconciles" when the dose does not cross the target.
[[nodiscard]] Sensitivity reconcile(const beamdata::BeamData& beam, std::span<const DoseInputs> parts,
                                    double target_dose_cgy, const SensitivityLimits& limits = {});

}  // namespace countersign::engine
