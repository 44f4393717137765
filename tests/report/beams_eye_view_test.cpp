// The beam's-eye view geometry: what is drawn where, in millimetres of paper.

#include <countersign/geometry/beam_frame.hpp>
#include <countersign/report/beams_eye_view.hpp>

#include <gtest/gtest.h>

#include <regex>
#include <string>

namespace countersign::report {
namespace {

constexpr double tol_mm = 1e-9;

TEST(BeamsEyeView, TenByTenFieldIsAHundredMillimetreSquareAtFullScale) {
  const BevMapping m(1.0, 0.0, {60.0, 60.0});
  const PaperMm lower_left = m.to_paper(-50.0, -50.0);
  const PaperMm upper_right = m.to_paper(50.0, 50.0);
  EXPECT_NEAR(upper_right.x - lower_left.x, 100.0, tol_mm);
  EXPECT_NEAR(lower_left.y - upper_right.y, 100.0, tol_mm);  // +Y is up, paper y grows down
  EXPECT_NEAR(lower_left.x, 10.0, tol_mm);
  EXPECT_NEAR(upper_right.y, 10.0, tol_mm);
}

TEST(BeamsEyeView, PanelChoosesFullScaleForTenByTenAndSvgUnitsAreMillimetres) {
  BevContent c;
  c.jaws = {-50.0, 50.0, -50.0, 50.0};
  c.open = {{-50.0, 50.0, -50.0, 50.0}};
  c.dose_point_mm = PaperMm{0.0, 0.0};
  const BevPanel panel;  // 120 mm with 11 mm kept for labels: 49 mm of room each side
  EXPECT_DOUBLE_EQ(bev_mapping(c, panel).scale(), 0.8);
  const BevPanel roomy{130.0, 130.0, 10.0};
  EXPECT_DOUBLE_EQ(bev_mapping(c, roomy).scale(), 1.0);

  const std::string svg = beams_eye_view_svg(c, roomy);
  EXPECT_NE(svg.find("width=\"130.00mm\" height=\"130.00mm\" viewBox=\"0 0 130.00 130.00\""),
            std::string::npos)
      << svg;
  // The jaw rectangle: corners 100 mm apart, centred on the panel.
  EXPECT_NE(svg.find("points=\"15.00,115.00 115.00,115.00 115.00,15.00 15.00,15.00\""), std::string::npos)
      << svg;
  EXPECT_NE(svg.find("scale 1:1 at isocentre plane"), std::string::npos);
  EXPECT_NE(svg.find("5 cm at isocentre"), std::string::npos);
}

TEST(BeamsEyeView, ScalesAreRoundAndFitTheField) {
  EXPECT_DOUBLE_EQ(choose_scale(50.0, 50.0), 1.0);
  EXPECT_DOUBLE_EQ(choose_scale(60.0, 50.0), 0.8);
  EXPECT_DOUBLE_EQ(choose_scale(200.0, 50.0), 0.25);
  EXPECT_DOUBLE_EQ(choose_scale(2000.0, 50.0), 0.05);
  EXPECT_EQ(scale_text(1.0), "1:1");
  EXPECT_EQ(scale_text(0.8), "1:1.25");
  EXPECT_EQ(scale_text(0.25), "1:4");
}

TEST(BeamsEyeView, RotatedCollimatorTurnsTheFieldCounterClockwiseSeenFromTheSource) {
  // Collimator 90 degrees: the collimator's +X points along the gantry system's +Y (IEC 61217,
  // right-handed about Z), which is up on the drawing.
  const BevMapping m(1.0, 90.0, {60.0, 60.0});
  const PaperMm p = m.to_paper(20.0, 0.0);
  EXPECT_NEAR(p.x, 60.0, tol_mm);
  EXPECT_NEAR(p.y, 40.0, tol_mm);
  const PaperMm q = m.to_paper(0.0, 20.0);  // the collimator's +Y points to the gantry system's -X: left
  EXPECT_NEAR(q.x, 40.0, tol_mm);
  EXPECT_NEAR(q.y, 60.0, tol_mm);
}

TEST(BeamsEyeView, DosePointLandsWhereTheBeamSeesItWhateverTheCollimatorAngle) {
  // A point of a head-first-supine patient, 30 mm towards the patient's left and 20 mm towards the
  // head of an isocentre at the origin, gantry 0. Seen from the source the drawing is fixed to the
  // gantry, so turning the collimator must not move the point on paper, only the field around it.
  const plan::PointMm point{30.0, 0.0, 20.0};
  const geometry::BeamAngles straight{0.0, 0.0, 0.0};
  const geometry::BeamFrame frame0(geometry::PatientPosition::hfs, straight, {0.0, 0.0, 0.0}, 1000.0);
  const geometry::PointInBeam seen0 = frame0.locate(point);
  const PaperMm reference =
      BevMapping(1.0, 0.0, {60.0, 60.0}).to_paper(seen0.iso_plane_x_mm, seen0.iso_plane_y_mm);
  for (const double collimator : {30.0, 90.0, 135.0, 270.0, 345.0}) {
    const geometry::BeamAngles turned{0.0, collimator, 0.0};
    const geometry::BeamFrame frame(geometry::PatientPosition::hfs, turned, {0.0, 0.0, 0.0}, 1000.0);
    const geometry::PointInBeam seen = frame.locate(point);
    const PaperMm p =
        BevMapping(1.0, collimator, {60.0, 60.0}).to_paper(seen.iso_plane_x_mm, seen.iso_plane_y_mm);
    EXPECT_NEAR(p.x, reference.x, 1e-9) << "collimator " << collimator;
    EXPECT_NEAR(p.y, reference.y, 1e-9) << "collimator " << collimator;
  }
  // And where that is: HFS at gantry 0 has IEC X towards the patient's left (DICOM +x) and IEC Y
  // towards the head (DICOM +z), so the point is 30 mm right and 20 mm up of the axis on paper.
  EXPECT_NEAR(reference.x, 90.0, 1e-9);
  EXPECT_NEAR(reference.y, 40.0, 1e-9);
}

TEST(BeamsEyeView, DrawsTheDosePointOfARotatedCollimatorInTheSvg) {
  BevContent c;
  c.collimator_deg = 90.0;
  c.jaws = {-40.0, 40.0, -40.0, 40.0};
  c.open = {{-40.0, 40.0, -40.0, 40.0}};
  c.dose_point_mm = PaperMm{20.0, 0.0};
  const BevPanel panel{130.0, 130.0, 10.0};
  const std::string svg = beams_eye_view_svg(c, panel);
  // Collimator +X is up at 90 degrees: 20 mm above the centre (65, 65).
  EXPECT_NE(svg.find("class=\"dose-point\" cx=\"65.00\" cy=\"45.00\""), std::string::npos) << svg;
  EXPECT_NE(svg.find("coll. 90.0\u00B0"), std::string::npos);
}

TEST(BeamsEyeView, MlcLeavesAreDrawnOnlyWhereTheyBlockInsideTheJaws) {
  BevContent c;
  c.jaws = {-50.0, 50.0, -20.0, 20.0};
  c.shaped_by_mlc = true;
  c.open = {{-20.0, 0.0, -30.0, 30.0}, {0.0, 20.0, -50.0, 50.0}};  // lower pair narrower than the jaws
  const BevPanel panel{130.0, 130.0, 10.0};
  const std::string svg = beams_eye_view_svg(c, panel);
  const std::regex leaf("fill=\"#c4c4c4\"");
  const auto leaves =
      std::distance(std::sregex_iterator(svg.begin(), svg.end(), leaf), std::sregex_iterator());
  EXPECT_EQ(leaves, 2);  // bank A and bank B of the lower pair; the upper pair is open to the jaws
}

// The drawing shows the outline the engine built with the apertures; the report rebuilds nothing.
TEST(BeamsEyeView, ContentIsTheCalculationsOutline) {
  engine::BeamDose dose;
  dose.point.spd_mm = 1000.0;
  dose.point.iso_plane_x_mm = 12.0;
  dose.aperture = geometry::Aperture({-50.0, 50.0, -50.0, 50.0}, {{-50.0, 50.0, -50.0, 50.0}}, false);
  dose.features.modulated = true;
  dose.outline.jaws = {-60.0, 70.0, -40.0, 40.0};
  dose.outline.open = {{-40.0, 40.0, -30.0, 30.0}};
  dose.outline.known = true;
  const auto content = bev_content(dose);
  ASSERT_TRUE(content);
  EXPECT_TRUE(content->modulated);
  EXPECT_TRUE(content->outline_known);
  EXPECT_DOUBLE_EQ(content->jaws.x2_mm, 70.0);
  ASSERT_EQ(content->open.size(), 1u);
  EXPECT_DOUBLE_EQ(content->open[0].hi_mm, 30.0);
  EXPECT_DOUBLE_EQ(content->dose_point_mm->x, 12.0);
  // Nothing to draw before control point 0's opening is known.
  EXPECT_FALSE(bev_content(engine::BeamDose{}));
}

// Blocks: Block Data polygons at the isocentre plane drawn to scale, shielding and aperture told apart
// by line style and named in words. The default panel draws a 10 x 10 cm field at 0.8 (test above),
// axis at the panel centre (60, 60) mm: a vertex (x, y) lands at (60 + 0.8 x, 60 − 0.8 y) (hand).
TEST(BeamsEyeView, BlocksAreDrawnToScaleInTheirLineStyleWithALegendInWords) {
  BevContent c;
  c.jaws = {-50.0, 50.0, -50.0, 50.0};
  c.open = {{-50.0, 50.0, -50.0, 50.0}};
  c.blocks.push_back({{{-20.0, -20.0}, {20.0, -20.0}, {20.0, 0.0}, {-20.0, 0.0}}, false, 0.03});
  c.blocks.push_back({{{-40.0, -40.0}, {40.0, -40.0}, {40.0, 40.0}, {-40.0, 40.0}}, true, 0.03});
  const BevPanel panel;
  ASSERT_DOUBLE_EQ(bev_mapping(c, panel).scale(), 0.8);
  const std::string svg = beams_eye_view_svg(c, panel);
  // (−20, −20) → (44, 76); (20, −20) → (76, 76); (20, 0) → (76, 60); (−20, 0) → (44, 60).
  EXPECT_NE(svg.find("<polygon class=\"block-shielding\" points=\"44.00,76.00 76.00,76.00 76.00,60.00 "
                     "44.00,60.00\" " +
                     std::string(block_line_style(false))),
            std::string::npos)
      << svg;
  // (±40, ±40) → 28 and 92.
  EXPECT_NE(svg.find("<polygon class=\"block-aperture\" points=\"28.00,92.00 92.00,92.00 92.00,28.00 "
                     "28.00,28.00\" " +
                     std::string(block_line_style(true))),
            std::string::npos)
      << svg;
  EXPECT_NE(block_line_style(true), block_line_style(false));
  EXPECT_NE(std::string(block_line_style(true)).find("stroke-dasharray"), std::string::npos);
  EXPECT_EQ(std::string(block_line_style(false)).find("stroke-dasharray"), std::string::npos);
  EXPECT_NE(svg.find("shielding block: blocked inside"), std::string::npos);
  EXPECT_NE(svg.find("aperture block: open inside"), std::string::npos);

  // Collimator 90°: a vertex (x, y) of the collimator system is (−y, x) of the gantry system
  // (right-handed about Z): (−20, −20) → (20, −20) → (76, 76); (20, −20) → (20, 20) → (76, 44);
  // (20, 0) → (0, 20) → (60, 44); (−20, 0) → (0, −20) → (60, 76).
  c.collimator_deg = 90.0;
  c.blocks.resize(1);
  const std::string turned = beams_eye_view_svg(c, panel);
  EXPECT_NE(turned.find("points=\"76.00,76.00 76.00,44.00 60.00,44.00 60.00,76.00\""), std::string::npos)
      << turned;
  EXPECT_EQ(turned.find("aperture block: open inside"), std::string::npos);  // only the types drawn
}

// The engine hands the blocks it used to the drawing with the outline.
TEST(BeamsEyeView, BlocksComeFromTheCalculationsOutline) {
  engine::BeamDose dose;
  dose.point.spd_mm = 1000.0;
  dose.aperture = geometry::Aperture({-50.0, 50.0, -50.0, 50.0}, {{-50.0, 50.0, -50.0, 50.0}}, false);
  dose.outline.jaws = {-50.0, 50.0, -50.0, 50.0};
  dose.outline.open = {{-50.0, 50.0, -50.0, 50.0}};
  dose.outline.known = true;
  dose.outline.blocks.push_back({{{0.0, 0.0}, {10.0, 0.0}, {10.0, 10.0}}, false, 0.05});
  const auto content = bev_content(dose);
  ASSERT_TRUE(content);
  ASSERT_EQ(content->blocks.size(), 1u);
  EXPECT_DOUBLE_EQ(content->blocks[0].outline_mm[2][1], 10.0);
  EXPECT_FALSE(content->blocks[0].aperture);
}

}  // namespace
}  // namespace countersign::report
