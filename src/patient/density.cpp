#include <countersign/patient/density.hpp>

#include <algorithm>
#include <limits>
#include <stdexcept>

namespace countersign::patient {

DensityMap::DensityMap(const HuToDensity& relation)
    : table_(65536), lowest_hu_(relation.lowest_hu), highest_hu_(relation.highest_hu) {
  if (!relation.density) throw std::invalid_argument("DensityMap: no density relation given");
  // Outside the covered range the relation's end rows apply (beamdata/FORMAT.md): evaluate at the ends.
  for (std::size_t n = 0; n < table_.size(); ++n) {
    const double hu = static_cast<double>(n) - 32768.0;
    table_[n] = relation.density(std::clamp(hu, lowest_hu_, highest_hu_));
  }
}

HuToDensity piecewise_linear_density(std::vector<std::array<double, 2>> rows) {
  if (rows.empty()) throw std::invalid_argument("piecewise_linear_density: no rows");
  for (std::size_t r = 1; r < rows.size(); ++r) {
    if (!(rows[r][0] > rows[r - 1][0]))
      throw std::invalid_argument("piecewise_linear_density: HU must increase strictly");
  }
  HuToDensity relation;
  relation.lowest_hu = rows.front()[0];
  relation.highest_hu = rows.back()[0];
  relation.density = [rows = std::move(rows)](double hu) {
    if (hu <= rows.front()[0]) return rows.front()[1];
    if (hu >= rows.back()[0]) return rows.back()[1];
    const auto upper =
        std::upper_bound(rows.begin(), rows.end(), hu,
                         [](double value, const std::array<double, 2>& row) { return value < row[0]; });
    const auto& b = *upper;
    const auto& a = *(upper - 1);
    const double w = (hu - a[0]) / (b[0] - a[0]);
    return a[1] + w * (b[1] - a[1]);
  };
  return relation;
}

}  // namespace countersign::patient
