#include <countersign/report/scatter_comparison.hpp>

#include <countersign/util/units.hpp>

namespace countersign::report {

std::vector<ScatterComparison> scatter_comparisons(const engine::BeamDose& dose) {
  std::vector<ScatterComparison> rows;
  if (!dose.dose_computed || !dose.used_sector_integration()) return rows;
  rows.push_back({0, dose.segments.front().from_control_point, dose.computed_dose_gy,
                  dose.equivalent_square_dose_gy, dose.sector_vs_equivalent_square_percent});
  if (dose.segments.size() < 2) return rows;
  for (std::size_t i = 0; i < dose.segments.size(); ++i) {
    const engine::Segment& s = dose.segments[i];
    if (s.scatter_method != engine::ScatterMethod::sector_integration) continue;
    const double equivalent_cgy = s.equivalent_square_dose_cgy;
    const double difference =
        equivalent_cgy > 0.0 ? 100.0 * (s.dose.dose_cgy - equivalent_cgy) / equivalent_cgy : 0.0;
    rows.push_back({static_cast<int>(i) + 1, s.from_control_point, util::cgy_to_gy(s.dose.dose_cgy),
                    util::cgy_to_gy(equivalent_cgy), difference});
  }
  return rows;
}

}  // namespace countersign::report
