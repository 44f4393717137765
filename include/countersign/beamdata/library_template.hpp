#pragma once

// `beamdata new`: a complete template library for one machine — a manifest with every key of the
// format present and commented, tables with their axes and empty cells, a README of what to measure
// — which `validate` reports as incomplete until every value is filled in.

#include <countersign/util/error.hpp>

#include <filesystem>
#include <string>
#include <vector>

namespace countersign::beamdata {

// Grids of the template's tables (and of `import` when a table does not exist yet): depths in
// 0.25 cm steps to 3 cm, 0.5 cm to 5 cm, 1 cm to 30 cm; square fields 3-40 cm; off-axis 0-20 cm;
// common practice, no source.
struct TemplateGrid {
  std::vector<double> depths_cm;
  std::vector<double> fields_cm;
  std::vector<double> oar_depths_cm;
  std::vector<double> off_axis_cm;
  std::vector<double> wedge_depths_cm;
  std::vector<double> wedge_axis_cm;  // signed, thin end negative
  std::vector<double> ct_hu;
};
[[nodiscard]] TemplateGrid default_template_grid();

struct TemplateRequest {
  std::filesystem::path library_folder;  // the machine folder is library_folder / machine
  std::string machine;                   // Treatment Machine Name (300A,00B2), exact
  std::vector<double> photon_energies_mv;
  std::vector<std::string> wedges;  // wedge ids, each on every beam
  TemplateGrid grid = default_template_grid();
};

// Writes the template; refuses to overwrite an existing machine folder. Returns the files written.
[[nodiscard]] Expected<std::vector<std::filesystem::path>> write_library_template(
    const TemplateRequest& request);

// The beam id the template gives a photon energy: "6X", "10X", "6.5X".
[[nodiscard]] std::string template_beam_id(double energy_mv);

}  // namespace countersign::beamdata
