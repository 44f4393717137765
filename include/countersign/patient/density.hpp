#pragma once

// CT number to relative electron density, as the rays need it. Kept as a callable so that any table
// can be plugged in (the beam-data library's ct/<STATION>.csv or ct/default.csv, beamdata/FORMAT.md): give
// the relation and the HU range its rows cover; beyond the range the nearest end's density applies
// and every ray says how many voxels fell there.

#include <array>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

namespace countersign::patient {

struct HuToDensity {
  std::function<double(double hu)> density;  // relative electron density (water = 1)
  double lowest_hu = 0.0;                    // the table's first row
  double highest_hu = 0.0;                   // the table's last row
};

// The relation evaluated once for every int16 CT number, so a ray looks densities up in O(1).
class DensityMap {
 public:
  explicit DensityMap(const HuToDensity& relation);

  [[nodiscard]] double density(std::int16_t hu) const {
    const int index = hu + 32768;  // 0 for -32768 HU
    return table_[static_cast<std::size_t>(index)];
  }
  [[nodiscard]] bool covers(std::int16_t hu) const { return hu >= lowest_hu_ && hu <= highest_hu_; }

 private:
  std::vector<double> table_;
  double lowest_hu_;
  double highest_hu_;
};

// Linear interpolation between (hu, density) rows given in strictly increasing HU, constant beyond
// the ends (the rule of beamdata/FORMAT.md). For tests, tools and as the glue's model.
[[nodiscard]] HuToDensity piecewise_linear_density(std::vector<std::array<double, 2>> rows);

}  // namespace countersign::patient
