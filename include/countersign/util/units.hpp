#pragma once

// Unit conversions (DEVELOPERS.md, "Units"): plan geometry in millimetres as DICOM stores it, beam-data tables
// in centimetres as physicists keep them, doses in Gy in the plan and cGy in the tables' outputs.
// Every change of unit goes through one of these, so a reader sees which way it goes; each is the
// plain division or multiplication, so results are bit-for-bit those of the bare arithmetic.

namespace countersign::util {

inline constexpr double mm_per_cm = 10.0;
inline constexpr double mm2_per_cm2 = 100.0;
inline constexpr double cgy_per_gy = 100.0;

[[nodiscard]] constexpr double mm_to_cm(double mm) { return mm / mm_per_cm; }
[[nodiscard]] constexpr double cm_to_mm(double cm) { return cm * mm_per_cm; }
[[nodiscard]] constexpr double mm2_to_cm2(double mm2) { return mm2 / mm2_per_cm2; }
[[nodiscard]] constexpr double cgy_to_gy(double cgy) { return cgy / cgy_per_gy; }
[[nodiscard]] constexpr double gy_to_cgy(double gy) { return gy * cgy_per_gy; }

}  // namespace countersign::util
