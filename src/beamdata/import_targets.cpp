// What a machine manifest says about the beam being imported: dmax, the PDD's SSD, and the paths of
// its tables. The manifest may still be a template with values not filled in (nan).

#include "import_steps.hpp"
#include "library_files.hpp"

#include <toml++/toml.h>

#include <cmath>

namespace countersign::beamdata::detail {

namespace {

std::optional<double> finite_number(const toml::table& t, std::string_view key) {
  const toml::node* node = t.get(key);
  if (node == nullptr) return std::nullopt;
  std::optional<double> value;
  if (const auto* f = node->as_floating_point()) value = f->get();
  if (const auto* i = node->as_integer()) value = static_cast<double>(i->get());
  if (value && !std::isfinite(*value)) return std::nullopt;
  return value;
}

std::string text(const toml::table& t, std::string_view key) {
  const toml::node* node = t.get(key);
  return node != nullptr && node->as_string() != nullptr ? node->as_string()->get() : std::string{};
}

const toml::table* find_beam(const toml::table& manifest, const std::string& beam_id) {
  const auto* beams = manifest.get_as<toml::array>("beam");
  if (beams == nullptr) return nullptr;
  for (const auto& element : *beams) {
    const auto* beam = element.as_table();
    if (beam != nullptr && text(*beam, "id") == beam_id) return beam;
  }
  return nullptr;
}

}  // namespace

std::optional<ImportTargets> read_import_targets(const std::filesystem::path& machine_folder,
                                                 const std::string& beam_id, std::vector<Problem>& problems) {
  const auto manifest_path = machine_folder / "machine.toml";
  const auto problem = [&](std::string message) {
    problems.push_back(
        Problem{manifest_path.string(), std::nullopt, std::nullopt, std::nullopt, "", std::move(message)});
    return std::nullopt;
  };
  const auto bytes = read_file(manifest_path);
  if (!bytes) return problem("cannot read the file");
  toml::table manifest;
  try {
    manifest = toml::parse(*bytes, manifest_path.string());
  } catch (const toml::parse_error& e) {
    return problem("not valid TOML: " + std::string{e.description()});
  }
  const toml::table* beam = find_beam(manifest, beam_id);
  if (beam == nullptr) return problem("no [[beam]] with id = \"" + beam_id + "\"");
  ImportTargets targets;
  targets.dmax_cm = finite_number(*beam, "dmax_cm");
  targets.pdd_ssd_cm = finite_number(*beam, "pdd_ssd_cm");
  if (const auto* tables = beam->get_as<toml::table>("tables")) {
    for (const auto* key : {"pdd", "tmr", "sc", "sp", "oar"}) {
      const std::string path = text(*tables, key);
      if (!path.empty()) targets.tables[key] = path;
    }
  }
  if (const auto* wedges = beam->get_as<toml::array>("wedge")) {
    for (const auto& element : *wedges) {
      const auto* w = element.as_table();
      if (w == nullptr || text(*w, "id").empty()) continue;
      targets.wedges[text(*w, "id")] =
          WedgeTarget{text(*w, "table"), text(*w, "orientation_table"), finite_number(*w, "factor")};
    }
  }
  return targets;
}

}  // namespace countersign::beamdata::detail
