// `beamdata new`: the template library (manifest, README, tables with axes and empty cells).

#include <countersign/beamdata/library_template.hpp>

#include "library_files.hpp"
#include "table_notes.hpp"
#include "template_text.hpp"

#include <cmath>
#include <fstream>
#include <sstream>

namespace countersign::beamdata {

namespace fs = std::filesystem;

namespace {

std::string number(double value) {
  std::ostringstream text;
  text << value;
  return text.str();
}

// A table with its axes and every cell empty.
std::string empty_table(const std::string& quantity, const std::string& row_axis,
                        const std::vector<double>& rows, const std::vector<double>& columns,
                        const std::string& one_axis_quantity = {}) {
  std::ostringstream out;
  out << "# TEMPLATE written by countersign beamdata new: fill in every empty cell (or use beamdata "
         "import).\n"
      << "# " << detail::table_axes_note(quantity) << "\n";
  if (!one_axis_quantity.empty()) {
    out << row_axis << ',' << one_axis_quantity << '\n';
    for (const double r : rows) out << number(r) << ",\n";
    return out.str();
  }
  out << row_axis;
  for (const double c : columns) out << ',' << number(c);
  out << '\n';
  for (const double r : rows) out << number(r) << std::string(columns.size(), ',') << '\n';
  return out.str();
}

Expected<fs::path> write_new(const fs::path& path, const std::string& text) {
  std::error_code ec;
  fs::create_directories(path.parent_path(), ec);
  if (fs::exists(path, ec))
    return Error{ErrorKind::io, path.string(), "", "", "exists already; nothing overwritten"};
  std::ofstream out(path, std::ios::binary);
  out << text;
  out.close();
  if (!out) return Error{ErrorKind::io, path.string(), "", "", "cannot write the file"};
  return path;
}

}  // namespace

TemplateGrid default_template_grid() {
  TemplateGrid g;
  for (double d = 0.0; d < 3.0; d += 0.25) g.depths_cm.push_back(d);
  for (double d = 3.0; d < 5.0; d += 0.5) g.depths_cm.push_back(d);
  for (double d = 5.0; d <= 30.0; d += 1.0) g.depths_cm.push_back(d);
  g.fields_cm = {3, 4, 5, 6, 7, 8, 10, 12, 15, 20, 25, 30, 35, 40};
  g.oar_depths_cm = {1, 2, 5, 10, 15, 20, 25, 30};
  for (int i = 0; i <= 20; ++i) g.off_axis_cm.push_back(i);
  g.wedge_depths_cm = {2, 5, 10, 15, 20, 25};
  for (int i = -15; i <= 15; ++i) g.wedge_axis_cm.push_back(i);
  g.ct_hu = {-1000, -800, -500, -100, 0, 100, 300, 1000, 2000, 3000};
  return g;
}

std::string template_beam_id(double energy_mv) { return number(energy_mv) + "X"; }

Expected<std::vector<fs::path>> write_library_template(const TemplateRequest& request) {
  if (request.machine.empty() || request.machine.find('/') != std::string::npos ||
      request.machine.find('\\') != std::string::npos || request.machine.front() == '.')
    return Error{ErrorKind::usage, "", "--machine", "",
                 "'" + request.machine + "' cannot name a folder (no '/', '\\' or leading '.')"};
  if (request.photon_energies_mv.empty())
    return Error{ErrorKind::usage, "", "--energies", "", "give at least one photon energy (MV)"};
  const fs::path machine = request.library_folder / request.machine;
  if (fs::exists(machine))
    return Error{ErrorKind::io, machine.string(), "", "",
                 "exists already; the template is written only into a new folder"};
  const TemplateGrid& g = request.grid;
  std::vector<std::pair<fs::path, std::string>> files;
  files.emplace_back(machine / "machine.toml", detail::template_manifest(request));
  files.emplace_back(machine / "README.md", detail::template_readme(request));
  for (const double energy : request.photon_energies_mv) {
    const std::string id = template_beam_id(energy);
    files.emplace_back(machine / id / "pdd.csv", empty_table("pdd", "depth_cm", g.depths_cm, g.fields_cm));
    files.emplace_back(machine / id / "tmr.csv", empty_table("tmr", "depth_cm", g.depths_cm, g.fields_cm));
    files.emplace_back(machine / id / "sc.csv", empty_table("sc", "field_cm", g.fields_cm, {}, "sc"));
    files.emplace_back(machine / id / "sp.csv", empty_table("sp", "field_cm", g.fields_cm, {}, "sp"));
    files.emplace_back(machine / id / "oar.csv",
                       empty_table("oar", "depth_cm", g.oar_depths_cm, g.off_axis_cm));
  }
  const fs::path ct_default = request.library_folder / "ct" / "default.csv";
  if (!fs::exists(ct_default))
    files.emplace_back(
        ct_default, empty_table("relative_electron_density", "hu", g.ct_hu, {}, "relative_electron_density"));
  std::vector<fs::path> written;
  for (const auto& [path, text] : files) {
    auto result = write_new(path, text);
    if (!result) return result.error();
    written.push_back(*result);
  }
  return written;
}

}  // namespace countersign::beamdata
