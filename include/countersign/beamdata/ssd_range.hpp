#pragma once

namespace countersign::beamdata {

// SSDs at which a beam's data is trusted (inclusive); outside it a beam is not checked.
struct SsdRange {
  double min_cm = 0.0;
  double max_cm = 0.0;
  [[nodiscard]] bool contains(double ssd_cm) const { return ssd_cm >= min_cm && ssd_cm <= max_cm; }
};

}  // namespace countersign::beamdata
