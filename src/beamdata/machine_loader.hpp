#pragma once

// Reads one machine folder: its manifest's keys and every table the manifest names, adding each
// file to the library fingerprint in manifest order. Defined across machine_loader.cpp (machine,
// tables), photon_loader.cpp ([[beam]] of PHOTON) and electron_loader.cpp ([[beam]] of ELECTRON).

#include "csv_reader.hpp"
#include "inspection.hpp"
#include "library_files.hpp"
#include "manifest_reader.hpp"

#include <toml++/toml.h>

#include <filesystem>
#include <optional>
#include <string>

namespace countersign::beamdata::detail {

// Plausible ranges of manifest distances (wide on purpose: they catch unit slips and typos, not
// clinical judgement; common practice, no source).
inline constexpr double min_distance_cm = 50.0;
inline constexpr double max_distance_cm = 200.0;

// A table named by a manifest key: its header's row axis, its column axis (two-axis tables) and
// the quantity named in the one-axis header.
struct TableSpec {
  std::string quantity;     // "pdd", "sc", "wedge_factor", "cutout_factor", ...
  std::string column_axis;  // two-axis tables: "field_cm", "off_axis_cm", "wedge_axis_cm"
};

class MachineLoader {
 public:
  MachineLoader(const std::filesystem::path& machine_folder, const std::filesystem::path& manifest_path,
                Inspection& inspection, Fingerprint& fingerprint);

  // Adds one file to the fingerprint as "<machine folder>/<path>".
  void fingerprint(const std::string& relative, const std::string& bytes);

  // The whole manifest; the draft says what could be read.
  MachineDraft machine(const toml::table& manifest);

 private:
  std::optional<std::string> table_text(const std::string& relative, const toml::node* where,
                                        const std::string& key);
  void warn_extrapolated_cells(const std::filesystem::path& table, const std::string& key);
  std::optional<Table2D> table2d(const toml::table& t, std::string_view key, const std::string& path,
                                 const TableSpec& spec, Presence presence);
  std::optional<Table1D> table1d(const toml::table& t, std::string_view key, const std::string& path,
                                 const TableSpec& spec, Presence presence);

  // photon_loader.cpp
  BeamDraft photon_beam(const toml::table& t, const std::string& path, double sad_cm, bool sad_known);
  bool read_photon_keys(const toml::table& t, const std::string& path, BeamDraft& draft);
  bool read_calibration(const toml::table& t, const std::string& path, double sad_cm, bool sad_known,
                        BeamDraft& draft);
  bool read_photon_tables(const toml::table& t, const std::string& path, BeamData& beam);
  bool read_accessories(const toml::table& t, const std::string& path, BeamData& beam);
  void warn_suspicious(const toml::table& t, const std::string& path, const BeamDraft& draft, double sad_cm,
                       bool sad_known);
  bool wedge(const toml::table& t, const std::string& path, WedgeData& wedge);

  // electron_loader.cpp
  ElectronDraft electron_beam(const toml::table& t, const std::string& path);
  bool read_electron_calibration(const toml::table& t, const std::string& path, ElectronDraft& draft);
  bool applicator(const toml::table& t, const std::string& path, ApplicatorData& applicator);

  // The optional [[bolus]] entries (id, thickness_cm) into machine.boli.
  bool boli(const toml::table& manifest, Machine& machine);
  bool beam_ids_unique(const MachineDraft& draft, const std::vector<const toml::table*>& beams);

  std::filesystem::path folder_;
  std::string fingerprint_name_;
  Inspection& inspection_;
  Fingerprint& fingerprint_;
  ManifestReader reader_;
};

}  // namespace countersign::beamdata::detail
