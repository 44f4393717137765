#pragma once

// The tolerance policy: how large a deviation between the planned and the independently computed
// dose is accepted, by category of field, and the safety limits that make a beam "not checked".
// Defaults are based on AAPM TG-114 (2011) action levels (values from memory; each clinic sets its
// own in a TOML file, see config/tolerance-policy.toml).

#include <countersign/util/error.hpp>

#include <filesystem>
#include <string>
#include <string_view>

namespace countersign::check {

enum class FieldCategory {
  simple,     // static open or wedged field, point near the axis and well inside the field
  complex,    // off-axis point, asymmetric jaws, MLC-shaped or blocked field
  modulated,  // step-and-shoot, sliding window, arcs
};
[[nodiscard]] std::string_view to_code(FieldCategory category);

enum class Medium {
  homogeneous,    // the plan's equivalent depth matches its geometric depth (or is absent)
  heterogeneous,  // they differ by more than the policy's threshold
};
[[nodiscard]] std::string_view to_code(Medium medium);

struct TolerancePolicy {
  std::string source = "built-in defaults";  // where it came from, for reports

  // Accepted |deviation| in percent.
  double simple_percent = 2.0;
  double complex_percent = 3.0;
  double modulated_percent = 5.0;
  double simple_heterogeneous_percent = 3.0;
  double complex_heterogeneous_percent = 4.0;
  double modulated_heterogeneous_percent = 5.0;

  // What makes a field "complex" rather than "simple".
  double simple_max_off_axis_cm = 2.0;                  // point farther from the axis (isocentre plane)
  double simple_max_jaw_offset_cm = 1.0;                // jaw rectangle centre farther from the axis
  double simple_min_open_fraction = 0.95;               // MLC opening / jaw rectangle area below this
  double heterogeneous_depth_difference_percent = 5.0;  // |equivalent - geometric| / geometric above this

  // Safety limits: beyond them the beam is not checked.
  double min_edge_distance_cm = 1.0;         // static beams: point closer to a field edge (penumbra)
  double max_depth_discrepancy_cm = 1.0;     // plan depth vs SPD - SSD, for points near the axis ...
  double depth_check_max_off_axis_cm = 2.0;  // ... closer than this to it
  double wedge_max_off_axis_cm = 2.0;        // wedged field: open-field OAR not valid farther out

  // A beam giving less than this share of its point's planned dose is also judged against the
  // point's total (common practice, no source).
  double small_share_fraction = 0.1;

  // Shaped and modulated fields (block [sectors]).
  double max_sector_deg = 10.0;          // sector integration: widest sector
  double max_edge_meterset_share = 0.2;  // modulated beams: above this share of the meterset delivered
                                         // with the point within min_edge_distance_cm of a part's edge,
                                         // the beam is not checked (common practice, no source)

  // Verdict honesty ([model_limits] in the policy file; defaults: common practice, no source).
  // Geometry consistency: plan depth + Beam Dose Point SSD against the ray length, and the SSD
  // against SPD - depth (flat surface), at any off-axis distance; beyond this: outside tolerance.
  double geometry_consistency_max_mm = 3.0;
  // A small contributor judged against its point's total must also keep its own deviation within this.
  double small_beam_max_deviation_percent = 10.0;
  // A point shallower than dmax + this margin is in the build-up region: not checked.
  double buildup_margin_mm = 0.0;
  // Static fields whose equivalent square is below this (or below the table's smallest field): not checked.
  double min_equivalent_square_cm = 4.0;
  // When the library gives no ssd_range_cm: an SSD farther than this from the PDD table's SSD is
  // an extended distance the tables do not support: not checked.
  double max_ssd_offset_without_range_cm = 20.0;
  // TMR and PDD forms differing by more than this: the beam data are inconsistent at the point.
  double formalism_max_difference_percent = 1.5;
  // ---- [patient]: the CT and the plan's own patient geometry (issue 14, issue 12 item 5) ----------
  // Plan versus CT beyond these is outside tolerance (reason plan_geometry_differs_from_ct).
  double patient_max_ssd_difference_mm = 5.0;    // SSD (300A,0130), Beam Dose Point SSD (300A,008A)
  double patient_max_depth_difference_mm = 5.0;  // Beam Dose Point Depth (300A,0088)
  double patient_max_radiological_depth_difference_percent =
      3.0;  // Beam Dose Point Equivalent Depth (300A,0089)
  // The ray is heterogeneous when it crosses at least min_path_mm of tissue whose relative electron
  // density differs from water by more than density_difference (common practice, no source).
  double patient_heterogeneous_density_difference = 0.2;
  double patient_heterogeneous_min_path_mm = 5.0;
  // Above this fraction of the field at the point's depth outside the body: not checked (missing_tissue).
  double patient_max_missing_tissue_fraction = 0.05;
  // The same for a part computed by sector integration whose rays end at the body outline (the
  // missing scatter is computed, not assumed): a larger limit on the fraction outside the body. The
  // fraction outside the CT keeps the limit above (tissue is assumed there). Our choice, common
  // practice, no source.
  double patient_max_missing_tissue_fraction_sectors = 0.5;
  // Without a CT: above this |equivalent - geometric| / geometric (percent) the plan's equivalent
  // depth is used (stated "from the plan, not independent").
  double patient_plan_equivalent_depth_switch_percent = 5.0;

  // ---- [electron]: electron beams (issue 19) ---------------------------------------------------------
  // With a CT: the beam meeting the body surface at more than this angle from its normal is not
  // checked (oblique_incidence): the depth dose and output change with obliquity and the tables are
  // for normal incidence (common practice, no source for the value).
  double electron_max_obliquity_deg = 20.0;

  [[nodiscard]] double tolerance_percent(FieldCategory category, Medium medium) const;
};

// The built-in defaults (the values above).
[[nodiscard]] TolerancePolicy default_policy();

// Reads a policy file. Absent keys keep their defaults; unknown keys, non-numbers and values out
// of range are errors (kind bad_configuration) naming the file and the key.
[[nodiscard]] Expected<TolerancePolicy> load_policy(const std::filesystem::path& file);

}  // namespace countersign::check
