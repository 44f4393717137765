// The demo studies read from their DICOM files (tools/make_demo_studies, INVENTED): SSD, depth and
// radiological depth of every demo beam against the values the generator computed from its own
// polygons (testdata/studies/EXPECTED_GEOMETRY.tsv), and rays through the oblique surface against
// the analytic line-plane intersection.

#include <countersign/dicom/read_plan.hpp>
#include <countersign/dicom/read_study.hpp>
#include <countersign/geometry/beam_frame.hpp>
#include <countersign/patient/patient_model.hpp>

#include "support/paths.hpp"
#include "synthetic_study.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <map>
#include <numbers>
#include <sstream>

namespace countersign::test {
namespace {

namespace fs = std::filesystem;

const study::Study& demo_study(const std::string& name) {
  static std::map<std::string, study::Study> loaded;
  auto found = loaded.find(name);
  if (found != loaded.end()) return found->second;
  const fs::path folder = source_dir() / "testdata/studies" / name;
  for (const auto& entry : fs::directory_iterator(folder)) {
    if (entry.path().filename().string().rfind("RP.", 0) != 0) continue;
    auto plan = dicom::read_plan_file(entry.path());
    const fs::path inputs[] = {folder};
    auto study = dicom::load_study_for_plan(plan.value(), inputs);
    if (!study) throw std::runtime_error(study.problem().message());
    return loaded.emplace(name, std::move(study.value())).first->second;
  }
  throw std::runtime_error("no plan in " + folder.string());
}

// The demo study with the demo table (-1000 HU -> 0, 0 -> 1, 3000 -> 2.5).
const patient::PatientModel& demo(const std::string& name) {
  static std::map<std::string, patient::PatientModel> models;
  auto found = models.find(name);
  if (found != models.end()) return found->second;
  const auto table = patient::piecewise_linear_density({{-1000.0, 0.0}, {0.0, 1.0}, {3000.0, 2.5}});
  return models
      .emplace(std::piecewise_construct, std::forward_as_tuple(name),
               std::forward_as_tuple(demo_study(name), table))
      .first->second;
}

std::vector<std::map<std::string, std::string>> expected_geometry() {
  std::ifstream in(source_dir() / "testdata/studies/EXPECTED_GEOMETRY.tsv");
  std::vector<std::string> header;
  std::vector<std::map<std::string, std::string>> rows;
  for (std::string line; std::getline(in, line);) {
    if (line.empty() || line[0] == '#') continue;
    std::vector<std::string> cells;
    std::stringstream split(line);
    for (std::string cell; std::getline(split, cell, '\t');) cells.push_back(cell);
    if (header.empty()) {
      header = cells;
      continue;
    }
    std::map<std::string, std::string> row;
    for (std::size_t i = 0; i < cells.size(); ++i) row[header.at(i)] = cells[i];
    rows.push_back(row);
  }
  return rows;
}

Eigen::Vector3d triple(const std::string& text) {
  Eigen::Vector3d p;
  std::stringstream split(text);
  std::string cell;
  for (int a = 0; a < 3 && std::getline(split, cell, '\\'); ++a) p[a] = std::stod(cell);
  return p;
}

TEST(DemoGeometry, EveryBeamAgreesWithTheGeneratorsPolygons) {
  const auto rows = expected_geometry();
  ASSERT_EQ(rows.size(), 9u);
  for (const auto& row : rows) {
    SCOPED_TRACE(row.at("study") + " beam " + row.at("beam_name"));
    const auto& model = demo(row.at("study"));
    const Eigen::Vector3d iso = triple(row.at("isocenter_mm"));
    const geometry::BeamFrame frame(geometry::PatientPosition::hfs,
                                    {std::stod(row.at("gantry_deg")), 0.0, 0.0}, {iso.x(), iso.y(), iso.z()},
                                    1000.0);
    const auto ssd = model.ssd(frame);
    ASSERT_TRUE(ssd.has_value()) << ssd.problem().message();
    // Contour vertices are stored with 10 significant digits: agreement to well below a micrometre.
    EXPECT_NEAR(ssd->distance_mm, std::stod(row.at("ssd_mm")), 1e-5);
    EXPECT_LT((ssd->entry_mm - triple(row.at("entry_mm"))).norm(), 1e-5);
    const auto depth = model.depth(frame.source_in_patient_mm(), iso);
    ASSERT_TRUE(depth.has_value()) << depth.problem().message();
    EXPECT_NEAR(depth->depth_mm, std::stod(row.at("depth_mm")), 1e-5);
    // The generator integrates the same voxels by the midpoint rule in 0.01 mm steps.
    EXPECT_NEAR(depth->radiological_depth_mm, std::stod(row.at("radiological_depth_mm")), 0.02);
  }
}

TEST(DemoGeometry, LungSlabAnteriorBeamIsExact) {
  // 40 mm water, 40 mm lung (-700 HU -> 0.3 in the demo table), 40 mm water: 92 mm (hand calculation).
  const geometry::BeamFrame frame(geometry::PatientPosition::hfs, {0.0, 0.0, 0.0}, {0.0, 20.0, 0.0}, 1000.0);
  const auto depth = demo("fern_lung_slab").depth(frame.source_in_patient_mm(), {0.0, 20.0, 0.0});
  ASSERT_TRUE(depth.has_value()) << depth.problem().message();
  EXPECT_NEAR(depth->depth_mm, 120.0, 1e-9);
  EXPECT_NEAR(depth->radiological_depth_mm, 40.0 + 40.0 * 0.3 + 40.0, 1e-9);
  EXPECT_NEAR(depth->source_to_entry_mm, 880.0, 1e-9);
}

// Oblique surface y = -80 + x tan(20 deg) for |x| <= 120, all z: rays from many directions, some
// leaving the transverse plane, against the analytic intersection of the line with that plane.
TEST(DemoGeometry, ObliqueSurfaceDepthIsTheLinePlaneIntersection) {
  const auto& model = demo("fern_oblique");
  const double slope = std::tan(20.0 * std::numbers::pi / 180.0);
  const Eigen::Vector3d normal(-slope, 1.0, 0.0);  // plane: normal . p = -80
  int checked = 0;
  for (double gantry = -30.0; gantry <= 30.0; gantry += 7.5) {
    for (double tilt = -0.04; tilt <= 0.041; tilt += 0.02) {
      const double g = gantry * std::numbers::pi / 180.0;
      const Eigen::Vector3d direction = Eigen::Vector3d(-std::sin(g), std::cos(g), tilt).normalized();
      const Eigen::Vector3d point(5.0, 20.0, 3.0);
      const Eigen::Vector3d source = point - 1000.0 * direction;
      const double t = (-80.0 - normal.dot(source)) / normal.dot(point - source);
      const Eigen::Vector3d entry = source + t * (point - source);
      ASSERT_LE(std::abs(entry.x()), 120.0);
      ASSERT_LE(std::abs(entry.z()), 40.0);
      const auto depth = model.depth(source, point);
      ASSERT_TRUE(depth.has_value()) << depth.problem().message();
      EXPECT_NEAR(depth->depth_mm, (point - entry).norm(), 1e-5) << "gantry " << gantry << " tilt " << tilt;
      EXPECT_LT((depth->entry_mm - entry).norm(), 1e-5);
      // Water inside, but the slanted skin cuts voxels whose centre (air or water) sets their density.
      EXPECT_LE(depth->radiological_depth_mm, depth->depth_mm + 1e-9);
      EXPECT_GE(depth->radiological_depth_mm, depth->depth_mm - 5.0 * std::sqrt(3.0));
      ++checked;
    }
  }
  EXPECT_EQ(checked, 45);
}

}  // namespace
}  // namespace countersign::test
