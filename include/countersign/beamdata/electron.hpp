#pragma once

// Electron beams of a beam-data library (beamdata/FORMAT.md "Electron beams"): applicators with
// their factors, effective SSDs, depth-dose tables per cutout size and cutout factors. Loading and
// validation only; the dose calculation for electrons belongs to the engine (engine/electron_dose.hpp).

#include <countersign/beamdata/ssd_range.hpp>
#include <countersign/beamdata/table.hpp>

#include <optional>
#include <string>
#include <vector>

namespace countersign::beamdata {

struct ElectronCalibration {
  double output_cgy_per_mu = 0.0;  // dose per MU at dmax, reference applicator, standard SSD
  std::string applicator;          // id of the reference applicator
  double ssd_cm = 0.0;
  double depth_cm = 0.0;
};

struct ApplicatorData {
  std::string id;                   // compared with Applicator ID (300A,0108)
  double field_cm = 0.0;            // side of the open square field at the standard SSD
  double factor = 0.0;              // applicator (cone) factor, open applicator, dmax, standard SSD
  double effective_ssd_cm = 0.0;    // for inverse-square at extended distances
  Table2D pdd;                      // percent, depth_cm x cutout equivalent square (cm), standard SSD;
                                    // 100 at the maximum of each column
  std::optional<Table1D> cutout{};  // cutout factor vs cutout equivalent square (header
                                    // field_cm,cutout_factor); nullopt: the manifest names none
};

struct ElectronBeamData {
  std::string id;           // free text, shown in reports
  double energy_mev = 0.0;  // manifest key energy_mv; compared with Nominal Beam Energy
  double dmax_cm = 0.0;     // reference applicator, standard SSD
  double pdd_ssd_cm = 0.0;  // the standard SSD of the tables
  ElectronCalibration calibration;
  std::vector<ApplicatorData> applicators;
  std::optional<SsdRange> ssd_range_cm{};  // optional key: SSDs at which the data is trusted

  [[nodiscard]] const ApplicatorData* applicator(const std::string& id) const;
};

}  // namespace countersign::beamdata
