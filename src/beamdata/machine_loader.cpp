#include "machine_loader.hpp"

#include <algorithm>
#include <cmath>
#include <set>

namespace countersign::beamdata::detail {

namespace fs = std::filesystem;

MachineLoader::MachineLoader(const fs::path& machine_folder, const fs::path& manifest_path,
                             Inspection& inspection, Fingerprint& fingerprint)
    : folder_(machine_folder),
      fingerprint_name_(folder_name(machine_folder)),
      inspection_(inspection),
      fingerprint_(fingerprint),
      reader_(manifest_path.string(), inspection.problems) {}

void MachineLoader::fingerprint(const std::string& relative, const std::string& bytes) {
  fingerprint_.add(fingerprint_name_ + "/" + relative, bytes);
}

std::optional<std::string> MachineLoader::table_text(const std::string& relative, const toml::node* where,
                                                     const std::string& key) {
  const auto resolved = confined_path(folder_, relative);
  if (const auto* why = std::get_if<std::string>(&resolved)) {
    reader_.problem(where, key, "names " + *why);
    return std::nullopt;
  }
  auto bytes = read_file(std::get<fs::path>(resolved));
  if (!bytes) {
    reader_.problem(where, key, "cannot read '" + relative + "'");
    return std::nullopt;
  }
  fingerprint(relative, *bytes);
  warn_extrapolated_cells(std::get<fs::path>(resolved), key);
  return bytes;
}

// `beamdata derive-tmr/rescale-pdd --allow-extrapolation` lists the cells it extrapolated in a
// provenance note beside the table; such cells are data the tables never measured.
void MachineLoader::warn_extrapolated_cells(const fs::path& table, const std::string& key) {
  const fs::path note = table.string() + ".provenance.toml";
  std::error_code ec;
  if (!fs::is_regular_file(note, ec)) return;
  std::size_t cells = 0;
  try {
    const toml::table parsed = toml::parse_file(note.string());
    if (const auto* list = parsed.get_as<toml::array>("cell")) {
      for (const auto& cell : *list) {
        const auto* t = cell.as_table();
        if (t != nullptr && t->get_as<bool>("extrapolated") != nullptr &&
            t->get_as<bool>("extrapolated")->get())
          ++cells;
      }
    }
  } catch (const toml::parse_error&) {
    inspection_.problems.push_back(Problem{note.string(), std::nullopt, std::nullopt, std::nullopt, key,
                                           "provenance note is not valid TOML", Severity::warning});
    return;
  }
  if (cells > 0)
    inspection_.problems.push_back(Problem{table.string(), std::nullopt, std::nullopt, std::nullopt, key,
                                           std::to_string(cells) +
                                               " cell(s) were filled by extrapolation when the "
                                               "table was derived (listed in " +
                                               note.string() + ")",
                                           Severity::warning});
}

std::optional<Table2D> MachineLoader::table2d(const toml::table& t, std::string_view key,
                                              const std::string& path, const TableSpec& spec,
                                              Presence presence) {
  const auto relative = reader_.text(t, key, path, presence);
  if (!relative) return std::nullopt;
  const auto text = table_text(*relative, t.get(key), path + std::string{key});
  if (!text) return std::nullopt;
  const TableSource source{(folder_ / *relative).string(), *relative, spec.quantity};
  Read2D read = parse_table2d(*text, source, "depth_cm", spec.column_axis, inspection_.problems);
  inspection_.lines[source.problem_file] = TableLines{read.header_line, read.row_lines};
  return std::move(read.table);
}

std::optional<Table1D> MachineLoader::table1d(const toml::table& t, std::string_view key,
                                              const std::string& path, const TableSpec& spec,
                                              Presence presence) {
  const auto relative = reader_.text(t, key, path, presence);
  if (!relative) return std::nullopt;
  const auto text = table_text(*relative, t.get(key), path + std::string{key});
  if (!text) return std::nullopt;
  const TableSource source{(folder_ / *relative).string(), *relative, spec.quantity};
  Read1D read = parse_table1d(*text, source, inspection_.problems);
  inspection_.lines[source.problem_file] = TableLines{read.header_line, read.row_lines};
  return std::move(read.table);
}

// Beam ids are shown in reports and name the beam in findings: one id, one beam.
bool MachineLoader::beam_ids_unique(const MachineDraft& draft, const std::vector<const toml::table*>& beams) {
  bool unique = true;
  std::set<std::string> seen;
  for (std::size_t i = 0; i < beams.size(); ++i) {
    const auto* id = beams[i]->get("id");
    if (id == nullptr || id->as_string() == nullptr) continue;
    const std::string value = id->as_string()->get();
    if (!seen.insert(value).second) {
      reader_.problem(id, indexed_path("", "beam", i) + "id",
                      "beam id '" + value + "' appears twice in " + draft.machine.manifest.string());
      unique = false;
    }
  }
  return unique;
}

bool MachineLoader::boli(const toml::table& manifest, Machine& machine) {
  bool complete = true;
  const auto entries = reader_.table_array(manifest, "bolus", "");
  for (std::size_t i = 0; i < entries.size(); ++i) {
    const std::string path = indexed_path("", "bolus", i);
    reader_.unknown_keys(*entries[i], {"id", "thickness_cm"}, path);
    const auto id = reader_.text(*entries[i], "id", path);
    const auto thickness = reader_.number(*entries[i], "thickness_cm", path, 0.05, 5.0);
    if (id && machine.bolus(*id) != nullptr) {
      reader_.problem(entries[i], path + "id", "bolus id '" + *id + "' appears twice");
      complete = false;
    }
    if (!id || !thickness) {
      complete = false;
      continue;
    }
    machine.boli.push_back({*id, *thickness});
  }
  return complete;
}

MachineDraft MachineLoader::machine(const toml::table& manifest) {
  MachineDraft draft;
  draft.machine.manifest = reader_.file();
  reader_.unknown_keys(manifest, {"machine", "aliases", "sad_cm", "beam", "bolus"}, "");
  const auto name = reader_.text(manifest, "machine", "");
  draft.machine.aliases = reader_.text_list(manifest, "aliases", "");
  const auto sad = reader_.number(manifest, "sad_cm", "", min_distance_cm, max_distance_cm);
  draft.sad_known = sad.has_value();
  draft.machine.name = name.value_or("");
  draft.machine.sad_cm = sad.value_or(0.0);
  bool complete = name && sad;
  for (std::size_t i = 0; i < draft.machine.aliases.size(); ++i) {
    const std::string& alias = draft.machine.aliases[i];
    const bool repeated = std::find(draft.machine.aliases.begin(),
                                    draft.machine.aliases.begin() + static_cast<std::ptrdiff_t>(i),
                                    alias) != draft.machine.aliases.begin() + static_cast<std::ptrdiff_t>(i);
    if (alias == draft.machine.name || repeated) {
      reader_.problem(manifest.get("aliases"), "aliases", "'" + alias + "' is listed twice");
      complete = false;
    }
  }

  complete = boli(manifest, draft.machine) && complete;
  const auto beams = reader_.table_array(manifest, "beam", "");
  if (beams.empty()) {
    reader_.problem(&manifest, "beam", "the manifest defines no [[beam]]");
    complete = false;
  }
  complete = beam_ids_unique(draft, beams) && complete;
  for (std::size_t i = 0; i < beams.size(); ++i) {
    const std::string path = indexed_path("", "beam", i);
    const auto radiation = reader_.text(*beams[i], "radiation", path);
    if (radiation == "ELECTRON") {
      draft.electron_beams.push_back(electron_beam(*beams[i], path));
      complete = complete && draft.electron_beams.back().complete;
      continue;
    }
    if (radiation && *radiation != "PHOTON") {
      // Other radiation types are for later versions: the beam is left out, so plans using it are
      // "not checked" (unknown radiation), never computed with photon physics.
      reader_.problem(beams[i]->get("radiation"), path + "radiation",
                      "'" + *radiation + "' beams are not supported yet; beam left out of the library",
                      Severity::warning);
      continue;
    }
    BeamDraft beam = photon_beam(*beams[i], path, draft.machine.sad_cm, draft.sad_known);
    beam.data.radiation = radiation.value_or("");
    beam.complete = beam.complete && radiation.has_value();
    for (const auto& other : draft.beams) {
      if (beam.data.energy_mv > 0.0 && std::abs(other.data.energy_mv - beam.data.energy_mv) < 0.01) {
        reader_.problem(
            beams[i], path + "energy_mv",
            "beams '" + other.data.id + "' and '" + beam.data.id + "' have the same radiation and energy");
        complete = false;
      }
    }
    complete = complete && beam.complete;
    draft.beams.push_back(std::move(beam));
  }
  for (std::size_t i = 0; i < draft.electron_beams.size(); ++i) {
    for (std::size_t j = 0; j < i; ++j) {
      const auto& a = draft.electron_beams[j].data;
      const auto& b = draft.electron_beams[i].data;
      if (b.energy_mev > 0.0 && std::abs(a.energy_mev - b.energy_mev) < 0.01) {
        reader_.problem(&manifest, "beam",
                        "electron beams '" + a.id + "' and '" + b.id + "' have the same energy");
        complete = false;
      }
    }
  }
  draft.complete = complete;
  return draft;
}

}  // namespace countersign::beamdata::detail
