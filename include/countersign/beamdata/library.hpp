#pragma once

// A beam-data library (beamdata/FORMAT.md): machines, their beams and tables, loaded and validated.
// Optional keys of the format are std::optional here: absent means "not known", never a value.

#include <countersign/beamdata/ct_density.hpp>
#include <countersign/beamdata/electron.hpp>
#include <countersign/beamdata/problem.hpp>
#include <countersign/beamdata/table.hpp>
#include <countersign/util/error.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::beamdata {

// Where the calibration's field_cm is defined: at the surface, point at ssd_cm + depth_cm ("SSD"),
// or at the calibration point itself ("SAD").
enum class CalibrationGeometry { ssd, sad };

// The format's rule for an absent `geometry`: SSD when ssd_cm + depth_cm differs from sad_cm (by
// more than 0.01 cm), else SAD.
[[nodiscard]] CalibrationGeometry default_calibration_geometry(double ssd_cm, double depth_cm, double sad_cm);
[[nodiscard]] std::string_view to_string(CalibrationGeometry geometry);  // "SSD" or "SAD"

struct Calibration {
  double output_cgy_per_mu = 0.0;  // dose per MU at the calibration point
  double field_cm = 0.0;           // reference square field side
  double ssd_cm = 0.0;
  double depth_cm = 0.0;  // d0; source-to-calibration-point distance = ssd_cm + depth_cm
  // `geometry` as the manifest states it; nullopt when the key is absent.
  std::optional<CalibrationGeometry> stated_geometry{};
  // The geometry in force: the stated one, else default_calibration_geometry() (set by the loader).
  CalibrationGeometry geometry{CalibrationGeometry::ssd};

  [[nodiscard]] double source_to_point_cm() const { return ssd_cm + depth_cm; }
  // True when the geometry came from the default rule; results must say so.
  [[nodiscard]] bool geometry_defaulted() const { return !stated_geometry.has_value(); }
};

enum class WedgeKind { physical, dynamic };

struct WedgeData {
  std::string id;  // compared with Wedge ID (300A,00D4)
  double angle_deg = 0.0;
  WedgeKind kind = WedgeKind::physical;
  std::optional<double> factor;  // a constant factor, or ...
  std::optional<Table2D> table;  // ... a table depth_cm x field_cm (equivalent square of the
                                 // irradiated field at the isocentre plane)
  // Optional: the wedged off-axis ratio, depth_cm x signed distance (cm) along the wedge gradient
  // at the isocentre plane, thin end negative (column axis "wedge_axis_cm").
  std::optional<Table2D> orientation_table{};
};

struct TrayData {
  std::string id;  // compared with Block Tray ID (300A,00F5)
  double factor = 1.0;
};

// Which opening sets the collimator scatter factor Sc.
enum class HeadScatterField {
  jaws,          // the jaw opening (the format's default)
  jaws_and_mlc,  // the intersection of jaws and MLC, for heads whose MLC replaces or sits above a jaw
};
[[nodiscard]] std::string_view to_string(HeadScatterField field);  // "jaws" or "jaws_and_mlc"

struct BeamData {
  std::string id;          // free text, shown in reports
  std::string radiation;   // "PHOTON" (compared with Radiation Type)
  double energy_mv = 0.0;  // compared with Nominal Beam Energy of control point 0
  double dmax_cm = 0.0;
  double pdd_ssd_cm = 0.0;  // the SSD at which the PDD table was measured
  Calibration calibration;
  Table2D pdd;                             // percent, depth_cm x field at the surface (cm)
  Table2D tmr;                             // depth_cm x field at depth (cm)
  Table1D sc;                              // vs collimator field at the isocentre (cm)
  Table1D sp;                              // vs field in the phantom (cm)
  std::optional<Table2D> oar;              // depth_cm x off-axis distance at the isocentre plane (cm)
  std::optional<double> mlc_transmission;  // fraction of open-field dose under closed leaves (optional key)
  std::vector<WedgeData> wedges;
  std::vector<TrayData> trays;
  // Optional keys (FORMAT.md "Optional keys"); nullopt when absent.
  std::optional<double> mlc_leaf_end_offset_mm{};        // each leaf's effective tip beyond its nominal one
  std::optional<HeadScatterField> head_scatter_field{};  // as stated; see head_scatter_field_in_force()
  std::optional<SsdRange> ssd_range_cm{};
  std::optional<double> block_transmission{};  // default for blocks without (300A,0102)

  [[nodiscard]] const WedgeData* wedge(const std::string& id) const;
  [[nodiscard]] const TrayData* tray(const std::string& id) const;
  // The stated head_scatter_field, else the format's default (jaws).
  [[nodiscard]] HeadScatterField head_scatter_field_in_force() const {
    return head_scatter_field.value_or(HeadScatterField::jaws);
  }
};

// A bolus the clinic uses (FORMAT.md "Additions", [[bolus]]): its thickness, found by the plan's
// Bolus ID (300A,00DC), since an RT Plan carries no bolus thickness.
struct BolusData {
  std::string id;
  double thickness_cm = 0.0;  // water-equivalent thickness
};

struct Machine {
  std::string name;                    // compared with Treatment Machine Name (300A,00B2), exact
  std::vector<std::string> aliases{};  // other exact, case-sensitive names of the same machine
  double sad_cm = 0.0;
  std::filesystem::path manifest;  // path of machine.toml
  std::vector<BeamData> beams;     // photon beams
  std::vector<ElectronBeamData> electron_beams{};
  std::vector<BolusData> boli{};  // optional [[bolus]] entries

  [[nodiscard]] const BolusData* bolus(const std::string& id) const;

  // True when `treatment_machine_name` is the name or one of the aliases (exact, case-sensitive).
  [[nodiscard]] bool answers_to(std::string_view treatment_machine_name) const;
  [[nodiscard]] const ElectronBeamData* electron_beam(double energy_mev) const;  // within 0.01 MeV
};

// Why a plan's beam found no beam data.
enum class MatchFailure { unknown_machine, unknown_radiation, unknown_energy };

struct BeamMatch {
  const Machine* machine = nullptr;     // set when the machine was found
  const BeamData* beam = nullptr;       // set on success
  std::optional<MatchFailure> failure;  // set on failure
  std::string explanation;              // one sentence for the report on failure
};

struct ElectronMatch {
  const Machine* machine = nullptr;        // set when the machine was found
  const ElectronBeamData* beam = nullptr;  // set on success
  std::optional<MatchFailure> failure;     // set on failure
  std::string explanation;                 // one sentence for the report on failure
};

struct Library {
  std::filesystem::path root;
  std::vector<Machine> machines;
  CtDensityTables ct{};           // <library>/ct/*.csv; empty when the library has none
  std::string sha256_hex;         // over the manifests and every table they name, fixed order
  std::vector<Problem> warnings;  // findings that do not stop use (validation.hpp), for reports

  // The machine whose name or alias equals `name` (exact, case-sensitive).
  [[nodiscard]] const Machine* machine(const std::string& name) const;
  // Match by machine name or alias (exact), radiation type (exact) and nominal energy (within
  // 0.01 MV). Photon beams only; electron beams are found with Machine::electron_beam.
  [[nodiscard]] BeamMatch match(const std::string& machine_name, const std::string& radiation_type,
                                double energy_mv) const;
  // Match an electron beam by machine name or alias (exact) and nominal energy (within 0.01 MeV).
  [[nodiscard]] ElectronMatch match_electron(const std::string& machine_name, double energy_mev) const;
  // "FERN-LINAC-1 (also 'FERN1'), TEST-LINAC": the machines, for "unknown machine" sentences.
  [[nodiscard]] std::string machine_listing() const;
};

// Loads a library folder (one sub-folder per machine, optionally ct/) or a single machine folder.
// The first problem that prevents use is returned as an error naming the file, key or row/column.
[[nodiscard]] Expected<Library> load_library(const std::filesystem::path& folder);

}  // namespace countersign::beamdata
