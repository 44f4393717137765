// Electron [[beam]] entries of a manifest: keys, calibration and applicators with their tables.

#include "machine_loader.hpp"
#include "table_checks.hpp"

#include <cmath>

namespace countersign::beamdata::detail {

ElectronDraft MachineLoader::electron_beam(const toml::table& t, const std::string& path) {
  ElectronDraft draft;
  ElectronBeamData& b = draft.data;
  reader_.unknown_keys(
      t,
      {"id", "radiation", "energy_mv", "dmax_cm", "pdd_ssd_cm", "ssd_range_cm", "calibration", "applicator"},
      path);
  const auto id = reader_.text(t, "id", path);
  const auto energy = reader_.number(t, "energy_mv", path, 1.0, 50.0);  // MeV for electrons
  const auto dmax = reader_.number(t, "dmax_cm", path, 0.1, 6.0);
  const auto pdd_ssd = reader_.number(t, "pdd_ssd_cm", path, min_distance_cm, max_distance_cm);
  b.id = id.value_or("");
  b.energy_mev = energy.value_or(0.0);
  b.dmax_cm = dmax.value_or(0.0);
  b.pdd_ssd_cm = pdd_ssd.value_or(0.0);
  draft.dmax_known = dmax.has_value();
  draft.pdd_ssd_known = pdd_ssd.has_value();
  bool complete = id && energy && dmax && pdd_ssd;
  const auto range = reader_.number_pair(t, "ssd_range_cm", path, min_distance_cm, max_distance_cm);
  if (range) b.ssd_range_cm = SsdRange{range->first, range->second};
  complete = (range.has_value() || t.get("ssd_range_cm") == nullptr) && complete;
  complete = read_electron_calibration(t, path, draft) && complete;
  if (draft.calibration_known && std::abs(b.calibration.output_cgy_per_mu - 1.0) > 0.2)
    reader_.problem(
        t.get("calibration"), path + "calibration.output_cgy_per_mu",
        number_text(b.calibration.output_cgy_per_mu) +
            " cGy/MU is more than 20 % from the usual 1 cGy/MU at the reference; check the unit and "
            "the calibration point",
        Severity::warning);

  const auto applicators = reader_.table_array(t, "applicator", path);
  if (applicators.empty()) {
    reader_.problem(&t, path + "applicator", "an electron beam needs at least one [[beam.applicator]]");
    complete = false;
  }
  for (std::size_t i = 0; i < applicators.size(); ++i) {
    ApplicatorData a;
    complete = applicator(*applicators[i], indexed_path(path, "applicator", i), a) && complete;
    if (!a.id.empty() && b.applicator(a.id) != nullptr) {
      reader_.problem(applicators[i], path + "applicator", "applicator id '" + a.id + "' appears twice");
      complete = false;
    }
    b.applicators.push_back(std::move(a));
  }
  if (draft.calibration_known && b.applicator(b.calibration.applicator) == nullptr) {
    reader_.problem(t.get("calibration"), path + "calibration.applicator",
                    "names applicator '" + b.calibration.applicator + "', which this beam does not define");
    complete = false;
  }
  draft.complete = complete;
  return draft;
}

bool MachineLoader::read_electron_calibration(const toml::table& t, const std::string& path,
                                              ElectronDraft& draft) {
  const auto* cal = reader_.sub_table(t, "calibration", path);
  if (cal == nullptr) return false;
  const std::string cal_path = path + "calibration.";
  reader_.unknown_keys(*cal, {"output_cgy_per_mu", "applicator", "ssd_cm", "depth_cm"}, cal_path);
  const auto output = reader_.number(*cal, "output_cgy_per_mu", cal_path, 0.1, 5.0);
  const auto applicator = reader_.text(*cal, "applicator", cal_path);
  const auto ssd = reader_.number(*cal, "ssd_cm", cal_path, min_distance_cm, max_distance_cm);
  const auto depth = reader_.number(*cal, "depth_cm", cal_path, 0.0, 20.0);
  ElectronCalibration& c = draft.data.calibration;
  c.output_cgy_per_mu = output.value_or(0.0);
  c.applicator = applicator.value_or("");
  c.ssd_cm = ssd.value_or(0.0);
  c.depth_cm = depth.value_or(0.0);
  draft.calibration_known = output && applicator && ssd && depth;
  return draft.calibration_known;
}

bool MachineLoader::applicator(const toml::table& t, const std::string& path, ApplicatorData& a) {
  reader_.unknown_keys(t, {"id", "field_cm", "factor", "effective_ssd_cm", "pdd", "cutout"}, path);
  const auto id = reader_.text(t, "id", path);
  const auto field = reader_.number(t, "field_cm", path, 1.0, 50.0);
  const auto factor = reader_.number(t, "factor", path, 0.5, 1.5);
  const auto effective_ssd = reader_.number(t, "effective_ssd_cm", path, 20.0, max_distance_cm);
  a.id = id.value_or("");
  a.field_cm = field.value_or(0.0);
  a.factor = factor.value_or(0.0);
  a.effective_ssd_cm = effective_ssd.value_or(0.0);
  auto pdd = table2d(t, "pdd", path, {"pdd", "field_cm"}, Presence::required);
  if (pdd) a.pdd = std::move(*pdd);
  a.cutout = table1d(t, "cutout", path, {"cutout_factor", ""}, Presence::optional);
  const bool cutout_ok = a.cutout.has_value() || t.get("cutout") == nullptr;
  return id && field && factor && effective_ssd && pdd && cutout_ok;
}

}  // namespace countersign::beamdata::detail
