// The reader on every INVENTED demo plan, against the values the generator wrote into
// testdata/plans/EXPECTED_BEAMS.tsv from its own specification (not by reading the files back).

#include <countersign/dicom/read_plan.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <set>
#include <sstream>

namespace countersign::dicom {
namespace {

using Row = std::map<std::string, std::string>;

std::vector<Row> expected_beams() {
  std::ifstream in(test::source_dir() / "testdata/plans/EXPECTED_BEAMS.tsv");
  std::vector<std::string> header;
  std::vector<Row> rows;
  std::string line;
  while (std::getline(in, line)) {
    if (line.empty() || line[0] == '#') continue;
    std::vector<std::string> cells;
    std::stringstream split(line);
    for (std::string cell; std::getline(split, cell, '\t');) cells.push_back(cell);
    if (header.empty()) {
      header = cells;
      continue;
    }
    Row row;
    for (std::size_t i = 0; i < header.size() && i < cells.size(); ++i) row[header[i]] = cells[i];
    rows.push_back(row);
  }
  return rows;
}

double num(const Row& row, const std::string& key) { return std::stod(row.at(key)); }

std::vector<double> point(const std::string& text) {
  std::vector<double> values;
  std::stringstream split(text);
  for (std::string cell; std::getline(split, cell, '\\');) values.push_back(std::stod(cell));
  return values;
}

const plan::ReferencedBeam* reference(const plan::Plan& plan, int beam_number) {
  for (const auto& group : plan.fraction_groups) {
    for (const auto& ref : group.beams) {
      if (ref.beam_number == beam_number) return &ref;
    }
  }
  return nullptr;
}

TEST(ReadPlanDemo, ManifestListsEveryDemoPlanAndEnoughBeams) {
  const auto rows = expected_beams();
  std::set<std::string> files;
  for (const auto& row : rows) files.insert(row.at("file"));
  EXPECT_EQ(files.size(), 14u);  // 11 photon plans, 3 electron plans (fern_electron_*)
  EXPECT_GE(rows.size(), 20u);
}

TEST(ReadPlanDemo, EveryBeamMatchesTheGeneratorsSpecification) {
  const auto rows = expected_beams();
  ASSERT_FALSE(rows.empty());
  std::map<std::string, plan::Plan> plans;
  for (const auto& row : rows) {
    SCOPED_TRACE(row.at("file") + " beam " + row.at("beam_number"));
    const auto path = test::source_dir() / "testdata/plans" / row.at("file");
    if (!plans.contains(row.at("file"))) {
      auto read = read_plan_file(path);
      ASSERT_TRUE(read.has_value()) << read.error().message();
      plans.emplace(row.at("file"), std::move(read).value());
    }
    const plan::Plan& plan = plans.at(row.at("file"));
    EXPECT_EQ(plan.sop_class_uid, rt_plan_storage_uid);
    EXPECT_EQ(plan.approval_status, "APPROVED");
    ASSERT_EQ(plan.patient_setups.size(), 1u);
    EXPECT_EQ(plan.patient_setups[0].patient_position.text, row.at("patient_position"));
    EXPECT_EQ(plan.patient_setups[0].setup_technique.text, row.at("setup_technique"));

    const int number = std::stoi(row.at("beam_number"));
    const plan::Beam* beam = plan.beam(number);
    ASSERT_NE(beam, nullptr);
    EXPECT_EQ(beam->name, row.at("beam_name"));
    EXPECT_EQ(beam->machine_name, "FERN-LINAC-1");
    // The electron demo plans (tools/make_demo_plans/electron_plans.cpp): applicator, cutout, bolus.
    const bool electron = row.at("file").rfind("fern_electron_", 0) == 0;
    EXPECT_EQ(beam->radiation_type, electron ? plan::RadiationType::electron : plan::RadiationType::photon);
    if (electron) {
      ASSERT_EQ(beam->applicators.size(), 1u);
      EXPECT_EQ(beam->applicators[0].type, plan::ApplicatorType::electron_square);
      for (const plan::Block& block : beam->blocks) EXPECT_EQ(block.type, plan::BlockType::aperture);
    }
    EXPECT_EQ(beam->delivery_type.text, row.at("delivery_type"));
    ASSERT_TRUE(beam->sad_mm.has_value());
    EXPECT_DOUBLE_EQ(*beam->sad_mm, 1000.0);
    ASSERT_EQ(beam->control_points.size(), static_cast<std::size_t>(std::stoi(row.at("control_points"))));
    const auto& cp0 = beam->control_points.front();
    EXPECT_DOUBLE_EQ(cp0.nominal_energy_mv.value(), num(row, "energy_mv"));
    EXPECT_DOUBLE_EQ(cp0.gantry_deg.value(), num(row, "gantry_deg"));
    EXPECT_DOUBLE_EQ(cp0.ssd_mm.value(), num(row, "ssd_mm"));
    EXPECT_EQ(beam->control_points.back().cumulative_meterset_weight.value(), 1.0);

    const bool has_mlc = row.at("mlc") == "MLCX";
    EXPECT_EQ(cp0.device(plan::DeviceType::mlcx) != nullptr, has_mlc);
    if (has_mlc) {
      const auto& mlc =
          *std::find_if(beam->beam_limiting_devices.begin(), beam->beam_limiting_devices.end(),
                        [](const plan::BeamLimitingDevice& d) { return d.type == plan::DeviceType::mlcx; });
      // The invented MLC of FERN-LINAC-1: 72 pairs, all 5 mm wide (tools/demo_linac/model.hpp).
      EXPECT_EQ(mlc.pair_count, 72);
      ASSERT_EQ(mlc.leaf_boundaries_mm.size(), 73u);
      EXPECT_DOUBLE_EQ(mlc.leaf_boundaries_mm.front(), -180.0);
      EXPECT_DOUBLE_EQ(mlc.leaf_boundaries_mm[1], -175.0);
      EXPECT_DOUBLE_EQ(mlc.leaf_boundaries_mm[36], 0.0);
      EXPECT_DOUBLE_EQ(mlc.leaf_boundaries_mm.back(), 180.0);
    }
    if (row.at("wedge_id") == "-") {
      EXPECT_TRUE(beam->wedges.empty());
    } else {
      ASSERT_EQ(beam->wedges.size(), 1u);
      EXPECT_EQ(beam->wedges[0].id, row.at("wedge_id"));
      ASSERT_EQ(cp0.wedge_positions.size(), 1u);
      EXPECT_EQ(cp0.wedge_positions[0].position.text, "IN");
    }
    if (row.at("tray_id") == "-") {
      if (!electron) {
        EXPECT_TRUE(beam->blocks.empty());  // an electron cutout has no tray
      }
    } else {
      ASSERT_EQ(beam->blocks.size(), 1u);
      EXPECT_EQ(beam->blocks[0].tray_id, row.at("tray_id"));
      EXPECT_GE(beam->blocks[0].outline_mm.size(), 3u);
    }

    const plan::ReferencedBeam* ref = reference(plan, number);
    ASSERT_NE(ref, nullptr);
    if (row.at("meterset_mu") == "-") {
      EXPECT_FALSE(ref->meterset_mu.has_value());  // setup beams: absent, never 0
      EXPECT_FALSE(ref->dose_gy.has_value());
      continue;
    }
    EXPECT_NEAR(ref->meterset_mu.value(), num(row, "meterset_mu"), 1e-9);
    EXPECT_NEAR(ref->dose_gy.value(), num(row, "beam_dose_gy"), 1e-9);
    // Plausible for megavoltage photons at 5-15 cm depth with or without wedges and trays:
    // roughly 0.3 to 1.1 cGy per MU (common practice, no source).
    const double cgy_per_mu = *ref->dose_gy * 100.0 / *ref->meterset_mu;
    EXPECT_GT(cgy_per_mu, 0.3);
    EXPECT_LT(cgy_per_mu, 1.1);

    // Depth and SSD along the ray to the dose point (flat surface): scale 1/cos of the ray angle.
    const double plane_mm = num(row, "ssd_mm") + num(row, "depth_mm");
    const double scale = std::hypot(plane_mm, num(row, "off_axis_mm") * plane_mm / 1000.0) / plane_mm;
    const double depth_mm = num(row, "depth_mm") * scale;
    const double ssd_mm = num(row, "ssd_mm") * scale;
    const auto expected_point = point(row.at("dose_point_mm"));
    const std::string layout = row.at("layout");
    const plan::DosePointDistances* distances = nullptr;
    if (layout == "beam_level") {
      ASSERT_EQ(beam->dose_references.size(), 1u);
      distances = &beam->dose_references[0].distances;
      ASSERT_TRUE(distances->source_to_external_contour_mm.has_value());
      EXPECT_NEAR(*distances->source_to_external_contour_mm, ssd_mm, 1e-3);
      EXPECT_TRUE(ref->distances_in_referenced_beam.empty());
      EXPECT_TRUE(ref->distances_in_verification_sequence.empty());
    } else if (layout == "referenced_beam_2012") {
      distances = &ref->distances_in_referenced_beam;
      ASSERT_TRUE(ref->dose_specification_point_mm.has_value());
      for (int i = 0; i < 3; ++i)
        EXPECT_NEAR((*ref->dose_specification_point_mm)[i], expected_point[i], 1e-6);
      EXPECT_TRUE(beam->dose_references.empty());
    } else {
      ASSERT_EQ(layout, "fraction_verification");
      distances = &ref->distances_in_verification_sequence;
      EXPECT_EQ(ref->verification_dose_reference_number, 1);  // found through Referenced Dose Reference UID
      EXPECT_TRUE(ref->distances_in_referenced_beam.empty());
    }
    ASSERT_TRUE(distances->depth_mm.has_value());
    EXPECT_NEAR(*distances->depth_mm, depth_mm, 1e-3);  // FL: single precision
    EXPECT_NEAR(distances->equivalent_depth_mm.value(), depth_mm, 1e-3);
    EXPECT_NEAR(distances->ssd_mm.value(), ssd_mm, 1e-3);

    // The plan's one dose reference sits at the dose point.
    ASSERT_EQ(plan.dose_references.size(), 1u);
    ASSERT_TRUE(plan.dose_references[0].point_mm.has_value());
    for (int i = 0; i < 3; ++i) EXPECT_NEAR((*plan.dose_references[0].point_mm)[i], expected_point[i], 1e-6);
    const auto& last = beam->control_points.back();
    ASSERT_EQ(last.dose_reference_coefficients.size(), 1u);
    EXPECT_DOUBLE_EQ(last.dose_reference_coefficients[0].cumulative_coefficient.value(), 1.0);
  }
}

TEST(ReadPlanDemo, ArcControlPointsCarryForwardWhatTheyOmit) {
  const auto plan = read_plan_file(test::source_dir() / "testdata/plans/fern_two_arc.dcm");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  const plan::Beam& arc = plan->beams.at(0);
  ASSERT_EQ(arc.control_points.size(), 18u);
  const auto& first = arc.control_points.front();
  for (const auto& cp : arc.control_points) {
    SCOPED_TRACE(cp.index);
    // Written only in control point 0, carried forward to every later one (PS3.3 C.8.8.14).
    EXPECT_EQ(cp.nominal_energy_mv, first.nominal_energy_mv);
    EXPECT_EQ(cp.dose_rate_mu_per_min, first.dose_rate_mu_per_min);
    EXPECT_EQ(cp.collimator_deg, first.collimator_deg);
    EXPECT_EQ(cp.couch_deg, first.couch_deg);
    EXPECT_EQ(cp.isocenter_mm, first.isocenter_mm);
    ASSERT_NE(cp.device(plan::DeviceType::asymx), nullptr);
    EXPECT_EQ(cp.device(plan::DeviceType::asymx)->positions_mm,
              first.device(plan::DeviceType::asymx)->positions_mm);
    ASSERT_NE(cp.device(plan::DeviceType::mlcx), nullptr);
    EXPECT_EQ(cp.device(plan::DeviceType::mlcx)->positions_mm.size(), 144u);
  }
  // The gantry moves clockwise 190 -> 170 through 0 in 20 degree steps; the MLC changes.
  EXPECT_DOUBLE_EQ(arc.control_points[0].gantry_deg.value(), 190.0);
  EXPECT_DOUBLE_EQ(arc.control_points[9].gantry_deg.value(), 10.0);
  EXPECT_DOUBLE_EQ(arc.control_points[17].gantry_deg.value(), 170.0);
  EXPECT_EQ(arc.control_points[0].gantry_rotation.text, "CW");
  EXPECT_NE(arc.control_points[0].device(plan::DeviceType::mlcx)->positions_mm,
            arc.control_points[9].device(plan::DeviceType::mlcx)->positions_mm);
  EXPECT_EQ(plan->beams.at(1).control_points[0].gantry_rotation.text, "CC");
}

TEST(ReadPlanDemo, StaticBeamSecondControlPointInheritsJawsAndLeaves) {
  const auto plan = read_plan_file(test::source_dir() / "testdata/plans/fern_static_mlc.dcm");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  const auto& cps = plan->beams.at(0).control_points;
  ASSERT_EQ(cps.size(), 2u);
  ASSERT_EQ(cps[1].devices.size(), 3u);  // ASYMX, ASYMY, MLCX although control point 1 lists none
  EXPECT_EQ(cps[1].device(plan::DeviceType::mlcx)->positions_mm,
            cps[0].device(plan::DeviceType::mlcx)->positions_mm);
  EXPECT_FALSE(cps[1].ssd_mm.has_value());  // not carried: the SSD belongs to its control point
  EXPECT_DOUBLE_EQ(cps[1].cumulative_meterset_weight.value(), 1.0);
}

TEST(ReadPlanDemo, StepAndShootSegmentsKeepTheirWeights) {
  const auto plan = read_plan_file(test::source_dir() / "testdata/plans/fern_step_shoot.dcm");
  ASSERT_TRUE(plan.has_value()) << plan.error().message();
  const auto& cps = plan->beams.at(0).control_points;
  ASSERT_EQ(cps.size(), 6u);
  // Segment weights 0.5, 0.3, 0.2 (generator specification): beam on between CPs 0-1, 2-3, 4-5.
  EXPECT_DOUBLE_EQ(cps[1].cumulative_meterset_weight.value(), 0.5);
  EXPECT_DOUBLE_EQ(cps[2].cumulative_meterset_weight.value(), 0.5);
  EXPECT_DOUBLE_EQ(cps[3].cumulative_meterset_weight.value(), 0.8);
  EXPECT_DOUBLE_EQ(cps[5].cumulative_meterset_weight.value(), 1.0);
  EXPECT_EQ(cps[1].device(plan::DeviceType::mlcx)->positions_mm,
            cps[0].device(plan::DeviceType::mlcx)->positions_mm);
  EXPECT_NE(cps[2].device(plan::DeviceType::mlcx)->positions_mm,
            cps[1].device(plan::DeviceType::mlcx)->positions_mm);
  EXPECT_EQ(plan->beams.at(0).beam_type.text, "DYNAMIC");
}

}  // namespace
}  // namespace countersign::dicom
