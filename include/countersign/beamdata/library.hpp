#pragma once

// A beam-data library (beamdata/FORMAT.md): machines, their beams and tables, loaded and validated.

#include <countersign/beamdata/problem.hpp>
#include <countersign/beamdata/table.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata {

struct Calibration {
  double output_cgy_per_mu = 0.0;  // dose per MU at the calibration point
  double field_cm = 0.0;           // reference square field side
  double ssd_cm = 0.0;
  double depth_cm = 0.0;           // d0; source-to-calibration-point distance = ssd_cm + depth_cm
  [[nodiscard]] double source_to_point_cm() const { return ssd_cm + depth_cm; }
};

enum class WedgeKind { physical, dynamic };

struct WedgeData {
  std::string id;                       // compared with Wedge ID (300A,00D4)
  double angle_deg = 0.0;
  WedgeKind kind = WedgeKind::physical;
  std::optional<double> factor;         // a constant factor, or ...
  std::optional<Table2D> table;         // ... a table depth_cm x field_cm
};

struct TrayData {
  std::string id;                       // compared with Block Tray ID (300A,00F5)
  double factor = 1.0;
};

struct BeamData {
  std::string id;                       // free text, shown in reports
  std::string radiation;                // "PHOTON" (compared with Radiation Type)
  double energy_mv = 0.0;               // compared with Nominal Beam Energy of control point 0
  double dmax_cm = 0.0;
  double pdd_ssd_cm = 0.0;              // the SSD at which the PDD table was measured
  Calibration calibration;
  Table2D pdd;                          // percent, depth_cm x field at the surface (cm)
  Table2D tmr;                          // depth_cm x field at depth (cm)
  Table1D sc;                           // vs collimator field at the isocentre (cm)
  Table1D sp;                           // vs field in the phantom (cm)
  std::optional<Table2D> oar;           // depth_cm x off-axis distance at the isocentre plane (cm)
  std::optional<double> mlc_transmission;  // fraction of open-field dose under closed leaves (optional key)
  std::vector<WedgeData> wedges;
  std::vector<TrayData> trays;

  [[nodiscard]] const WedgeData* wedge(const std::string& id) const;
  [[nodiscard]] const TrayData* tray(const std::string& id) const;
};

struct Machine {
  std::string name;                     // compared with Treatment Machine Name (300A,00B2), exact
  double sad_cm = 0.0;
  std::filesystem::path manifest;       // path of machine.toml
  std::vector<BeamData> beams;
};

// Why a plan's beam found no beam data.
enum class MatchFailure { unknown_machine, unknown_radiation, unknown_energy };

struct BeamMatch {
  const Machine* machine = nullptr;     // set when the machine was found
  const BeamData* beam = nullptr;       // set on success
  std::optional<MatchFailure> failure;  // set on failure
  std::string explanation;              // one sentence for the report on failure
};

struct Library {
  std::filesystem::path root;
  std::vector<Machine> machines;
  std::string sha256_hex;               // over the manifests and every table they name, fixed order
  std::vector<Problem> warnings;        // findings that do not stop use (validation.hpp), for reports

  [[nodiscard]] const Machine* machine(const std::string& name) const;
  // Match by machine name (exact), radiation type (exact) and nominal energy (within 0.01 MV).
  [[nodiscard]] BeamMatch match(const std::string& machine_name, const std::string& radiation_type,
                                double energy_mv) const;
};

// Loads a library folder (one sub-folder per machine) or a single machine folder. The first
// problem that prevents use is returned as an error naming the file, key or row/column.
[[nodiscard]] Expected<Library> load_library(const std::filesystem::path& folder);

}  // namespace countersign::beamdata
