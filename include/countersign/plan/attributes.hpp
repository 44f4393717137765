#pragma once

// The DICOM attributes that later steps name in their facts and messages: the attribute's name as
// PS3.6 prints it and its tag. The reader names attributes by DCMTK's dictionary; the engine and the
// check module, which see no DCMTK, name them from here.

#include <string_view>

namespace countersign::plan {

struct DicomAttribute {
  std::string_view name;  // e.g. "Gantry Angle"
  std::string_view tag;   // e.g. "(300A,011E)"
};

namespace attribute {

inline constexpr DicomAttribute radiation_type{"Radiation Type", "(300A,00C6)"};
inline constexpr DicomAttribute primary_dosimeter_unit{"Primary Dosimeter Unit", "(300A,00B3)"};
inline constexpr DicomAttribute treatment_machine_name{"Treatment Machine Name", "(300A,00B2)"};
inline constexpr DicomAttribute treatment_delivery_type{"Treatment Delivery Type", "(300A,00CE)"};
inline constexpr DicomAttribute nominal_beam_energy{"Nominal Beam Energy", "(300A,0114)"};
inline constexpr DicomAttribute control_point_sequence{"Control Point Sequence", "(300A,0111)"};
inline constexpr DicomAttribute beam_meterset{"Beam Meterset", "(300A,0086)"};
inline constexpr DicomAttribute beam_dose{"Beam Dose", "(300A,0084)"};
inline constexpr DicomAttribute beam_dose_meaning{"Beam Dose Meaning", "(300A,008B)"};
inline constexpr DicomAttribute beam_dose_specification_point{"Beam Dose Specification Point", "(300A,0082)"};
inline constexpr DicomAttribute patient_setup_sequence{"Patient Setup", "(300A,0180)"};
inline constexpr DicomAttribute referenced_patient_setup_number{"Referenced Patient Setup Number",
                                                                "(300C,006A)"};
inline constexpr DicomAttribute patient_position{"Patient Position", "(0018,5100)"};
inline constexpr DicomAttribute setup_technique{"Setup Technique", "(300A,01B0)"};
inline constexpr DicomAttribute gantry_angle{"Gantry Angle", "(300A,011E)"};
inline constexpr DicomAttribute beam_limiting_device_angle{"Beam Limiting Device Angle", "(300A,0120)"};
inline constexpr DicomAttribute patient_support_angle{"Patient Support Angle", "(300A,0122)"};
inline constexpr DicomAttribute isocenter_position{"Isocenter Position", "(300A,012C)"};
inline constexpr DicomAttribute source_axis_distance{"Source-Axis Distance", "(300A,00B4)"};
inline constexpr DicomAttribute source_to_surface_distance{"Source to Surface Distance", "(300A,0130)"};
inline constexpr DicomAttribute beam_dose_point_depth{"Beam Dose Point Depth", "(300A,0088)"};
inline constexpr DicomAttribute beam_dose_point_equivalent_depth{"Beam Dose Point Equivalent Depth",
                                                                 "(300A,0089)"};
inline constexpr DicomAttribute beam_dose_point_ssd{"Beam Dose Point SSD", "(300A,008A)"};
inline constexpr DicomAttribute final_cumulative_meterset_weight{"Final Cumulative Meterset Weight",
                                                                 "(300A,010E)"};
inline constexpr DicomAttribute cumulative_meterset_weight{"Cumulative Meterset Weight", "(300A,0134)"};
inline constexpr DicomAttribute compensator_sequence{"Compensator Sequence", "(300A,00E3)"};
inline constexpr DicomAttribute applicator_sequence{"Applicator Sequence", "(300A,0107)"};
inline constexpr DicomAttribute wedge_sequence{"Wedge Sequence", "(300A,00D1)"};
inline constexpr DicomAttribute wedge_type{"Wedge Type", "(300A,00D3)"};
inline constexpr DicomAttribute wedge_id{"Wedge ID", "(300A,00D4)"};
inline constexpr DicomAttribute block_tray_id{"Block Tray ID", "(300A,00F5)"};
inline constexpr DicomAttribute block_transmission{"Block Transmission", "(300A,0102)"};
inline constexpr DicomAttribute block_data{"Block Data", "(300A,0106)"};
inline constexpr DicomAttribute referenced_bolus_sequence{"Referenced Bolus Sequence", "(300C,00B0)"};
inline constexpr DicomAttribute applicator_id{"Applicator ID", "(300A,0108)"};
inline constexpr DicomAttribute bolus_id{"Bolus ID", "(300A,00DC)"};
inline constexpr DicomAttribute block_type{"Block Type", "(300A,00F8)"};

}  // namespace attribute

}  // namespace countersign::plan
