// The check module's words for the engine's facts: every reason code distinct, every problem mapped
// to its documented reason code (README, "Reason codes") with a sentence that names the DICOM
// attribute and tag, and the sentences about method, depth and approximations.

#include <countersign/check/calculation_words.hpp>
#include <countersign/check/check_plan.hpp>

#include "engine/fixtures.hpp"

#include <gtest/gtest.h>

#include <set>
#include <string>

namespace countersign::check {
namespace {

using engine::CalculationProblem;
using engine::ProblemKind;

TEST(Reason, CodesAreDistinctSnakeCase) {
  std::set<std::string_view> seen;
  for (int i = 0; i <= static_cast<int>(Reason::nothing_to_check); ++i) {
    const std::string_view code = reason_code(static_cast<Reason>(i));
    EXPECT_TRUE(seen.insert(code).second) << code;
    EXPECT_NE(code, "unknown_reason");
    for (const char c : code) EXPECT_TRUE((c >= 'a' && c <= 'z') || c == '_') << code;
  }
  EXPECT_TRUE(is_skip(Reason::setup_beam));
  EXPECT_TRUE(is_skip(Reason::no_meterset));
  EXPECT_FALSE(is_skip(Reason::unknown_machine));
}

CalculationProblem of(ProblemKind kind) {
  CalculationProblem p;
  p.kind = kind;
  return p;
}

// The documented code of each kind of problem (README, "Reason codes").
TEST(CalculationWords, EveryProblemHasItsDocumentedReason) {
  const std::pair<ProblemKind, Reason> expected[] = {
      {ProblemKind::radiation_not_photon, Reason::unsupported_radiation},
      {ProblemKind::dosimeter_unit_not_mu, Reason::unsupported_technique},
      {ProblemKind::missing_plan_value, Reason::missing_plan_data},
      {ProblemKind::patient_setup_not_found, Reason::missing_plan_data},
      {ProblemKind::machine_not_in_library, Reason::unknown_machine},
      {ProblemKind::energy_not_in_library, Reason::unknown_energy},
      {ProblemKind::radiation_not_in_library, Reason::unsupported_radiation},
      {ProblemKind::compensator_present, Reason::unsupported_accessory},
      {ProblemKind::applicator_present, Reason::unsupported_accessory},
      {ProblemKind::several_wedges, Reason::unsupported_accessory},
      {ProblemKind::wedge_not_in_library, Reason::unknown_accessory},
      {ProblemKind::wedge_kind_mismatch, Reason::unknown_accessory},
      {ProblemKind::several_block_trays, Reason::unsupported_accessory},
      {ProblemKind::tray_not_in_library, Reason::unknown_accessory},
      {ProblemKind::patient_position_unsupported, Reason::unsupported_patient_position},
      {ProblemKind::sad_mismatch, Reason::sad_mismatch},
      {ProblemKind::point_not_in_front_of_source, Reason::unsupported_geometry},
      {ProblemKind::aperture_unusable, Reason::unsupported_geometry},
      {ProblemKind::equivalent_depth_missing, Reason::missing_plan_data},
      {ProblemKind::depth_and_ssd_missing, Reason::missing_plan_data},
      {ProblemKind::point_not_below_surface, Reason::unsupported_geometry},
      {ProblemKind::bolus_without_plan_depth, Reason::unsupported_accessory},
      {ProblemKind::final_weight_unusable, Reason::missing_plan_data},
      {ProblemKind::no_delivered_meterset, Reason::missing_plan_data},
      {ProblemKind::mlc_transmission_missing, Reason::missing_beam_data},
      {ProblemKind::oar_table_missing, Reason::missing_beam_data},
  };
  for (const auto& [kind, reason] : expected) {
    const Finding f = finding_for(of(kind));
    EXPECT_EQ(f.reason, reason) << static_cast<int>(kind);
    EXPECT_FALSE(f.sentence.empty()) << static_cast<int>(kind);
  }
}

TEST(CalculationWords, MissingValueNamesAttributeTagAndPlace) {
  EXPECT_EQ(
      finding_for(engine::missing_value(plan::attribute::gantry_angle, engine::PlanScope::control_point, 0))
          .sentence,
      "Gantry Angle (300A,011E) is absent at control point 0");
  EXPECT_EQ(
      finding_for(engine::missing_value(plan::attribute::beam_meterset, engine::PlanScope::fraction_group))
          .sentence,
      "Beam Meterset (300A,0086) is absent from the fraction group");
  EXPECT_EQ(finding_for(engine::missing_value(plan::attribute::cumulative_meterset_weight,
                                              engine::PlanScope::control_point, 7))
                .sentence,
            "Cumulative Meterset Weight (300A,0134) is absent at control point 7");
}

TEST(CalculationWords, SentencesQuoteThePlansOwnText) {
  CalculationProblem position = of(ProblemKind::patient_position_unsupported);
  position.plan_text = "HFDL";
  EXPECT_EQ(finding_for(position).sentence,
            "Patient Position (0018,5100) \"HFDL\" is not supported (HFS, HFP, FFS, FFP are)");
  CalculationProblem radiation = of(ProblemKind::radiation_not_photon);
  radiation.plan_text = "PROTON";
  EXPECT_EQ(finding_for(radiation).sentence,
            "Radiation Type (300A,00C6) is \"PROTON\"; only PHOTON and ELECTRON beams are checked");
}

// A device's positions missing is missing plan data; a device not supported is unsupported geometry.
TEST(CalculationWords, ApertureErrorsFollowTheGeometryModulesKind) {
  CalculationProblem missing = of(ProblemKind::aperture_unusable);
  missing.control_point = 3;
  missing.cause =
      Error{ErrorKind::missing_attribute, "", "LeafPositionBoundaries", "(300A,00BE)", "no boundaries"};
  const Finding f = finding_for(missing);
  EXPECT_EQ(f.reason, Reason::missing_plan_data);
  EXPECT_EQ(f.sentence, "LeafPositionBoundaries (300A,00BE): no boundaries at control point 3");
}

TEST(CalculationWords, PartsSayWhichControlPoint) {
  CalculationProblem behind = of(ProblemKind::point_not_in_front_of_source);
  EXPECT_EQ(finding_for(behind).sentence, "the dose point is not in front of the source");
  behind.control_point = 12;
  EXPECT_EQ(finding_for(behind).sentence, "the dose point is not in front of the source at control point 12");
  CalculationProblem air = of(ProblemKind::point_not_below_surface);
  air.plan_value = -50.0;
  EXPECT_EQ(finding_for(air).sentence,
            "the depth of the dose point is -50.0 mm: the point is not inside the patient");
}

TEST(CalculationWords, MethodDepthAndApproximations) {
  engine::BeamDose dose;
  EXPECT_EQ(method_reason(dose), "");  // no formalism chosen yet
  dose.method_basis = engine::MethodBasis::setup_technique;
  dose.method = engine::Method::pdd;
  dose.setup_technique = plan::term(plan::SetupTechnique::fixed_ssd);
  EXPECT_EQ(method_reason(dose), "fixed-SSD (PDD) form: Setup Technique (300A,01B0) is FIXED_SSD");
  dose.method = engine::Method::tmr;
  dose.setup_technique = plan::parse_term<plan::SetupTechnique>("");
  EXPECT_EQ(method_reason(dose), "isocentric (TMR) form: Setup Technique (300A,01B0) is absent");
  dose.method_basis = engine::MethodBasis::user_choice;
  EXPECT_EQ(method_reason(dose), "isocentric (TMR) form, chosen by the user");

  EXPECT_EQ(depth_description(dose.depth), "");  // no depth found yet
  dose.depth.chosen = true;
  dose.depth.source = engine::DepthSource::beam_dose_reference_item;
  EXPECT_EQ(depth_description(dose.depth),
            "the plan's Beam Dose Point Depth (300A,0088), plan_beam_dose_reference");
  dose.depth.source = engine::DepthSource::derived_spd_minus_ssd;
  engine::Approximation derived{engine::ApproximationKind::derived_depth};
  EXPECT_EQ(
      approximation_sentence(derived, dose),
      "Depth derived: SPD - SSD at control point 0, assuming a flat surface perpendicular to the central "
      "axis.");
  engine::Approximation mayneord{engine::ApproximationKind::mayneord_f_factor};
  mayneord.ssd_cm = 120.0;
  mayneord.table_ssd_cm = 100.0;
  EXPECT_NE(approximation_sentence(mayneord, dose).find("PDD at SSD 120.0 cm from the table at 100.0 cm"),
            std::string::npos);
}

// Through the whole check: the engine's facts become the verdict's reason and sentence.
TEST(CalculationWords, CheckPlanWordsTheEnginesProblem) {
  const beamdata::Library library = test_fixtures::test_library();
  plan::Beam beam = test_fixtures::static_beam(1, 0);
  beam.control_points[0].gantry_deg.reset();
  const PlanCheck c =
      check_plan(test_fixtures::make_plan({{beam, 100.0, 1.0, 100.0}}), library, CheckOptions{});
  ASSERT_EQ(c.beams.size(), 1u);
  EXPECT_EQ(c.beams[0].status, Status::not_checked);
  EXPECT_EQ(c.beams[0].reason.reason, Reason::missing_plan_data);
  EXPECT_EQ(c.beams[0].reason.sentence, "Gantry Angle (300A,011E) is absent at control point 0");
  ASSERT_TRUE(c.beams[0].words.problem);
  EXPECT_EQ(c.beams[0].words.problem->sentence, c.beams[0].reason.sentence);
}

}  // namespace
}  // namespace countersign::check
