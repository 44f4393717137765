// The full pass over a library folder: machines in folder-name order, then the CT tables.

#include "ct_loader.hpp"
#include "inspection.hpp"
#include "machine_loader.hpp"

#include <algorithm>

namespace countersign::beamdata::detail {

namespace {

namespace fs = std::filesystem;

// Manifests of a library folder, or the folder itself when it is a machine folder; sorted by
// folder name so that the fingerprint does not depend on directory order.
std::vector<fs::path> machine_folders(const fs::path& folder) {
  if (fs::is_regular_file(folder / "machine.toml")) return {folder};
  std::vector<fs::path> folders;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator(folder, ec)) {
    if (entry.is_directory() && fs::is_regular_file(entry.path() / "machine.toml"))
      folders.push_back(entry.path());
  }
  std::sort(folders.begin(), folders.end());
  return folders;
}

Problem folder_problem(const fs::path& file, std::string key, std::string message,
                       std::optional<std::size_t> line = std::nullopt) {
  return Problem{file.string(), line, std::nullopt, std::nullopt, std::move(key), std::move(message)};
}

// Names and aliases must identify one machine across the whole library.
bool names_unique(const MachineDraft& draft, const std::vector<MachineDraft>& earlier,
                  Inspection& inspection) {
  bool unique = true;
  std::vector<std::string> names = draft.machine.aliases;
  if (!draft.machine.name.empty()) names.insert(names.begin(), draft.machine.name);
  for (const auto& other : earlier) {
    for (const auto& name : names) {
      if (!other.machine.answers_to(name)) continue;
      const std::string what = name == draft.machine.name
                                   ? "machine '" + name + "' is defined twice"
                                   : "alias '" + name + "' also names machine '" + other.machine.name + "'";
      inspection.problems.push_back(folder_problem(draft.machine.manifest, "machine", what));
      unique = false;
    }
  }
  return unique;
}

// Reads one machine folder; false when something could not be used.
bool inspect_machine(const fs::path& machine_folder, Inspection& inspection, Fingerprint& fingerprint) {
  const fs::path manifest_path = machine_folder / "machine.toml";
  ++inspection.machine_count;
  const auto text = read_file(manifest_path);
  if (!text) {
    inspection.problems.push_back(folder_problem(manifest_path, "", "cannot read the file"));
    return false;
  }
  MachineLoader loader(machine_folder, manifest_path, inspection, fingerprint);
  loader.fingerprint("machine.toml", *text);
  toml::table manifest;
  try {
    manifest = toml::parse(*text, manifest_path.string());
  } catch (const toml::parse_error& e) {
    inspection.problems.push_back(folder_problem(
        manifest_path, "", "not valid TOML: " + std::string{e.description()}, e.source().begin.line));
    return false;
  }
  MachineDraft draft = loader.machine(manifest);
  inspection.beam_count += draft.beams.size() + draft.electron_beams.size();
  draft.complete = names_unique(draft, inspection.machines, inspection) && draft.complete;
  const bool complete = draft.complete;
  inspection.machines.push_back(std::move(draft));
  return complete;
}

}  // namespace

std::string problem_path(const Machine& machine, const std::string& table_file) {
  return (machine.manifest.parent_path() / table_file).string();
}

Library Inspection::readable_library() const {
  Library library;
  library.root = root;
  library.ct = ct;
  library.sha256_hex = sha256_hex;
  for (const auto& draft : machines) {
    Machine m = draft.machine;
    for (const auto& b : draft.beams) m.beams.push_back(b.data);
    for (const auto& e : draft.electron_beams) m.electron_beams.push_back(e.data);
    library.machines.push_back(std::move(m));
  }
  return library;
}

Inspection inspect_library(const fs::path& folder) {
  Inspection inspection;
  inspection.root = folder;
  if (!fs::is_directory(folder)) {
    inspection.problems.push_back(folder_problem(folder, "", "not a folder"));
    return inspection;
  }
  const auto folders = machine_folders(folder);
  if (folders.empty()) {
    inspection.problems.push_back(folder_problem(folder, "", "no machine.toml here nor in any sub-folder"));
    return inspection;
  }
  Fingerprint fingerprint;
  bool complete = true;
  for (const auto& machine_folder : folders)
    complete = inspect_machine(machine_folder, inspection, fingerprint) && complete;
  // A single machine folder has no CT tables of its own: they belong to the library folder.
  if (folders.front() != folder) complete = read_ct_tables(folder, inspection, fingerprint) && complete;
  inspection.sha256_hex = fingerprint.hex_digest();
  inspection.complete = complete;
  return inspection;
}

}  // namespace countersign::beamdata::detail
