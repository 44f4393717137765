// Photon [[beam]] entries of a manifest: keys, calibration, tables, wedges and trays.

#include "machine_loader.hpp"
#include "table_checks.hpp"

#include <cmath>

namespace countersign::beamdata::detail {

namespace {

std::optional<HeadScatterField> head_scatter_field_of(const std::optional<std::string>& text) {
  if (!text) return std::nullopt;
  return *text == "jaws_and_mlc" ? HeadScatterField::jaws_and_mlc : HeadScatterField::jaws;
}

// A key that is present but could not be read leaves the beam incomplete (absent is fine).
bool optional_ok(const toml::table& t, std::string_view key, bool read) {
  return read || t.get(key) == nullptr;
}

}  // namespace

BeamDraft MachineLoader::photon_beam(const toml::table& t, const std::string& path, double sad_cm,
                                     bool sad_known) {
  BeamDraft draft;
  reader_.unknown_keys(
      t,
      {"id", "radiation", "energy_mv", "dmax_cm", "pdd_ssd_cm", "mlc_transmission", "mlc_leaf_end_offset_mm",
       "head_scatter_field", "ssd_range_cm", "block_transmission", "calibration", "tables", "wedge", "tray"},
      path);
  bool complete = read_photon_keys(t, path, draft);
  complete = read_calibration(t, path, sad_cm, sad_known, draft) && complete;
  complete = read_photon_tables(t, path, draft.data) && complete;
  complete = read_accessories(t, path, draft.data) && complete;
  warn_suspicious(t, path, draft, sad_cm, sad_known);
  draft.complete = complete;
  return draft;
}

// Valid but unusual values a physicist should look at (common practice, no source).
void MachineLoader::warn_suspicious(const toml::table& t, const std::string& path, const BeamDraft& draft,
                                    double sad_cm, bool sad_known) {
  const BeamData& b = draft.data;
  const Calibration& c = b.calibration;
  const toml::node* cal = t.get("calibration");
  if (draft.calibration_known && std::abs(c.output_cgy_per_mu - 1.0) > 0.2)
    reader_.problem(cal, path + "calibration.output_cgy_per_mu",
                    number_text(c.output_cgy_per_mu) +
                        " cGy/MU is more than 20 % from the usual 1 cGy/MU at the "
                        "reference; check the unit and the calibration point",
                    Severity::warning);
  if (draft.calibration_known && c.stated_geometry == CalibrationGeometry::sad && sad_known &&
      std::abs(c.source_to_point_cm() - sad_cm) > 0.01)
    reader_.problem(cal, path + "calibration.geometry",
                    "\"SAD\" but the calibration point lies at " + number_text(c.source_to_point_cm()) +
                        " cm from the source, not at the SAD " + number_text(sad_cm) + " cm",
                    Severity::warning);
  if (!b.ssd_range_cm) return;
  const auto outside = [&](double ssd_cm) { return !b.ssd_range_cm->contains(ssd_cm); };
  if (draft.pdd_ssd_known && outside(b.pdd_ssd_cm))
    reader_.problem(t.get("ssd_range_cm"), path + "ssd_range_cm",
                    "does not contain the beam's own pdd_ssd_cm " + number_text(b.pdd_ssd_cm) + " cm",
                    Severity::warning);
  if (draft.calibration_known && outside(c.ssd_cm))
    reader_.problem(t.get("ssd_range_cm"), path + "ssd_range_cm",
                    "does not contain the calibration SSD " + number_text(c.ssd_cm) + " cm",
                    Severity::warning);
}

bool MachineLoader::read_photon_keys(const toml::table& t, const std::string& path, BeamDraft& draft) {
  BeamData& b = draft.data;
  const auto id = reader_.text(t, "id", path);
  const auto energy = reader_.number(t, "energy_mv", path, 0.5, 50.0);
  const auto dmax = reader_.number(t, "dmax_cm", path, 0.2, 6.0);
  const auto pdd_ssd = reader_.number(t, "pdd_ssd_cm", path, min_distance_cm, max_distance_cm);
  b.id = id.value_or("");
  b.energy_mv = energy.value_or(0.0);
  b.dmax_cm = dmax.value_or(0.0);
  b.pdd_ssd_cm = pdd_ssd.value_or(0.0);
  draft.dmax_known = dmax.has_value();
  draft.pdd_ssd_known = pdd_ssd.has_value();
  bool complete = id && energy && dmax && pdd_ssd;

  // Optional keys (FORMAT.md): absent stays nullopt; present but unreadable is an error.
  b.mlc_transmission = reader_.number(t, "mlc_transmission", path, 0.0, 0.1, Presence::optional);
  b.mlc_leaf_end_offset_mm = reader_.number(t, "mlc_leaf_end_offset_mm", path, -5.0, 5.0, Presence::optional);
  b.head_scatter_field = head_scatter_field_of(
      reader_.choice(t, "head_scatter_field", path, {"jaws", "jaws_and_mlc"}, Presence::optional));
  const auto range = reader_.number_pair(t, "ssd_range_cm", path, min_distance_cm, max_distance_cm);
  if (range) b.ssd_range_cm = SsdRange{range->first, range->second};
  b.block_transmission = reader_.number(t, "block_transmission", path, 0.0, 0.2, Presence::optional);
  complete = optional_ok(t, "mlc_transmission", b.mlc_transmission.has_value()) && complete;
  complete = optional_ok(t, "mlc_leaf_end_offset_mm", b.mlc_leaf_end_offset_mm.has_value()) && complete;
  complete = optional_ok(t, "head_scatter_field", b.head_scatter_field.has_value()) && complete;
  complete = optional_ok(t, "ssd_range_cm", b.ssd_range_cm.has_value()) && complete;
  complete = optional_ok(t, "block_transmission", b.block_transmission.has_value()) && complete;
  return complete;
}

bool MachineLoader::read_calibration(const toml::table& t, const std::string& path, double sad_cm,
                                     bool sad_known, BeamDraft& draft) {
  const auto* cal = reader_.sub_table(t, "calibration", path);
  if (cal == nullptr) return false;
  const std::string cal_path = path + "calibration.";
  reader_.unknown_keys(*cal, {"output_cgy_per_mu", "field_cm", "ssd_cm", "depth_cm", "geometry"}, cal_path);
  const auto output = reader_.number(*cal, "output_cgy_per_mu", cal_path, 0.1, 5.0);
  const auto field = reader_.number(*cal, "field_cm", cal_path, 1.0, 50.0);
  const auto ssd = reader_.number(*cal, "ssd_cm", cal_path, min_distance_cm, max_distance_cm);
  const auto depth = reader_.number(*cal, "depth_cm", cal_path, 0.0, 40.0);
  const auto geometry = reader_.choice(*cal, "geometry", cal_path, {"SSD", "SAD"}, Presence::optional);
  Calibration& c = draft.data.calibration;
  c.output_cgy_per_mu = output.value_or(0.0);
  c.field_cm = field.value_or(0.0);
  c.ssd_cm = ssd.value_or(0.0);
  c.depth_cm = depth.value_or(0.0);
  if (geometry) c.stated_geometry = *geometry == "SAD" ? CalibrationGeometry::sad : CalibrationGeometry::ssd;
  const bool complete =
      output && field && ssd && depth && optional_ok(*cal, "geometry", geometry.has_value());
  draft.calibration_known = complete;
  if (c.stated_geometry) {
    c.geometry = *c.stated_geometry;
  } else if (complete && sad_known) {
    c.geometry = default_calibration_geometry(c.ssd_cm, c.depth_cm, sad_cm);
  }
  return complete;
}

bool MachineLoader::read_photon_tables(const toml::table& t, const std::string& path, BeamData& b) {
  const auto* tables = reader_.sub_table(t, "tables", path);
  if (tables == nullptr) return false;
  const std::string tables_path = path + "tables.";
  reader_.unknown_keys(*tables, {"pdd", "tmr", "sc", "sp", "oar"}, tables_path);
  auto pdd = table2d(*tables, "pdd", tables_path, {"pdd", "field_cm"}, Presence::required);
  auto tmr = table2d(*tables, "tmr", tables_path, {"tmr", "field_cm"}, Presence::required);
  auto sc = table1d(*tables, "sc", tables_path, {"sc", ""}, Presence::required);
  auto sp = table1d(*tables, "sp", tables_path, {"sp", ""}, Presence::required);
  b.oar = table2d(*tables, "oar", tables_path, {"oar", "off_axis_cm"}, Presence::optional);
  const bool complete = pdd && tmr && sc && sp && optional_ok(*tables, "oar", b.oar.has_value());
  if (pdd) b.pdd = std::move(*pdd);
  if (tmr) b.tmr = std::move(*tmr);
  if (sc) b.sc = std::move(*sc);
  if (sp) b.sp = std::move(*sp);
  return complete;
}

bool MachineLoader::read_accessories(const toml::table& t, const std::string& path, BeamData& b) {
  bool complete = true;
  const auto wedges = reader_.table_array(t, "wedge", path);
  for (std::size_t i = 0; i < wedges.size(); ++i) {
    // An incomplete wedge is kept too, so that its tables are still checked and plotted.
    WedgeData w;
    complete = wedge(*wedges[i], indexed_path(path, "wedge", i), w) && complete;
    if (!w.id.empty() && b.wedge(w.id) != nullptr) {
      reader_.problem(wedges[i], path + "wedge", "wedge id '" + w.id + "' appears twice");
      complete = false;
    }
    b.wedges.push_back(std::move(w));
  }
  const auto trays = reader_.table_array(t, "tray", path);
  for (std::size_t i = 0; i < trays.size(); ++i) {
    const std::string tray_path = indexed_path(path, "tray", i);
    reader_.unknown_keys(*trays[i], {"id", "factor"}, tray_path);
    const auto tray_id = reader_.text(*trays[i], "id", tray_path);
    const auto factor = reader_.number(*trays[i], "factor", tray_path, 0.5, 1.0);
    if (!tray_id || !factor) {
      complete = false;
      continue;
    }
    if (b.tray(*tray_id) != nullptr) {
      reader_.problem(trays[i], path + "tray", "tray id '" + *tray_id + "' appears twice");
      complete = false;
    }
    b.trays.push_back(TrayData{*tray_id, *factor});
  }
  return complete;
}

bool MachineLoader::wedge(const toml::table& t, const std::string& path, WedgeData& w) {
  reader_.unknown_keys(t, {"id", "angle_deg", "kind", "factor", "table", "orientation_table"}, path);
  const auto id = reader_.text(t, "id", path);
  const auto angle = reader_.number(t, "angle_deg", path, 1.0, 89.0);
  const auto kind = reader_.choice(t, "kind", path, {"PHYSICAL", "DYNAMIC"}, Presence::required);
  w.id = id.value_or("");
  w.angle_deg = angle.value_or(0.0);
  w.kind = kind == "DYNAMIC" ? WedgeKind::dynamic : WedgeKind::physical;
  bool complete = id && angle && kind;
  w.orientation_table =
      table2d(t, "orientation_table", path, {"wedge_oar", "wedge_axis_cm"}, Presence::optional);
  complete = complete && optional_ok(t, "orientation_table", w.orientation_table.has_value());
  const bool has_factor = t.get("factor") != nullptr;
  const bool has_table = t.get("table") != nullptr;
  if (has_factor == has_table) {
    reader_.problem(&t, path + "factor", "give exactly one of 'factor' and 'table'");
    return false;
  }
  if (has_factor) {
    w.factor = reader_.number(t, "factor", path, 0.1, 1.0);
    return complete && w.factor.has_value();
  }
  w.table = table2d(t, "table", path, {"wedge_factor", "field_cm"}, Presence::required);
  return complete && w.table.has_value();
}

}  // namespace countersign::beamdata::detail
