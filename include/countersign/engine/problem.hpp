#pragma once

// What kept the engine from a dose, as facts: what is missing or not supported, the DICOM attribute
// (name and tag) or beam-data item involved, and the values. The engine writes no sentences and
// gives no verdict: the check module turns a problem into a reason code and a sentence
// (check/calculation_words.hpp).

#include <countersign/plan/attributes.hpp>
#include <countersign/util/error.hpp>

#include <optional>
#include <string>

namespace countersign::engine {

enum class ProblemKind {
  // The beam and its data (stage: resolve).
  radiation_not_photon,          // attribute, plan_text: Radiation Type neither PHOTON nor ELECTRON
  dosimeter_unit_not_mu,         // attribute, plan_text: Primary Dosimeter Unit other than MU
  missing_plan_value,            // attribute, scope (+ control_point): an input the dose depends on is absent
  patient_setup_not_found,       // the beam's Patient Setup cannot be found
  machine_not_in_library,        // machine, radiation, energy_mv, library_detail
  energy_not_in_library,         // machine, radiation, energy_mv, library_detail
  radiation_not_in_library,      // machine, radiation, energy_mv, library_detail
  compensator_present,           // compensators are not modelled
  applicator_present,            // photon applicators are not modelled
  several_wedges,                // more than one wedge
  wedge_not_in_library,          // plan_text = Wedge ID; library_beam, library_radiation
  wedge_kind_mismatch,           // plan_text = Wedge Type; item_id = Wedge ID
  several_block_trays,           // the blocks name more than one tray
  tray_not_in_library,           // plan_text = Block Tray ID; library_beam
  patient_position_unsupported,  // plan_text = Patient Position
  // Electron beams (stage: resolve, electron formula).
  several_applicators,               // more than one item in the Applicator Sequence
  applicator_not_in_library,         // plan_text = Applicator ID; library_beam
  electron_accessory_unsupported,    // plan_text: "wedge", "shielding block", "several apertures"
  cutout_unusable,                   // item_id = Block Number: Block Data encloses no area
  cutout_table_missing,              // library_beam, item_id = applicator id: a cutout and no cutout table
  several_boli,                      // more than one item in the Referenced Bolus Sequence
  bolus_thickness_unknown,           // plan_text = Bolus ID, machine: no [[bolus]] of that id
  electron_point_off_axis,           // plan_value = off-axis distance mm (no electron off-axis data)
  electron_calibration_ssd_differs,  // library_beam, plan_value = calibration SSD cm, library_value =
                                     // pdd_ssd_cm
  // Geometry and depth (stages: geometry, depth, apertures, segments).
  sad_mismatch,                  // plan_value = plan SAD mm, library_value = machine SAD mm, machine
  point_not_in_front_of_source,  // control_point when seen from a later part
  aperture_unusable,             // cause: the geometry module's error (device, attribute, tag)
  equivalent_depth_missing,      // the equivalent depth was asked for and the plan has none
  depth_and_ssd_missing,         // no depth for the point and no SSD to derive one
  point_not_below_surface,       // plan_value = depth mm; control_point when seen from a later part
  bolus_without_plan_depth,      // bolus present and the depth would be derived
  patient_geometry_unusable,     // with a CT: plan_text = the study problem's code, library_detail = its
                              // message; control_point when seen from a later part
  batho_not_computable,  // library_beam: the TMR table gives no positive ratio at some layer depth
  // The meterset (stage: segments).
  final_weight_unusable,  // Final Cumulative Meterset Weight absent or not positive
  no_delivered_meterset,  // all cumulative weights equal
  // Beam data the calculation needs (stages: segments, primary).
  mlc_transmission_missing,  // library_beam, machine: beams with leaves need mlc_transmission
  leaf_end_offset_missing,   // library_beam, machine: beams with leaves need mlc_leaf_end_offset_mm
  oar_table_missing,         // library_beam, plan_value = off-axis distance mm
  block_transmission_missing,  // library_beam, item_id = Block Number: no (300A,0102) and no
                               // block_transmission
};

// Where in the plan a missing value was looked for.
enum class PlanScope { beam, control_point, fraction_group, plan };

struct CalculationProblem {
  ProblemKind kind = ProblemKind::missing_plan_value;
  plan::DicomAttribute attribute{};     // the plan's attribute concerned, when one is
  PlanScope scope = PlanScope::beam;    // missing_plan_value: where it was looked for
  std::optional<int> control_point;     // the control point concerned, when one is
  std::string plan_text;                // the plan's value as the plan spells it (codes, IDs)
  std::optional<double> plan_value;     // a number from the plan or its geometry (units in the kind)
  std::optional<double> library_value;  // the library's number it was compared with
  std::string machine;                  // Treatment Machine Name, or the library machine's name
  std::string radiation;                // the plan's Radiation Type text (library look-ups)
  std::optional<double> energy_mv;      // Nominal Beam Energy (library look-ups)
  std::string library_beam;             // the library beam's id
  std::string library_radiation;        // the library beam's radiation
  std::string item_id;                  // the accessory's ID when plan_text holds another value
  std::string library_detail;           // the beam-data module's own explanation of a failed look-up
  std::optional<Error> cause;           // the geometry module's error (aperture_unusable)
};

// A missing plan value, with the place it was looked for.
[[nodiscard]] CalculationProblem missing_value(const plan::DicomAttribute& attribute, PlanScope scope,
                                               std::optional<int> control_point = std::nullopt);

}  // namespace countersign::engine
