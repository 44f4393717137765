#pragma once

// The plan model: plain values read from an RT Plan, nothing computed, nothing defaulted.
// Units are in every name: geometry in mm (as DICOM stores it), angles in degrees (IEC 61217),
// doses in Gy, metersets in MU. An absent optional attribute is std::nullopt, never 0.

#include <countersign/plan/defined_terms.hpp>

#include <array>
#include <optional>
#include <string>
#include <vector>

namespace countersign::plan {

using PointMm = std::array<double, 3>;  // x, y, z in the patient coordinate system, mm

struct PatientSetup {
  int number = 0;                               // Patient Setup Number (300A,0182)
  Coded<PatientPosition> patient_position;      // Patient Position (0018,5100), e.g. "HFS"
  Coded<SetupTechnique> setup_technique;        // Setup Technique (300A,01B0), e.g. "ISOCENTRIC", "FIXED_SSD"
  std::string setup_technique_description;      // Setup Technique Description (300A,01B2)
};

struct DoseReference {
  int number = 0;                                // Dose Reference Number (300A,0012)
  std::string uid;                               // Dose Reference UID (300A,0013)
  Coded<DoseReferenceStructure>
      structure_type;  // Dose Reference Structure Type (300A,0014): POINT, COORDINATES, VOLUME, SITE
  std::string description;                       // Dose Reference Description (300A,0016)
  std::string type;                              // Dose Reference Type (300A,0020): TARGET, ORGAN_AT_RISK
  std::optional<PointMm> point_mm;               // Dose Reference Point Coordinates (300A,0018)
  std::optional<double> delivery_warning_dose_gy;        // (300A,0022)
  std::optional<double> delivery_maximum_dose_gy;        // (300A,0023)
  std::optional<double> target_minimum_dose_gy;          // (300A,0025)
  std::optional<double> target_prescription_dose_gy;     // (300A,0026)
  std::optional<double> target_maximum_dose_gy;          // (300A,0027)
  std::optional<double> organ_at_risk_full_volume_dose_gy;  // (300A,002A)
  std::optional<double> organ_at_risk_limit_dose_gy;     // (300A,002B)
  std::optional<double> organ_at_risk_maximum_dose_gy;   // (300A,002C)
};

// Depth and distance data for a beam's dose point. DICOM has carried these in three places over
// its editions; each place is kept separately so the engine can say which one it used.
struct DosePointDistances {
  std::optional<double> depth_mm;                        // Beam Dose Point Depth (300A,0088)
  std::optional<double> equivalent_depth_mm;             // Beam Dose Point Equivalent Depth (300A,0089)
  std::optional<double> ssd_mm;                          // Beam Dose Point SSD (300A,008A)
  std::optional<double> source_to_external_contour_mm;   // Beam Dose Point Source to External Contour Distance (300A,0094)

  [[nodiscard]] bool empty() const {
    return !depth_mm && !equivalent_depth_mm && !ssd_mm && !source_to_external_contour_mm;
  }
};

// One item of a fraction group's Referenced Beam Sequence (300C,0004).
struct ReferencedBeam {
  int beam_number = 0;                                   // Referenced Beam Number (300C,0006)
  std::optional<double> meterset_mu;                     // Beam Meterset (300A,0086)
  std::optional<double> dose_gy;                         // Beam Dose (300A,0084)
  std::string dose_type;                                 // Beam Dose Type (300A,0090): PHYSICAL, EFFECTIVE
  std::optional<PointMm> dose_specification_point_mm;   // Beam Dose Specification Point (300A,0082), retired
  DosePointDistances distances_in_referenced_beam;       // 2012-edition layout: directly in this item
  std::optional<int> verification_dose_reference_number; // Referenced Dose Reference Number in the
                                                         // fraction-level verification item, if any
  DosePointDistances distances_in_verification_sequence; // Beam Dose Verification Control Point Sequence (300A,008C)
};

struct FractionGroup {
  int number = 0;                           // Fraction Group Number (300A,0071)
  std::optional<int> fractions_planned;     // Number of Fractions Planned (300A,0078)
  Coded<BeamDoseMeaning> beam_dose_meaning;  // Beam Dose Meaning (300A,008B): BEAM_LEVEL, FRACTION_LEVEL
  std::vector<ReferencedBeam> beams;
};

struct BeamLimitingDevice {
  Coded<DeviceType> type;  // RT Beam Limiting Device Type (300A,00B8): X, Y, ASYMX, ASYMY, MLCX, MLCY
  std::optional<double> source_to_device_distance_mm; // (300A,00BA)
  int pair_count = 0;                                 // Number of Leaf/Jaw Pairs (300A,00BC)
  std::vector<double> leaf_boundaries_mm;             // Leaf Position Boundaries (300A,00BE), MLC only: pairs + 1 values
};

struct Wedge {
  std::optional<int> number;                  // Wedge Number (300A,00D2)
  Coded<WedgeType> type;                      // Wedge Type (300A,00D3): STANDARD, DYNAMIC, MOTORIZED
  std::string id;                             // Wedge ID (300A,00D4)
  std::optional<double> angle_deg;            // Wedge Angle (300A,00D5)
  std::optional<double> factor;               // Wedge Factor (300A,00D6), the planning system's value
  std::optional<double> orientation_deg;      // Wedge Orientation (300A,00D8)
};

struct Accessory {
  std::optional<int> number;  // the item's number attribute where DICOM has one
  std::string id;             // the item's ID attribute (Block Tray ID, Applicator ID, ...)
  std::string type;           // its type attribute where DICOM has one
};

// One item of the Applicator Sequence (300A,0107): an electron applicator (cone) or another device
// mounted on the head.
struct Applicator {
  std::string id;              // Applicator ID (300A,0108), compared with the library's applicator ids
  Coded<ApplicatorType> type;  // Applicator Type (300A,0109): ELECTRON_SQUARE, ELECTRON_RECT, ...
  std::string description;     // Applicator Description (300A,010A)
};

// One item of the Block Sequence (300A,00F4): a shielding block or an aperture (photon block or
// electron cutout). The outline is as DICOM defines Block Data: (x, y) vertices in the IEC BEAM
// LIMITING DEVICE coordinate system, projected to the isocentre plane (mm), a closed polygon.
struct Block {
  std::optional<int> number;                  // Block Number (300A,00FC)
  std::string tray_id;                        // Block Tray ID (300A,00F5)
  std::string name;                           // Block Name (300A,00FE)
  Coded<BlockType> type;                      // Block Type (300A,00F8): SHIELDING, APERTURE
  Coded<BlockDivergence> divergence;          // Block Divergence (300A,00FA): PRESENT, ABSENT
  std::string mounting_position;              // Block Mounting Position (300A,00FB): PATIENT_SIDE, SOURCE_SIDE
  std::optional<double> source_to_tray_mm;    // Source to Block Tray Distance (300A,00F6)
  std::string material_id;                    // Material ID (300A,00E1)
  std::optional<double> thickness_mm;         // Block Thickness (300A,0100)
  std::optional<double> transmission;         // Block Transmission (300A,0102), a fraction
  std::vector<std::array<double, 2>> outline_mm;  // Block Data (300A,0106), Block Number of Points (300A,0104) vertices
};

// Positions of one beam limiting device at a control point (Beam Limiting Device Position Sequence).
struct DevicePositions {
  Coded<DeviceType> type;              // RT Beam Limiting Device Type (300A,00B8)
  std::vector<double> positions_mm;    // Leaf/Jaw Positions (300A,011C): all bank-A (-) then all bank-B (+)
};

struct DoseReferenceCoefficient {
  int dose_reference_number = 0;                       // Referenced Dose Reference Number (300C,0051)
  std::optional<double> cumulative_coefficient;        // Cumulative Dose Reference Coefficient (300A,010C)
};

struct WedgePosition {
  int wedge_number = 0;          // Referenced Wedge Number (300C,00C0)
  Coded<WedgePositionState> position;  // Wedge Position (300A,0118): IN, OUT
};

// A control point after carrying forward what DICOM lets a later control point omit:
// every value is the one in force at this control point.
struct ControlPoint {
  int index = 0;                                          // Control Point Index (300A,0112)
  // Nominal Beam Energy (300A,0114). DICOM labels it MeV; for photons it is by convention the
  // nominal accelerating potential in MV, which is how beam data names the beam.
  std::optional<double> nominal_energy_mv;
  std::optional<double> dose_rate_mu_per_min;             // Dose Rate Set (300A,0115)
  std::optional<double> gantry_deg;                       // Gantry Angle (300A,011E)
  Coded<RotationDirection> gantry_rotation;  // Gantry Rotation Direction (300A,011F): CW, CC, NONE
  std::optional<double> collimator_deg;                   // Beam Limiting Device Angle (300A,0120)
  Coded<RotationDirection> collimator_rotation;  // Beam Limiting Device Rotation Direction (300A,0121)
  std::optional<double> couch_deg;                        // Patient Support Angle (300A,0122)
  Coded<RotationDirection> couch_rotation;                // Patient Support Rotation Direction (300A,0123)
  std::optional<PointMm> isocenter_mm;                    // Isocenter Position (300A,012C)
  std::optional<double> ssd_mm;                           // Source to Surface Distance (300A,0130)
  std::vector<DevicePositions> devices;                   // jaws and MLC in force at this control point
  std::optional<double> cumulative_meterset_weight;       // Cumulative Meterset Weight (300A,0134)
  std::vector<DoseReferenceCoefficient> dose_reference_coefficients;  // Referenced Dose Reference Sequence (300C,0050)
  std::vector<WedgePosition> wedge_positions;             // Wedge Position Sequence (300A,0116)

  // The positions of the device of this type, or nullptr.
  [[nodiscard]] const DevicePositions* device(DeviceType type) const;
  // The positions of the device spelled exactly as `type` (also for types the program does not list).
  [[nodiscard]] const DevicePositions* device(const Coded<DeviceType>& type) const;
};

// One item of the beam's Referenced Dose Reference Sequence (current-edition layout).
struct BeamDoseReference {
  int dose_reference_number = 0;           // Referenced Dose Reference Number (300C,0051)
  DosePointDistances distances;            // from its Beam Dose Verification Control Point Sequence (300A,008C)
};

struct Beam {
  int number = 0;                                    // Beam Number (300A,00C0)
  std::string name;                                  // Beam Name (300A,00C2)
  std::string description;                           // Beam Description (300A,00C3)
  std::string machine_name;                          // Treatment Machine Name (300A,00B2)
  Coded<RadiationType> radiation_type;               // Radiation Type (300A,00C6): PHOTON, ELECTRON, ...
  Coded<DeliveryType> delivery_type;            // Treatment Delivery Type (300A,00CE): TREATMENT, SETUP, ...
  Coded<BeamType> beam_type;                    // Beam Type (300A,00C4): STATIC, DYNAMIC
  Coded<DosimeterUnit> primary_dosimeter_unit;  // Primary Dosimeter Unit (300A,00B3): MU, MINUTE
  std::optional<double> sad_mm;                      // Source-Axis Distance (300A,00B4)
  std::vector<BeamLimitingDevice> beam_limiting_devices;  // (300A,00B6)
  std::vector<Wedge> wedges;                         // Wedge Sequence (300A,00D1)
  std::vector<Block> blocks;                         // Block Sequence (300A,00F4)
  std::vector<Applicator> applicators;               // Applicator Sequence (300A,0107)
  std::vector<Accessory> compensators;               // Compensator Sequence (300A,00E3)
  // Referenced Bolus Sequence (300C,00B0): number = Referenced ROI Number (3006,0084), id = Bolus ID
  // (300A,00DC), type = Bolus Description (300A,00DD). DICOM gives no bolus thickness in the plan.
  std::vector<Accessory> boli;
  // General Accessory Sequence (300A,0420): number (300A,0424), id (300A,0421), type (300A,0423)
  std::vector<Accessory> general_accessories;
  std::optional<double> final_cumulative_meterset_weight;  // (300A,010E)
  std::optional<int> referenced_patient_setup_number;      // (300C,006A)
  std::vector<BeamDoseReference> dose_references;    // Referenced Dose Reference Sequence (300C,0050)
  std::vector<ControlPoint> control_points;          // Control Point Sequence (300A,0111), carried forward
};

struct Plan {
  std::string source_file;                 // the path it was read from (for messages and reports)
  std::string sop_class_uid;               // (0008,0016)
  std::string sop_instance_uid;            // (0008,0018)
  std::string patient_id;                  // (0010,0020)
  std::string patient_name;                // (0010,0010), DICOM PN form (Family^Given)
  std::string label;                       // RT Plan Label (300A,0002)
  std::string name;                        // RT Plan Name (300A,0003)
  std::string description;                 // RT Plan Description (300A,0004)
  std::string date;                        // RT Plan Date (300A,0006), YYYYMMDD
  std::string geometry;                    // RT Plan Geometry (300A,000C): PATIENT, TREATMENT_DEVICE
  std::string approval_status;             // Approval Status (300E,0002): APPROVED, UNAPPROVED, REJECTED
  std::string manufacturer;                // (0008,0070)
  std::string frame_of_reference_uid;      // Frame of Reference UID (0020,0052); empty if absent
  // Referenced SOP Instance UID (0008,1155) of each item of the Referenced Structure Set Sequence
  // (300C,0060): the structure set (and through it the CT) the plan was made on. DICOM permits one.
  std::vector<std::string> referenced_structure_set_uids;
  // Specific Character Set (0008,0005) as declared; empty: the default repertoire (ASCII). Every
  // text above is UTF-8, converted from it.
  std::string specific_character_set;
  // What the reader could not read faithfully without refusing the plan, one sentence each naming
  // the attribute and tag (e.g. bytes that could not be decoded and are shown as U+FFFD).
  std::vector<std::string> warnings;
  std::vector<PatientSetup> patient_setups;
  std::vector<DoseReference> dose_references;
  std::vector<FractionGroup> fraction_groups;
  std::vector<Beam> beams;

  // Look-ups by number; nullptr when absent.
  [[nodiscard]] const Beam* beam(int number) const;
  [[nodiscard]] const PatientSetup* patient_setup(int number) const;
  [[nodiscard]] const DoseReference* dose_reference(int number) const;
};

}  // namespace countersign::plan
