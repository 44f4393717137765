#include <countersign/beamdata/ct_density.hpp>

#include <algorithm>
#include <stdexcept>

namespace countersign::beamdata {

DensityLookup CtDensityTable::density(double hu_value) const {
  if (hu.empty() || hu.size() != relative_electron_density.size())
    throw std::logic_error("CT density lookup in an empty or malformed table (" + file + ")");
  if (!(hu_value > hu.front())) {
    // NaN lands here too: clamped, so that it is never mistaken for a table value.
    return {relative_electron_density.front(), !(hu_value == hu.front())};
  }
  if (hu_value >= hu.back()) return {relative_electron_density.back(), hu_value > hu.back()};
  const auto upper =
      static_cast<std::size_t>(std::distance(hu.begin(), std::upper_bound(hu.begin(), hu.end(), hu_value)));
  const std::size_t lower = upper - 1;
  const double w = (hu_value - hu[lower]) / (hu[upper] - hu[lower]);
  return {(1.0 - w) * relative_electron_density[lower] + w * relative_electron_density[upper], false};
}

const CtDensityTable* CtDensityTables::default_table() const {
  const auto it =
      std::find_if(tables.begin(), tables.end(), [](const CtDensityTable& t) { return t.station.empty(); });
  return it == tables.end() ? nullptr : &*it;
}

const CtDensityTable* CtDensityTables::for_station(std::string_view station_name) const {
  // DICOM: leading and trailing spaces of a Short String are not significant.
  const auto first = station_name.find_first_not_of(' ');
  if (first != std::string_view::npos) {
    station_name = station_name.substr(first, station_name.find_last_not_of(' ') - first + 1);
    for (const auto& t : tables) {
      if (!t.station.empty() && t.station == station_name) return &t;
    }
  }
  return default_table();
}

}  // namespace countersign::beamdata
