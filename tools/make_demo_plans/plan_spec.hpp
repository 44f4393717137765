#pragma once

// What one INVENTED demo plan contains, as plain values, before it is written as DICOM.
// Geometry in mm (DICOM), doses in Gy, angles in degrees (IEC 61217).

#include <array>
#include <optional>
#include <string>
#include <vector>

namespace make_demo_plans {

// Where the plan keeps the depth of each beam's dose point (DICOM has used three places).
enum class DosePointLayout {
  beam_level,             // current edition: Beam Sequence > Referenced Dose Reference Sequence >
                          // Beam Dose Verification Control Point Sequence
  referenced_beam_2012,   // 2012 edition: Beam Dose Point Depth etc. directly in the fraction group's
                          // Referenced Beam Sequence item, with the retired Beam Dose Specification Point
  fraction_verification,  // Referenced Beam Sequence item > Beam Dose Verification Control Point Sequence
};

enum class JawKind { symmetric_xy, asymmetric };  // X/Y or ASYMX/ASYMY device types

// One control point of a beam as the generator builds it.
struct ControlPointSpec {
  double gantry_deg = 0.0;
  std::vector<double> mlc_mm;  // 2 x 60 leaf positions (bank A then bank B), empty without MLC
};

struct BeamSpec {
  int number = 0;
  std::string name;
  std::string description;
  std::string delivery_type = "TREATMENT";  // or "SETUP"
  double energy_mv = 6.0;
  double collimator_deg = 0.0;
  double couch_deg = 0.0;
  JawKind jaw_kind = JawKind::asymmetric;
  std::array<double, 4> jaws_mm{-50.0, 50.0, -50.0, 50.0};  // X1, X2, Y1, Y2 at the isocentre plane
  bool has_mlc = false;
  std::string gantry_rotation = "NONE";  // CW / CC for arcs
  // Control points: static beams have two identical ones; step-and-shoot has two per segment.
  std::vector<ControlPointSpec> control_points;
  std::vector<double> segment_weights;  // step-and-shoot: relative MU per segment (pairs of CPs)
  std::string wedge_id;                 // "W15".."W60" or empty
  double wedge_orientation_deg = 0.0;
  std::string tray_id;  // "TRAY-A" (with one shielding block) or empty

  // Dose point, by construction: depth below a flat surface, SSD along the central axis, off-axis
  // distance in the isocentre plane along IEC X of the collimator.
  double ssd_mm = 900.0;
  double depth_mm = 100.0;
  double off_axis_mm = 0.0;
  bool fixed_ssd = false;        // FIXED_SSD technique: PDD form instead of TMR form
  double planned_dose_gy = 0.0;  // the beam's dose at its dose point per fraction (0 for setup beams)
  double mu_error_factor = 1.0;  // an invented copying error, written into the MU only

  // Filled by the planner.
  std::optional<double> meterset_mu;
  std::optional<double> beam_dose_gy;
  std::vector<double> cumulative_weights;        // per control point, 0..1
  std::vector<double> cumulative_dose_fraction;  // per control point, 0..1
  std::array<double, 3> dose_point_mm{};         // patient coordinates
};

struct PlanSpec {
  std::string file_name;   // e.g. "fern_box_4field.dcm"
  std::string uid_suffix;  // distinct digits for this plan's UIDs
  std::string label;
  std::string name;
  std::string description;
  std::string patient_id;
  std::string patient_name;
  std::string patient_position = "HFS";
  std::string setup_technique = "ISOCENTRIC";
  std::array<double, 3> isocenter_mm{0.0, 0.0, 0.0};
  DosePointLayout layout = DosePointLayout::beam_level;
  int fractions = 25;
  std::vector<BeamSpec> beams;
};

// The demo plans, with MU and doses filled in by the stand-in planning system.
[[nodiscard]] std::vector<PlanSpec> demo_plans();

}  // namespace make_demo_plans
