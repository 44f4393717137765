// The sector-integration dose beside the equivalent-square dose: the terminal text, `explain` (text
// and JSON) and the HTML record show both numbers the check computed and their difference, for the
// beam and for every part that used sector integration. Hand-built plans on the INVENTED test
// machine (tests/engine/fixtures.hpp). The expected numbers are the engine's own results, read back
// from the check: these tests are about presentation (the physics is tested in tests/engine); the
// difference is recomputed here from the two doses, 100 (sector − equivalent square) / equivalent square.

#include <countersign/report/check_text.hpp>
#include <countersign/report/explain_report.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/report/scatter_comparison.hpp>

#include <engine/fixtures.hpp>

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <sstream>
#include <string>
#include <vector>

namespace countersign::report {
namespace {

namespace fx = test_fixtures;

// Ten 10 mm leaf pairs across the 10 x 10 cm jaws. `upper_open_to_mm` closes the upper five pairs
// (y > 0) from that x to the right: an L-shaped opening; 50 puts every leaf at the jaws.
std::vector<double> l_shape(double upper_open_to_mm) {
  std::vector<double> positions(20);
  for (int i = 0; i < 10; ++i) {
    positions[i] = -50.0;
    positions[10 + i] = i < 5 ? 50.0 : upper_open_to_mm;
  }
  return positions;
}

plan::Beam mlc_beam(bool two_segments) {
  plan::Beam beam = fx::static_beam(1, 0.0);
  plan::BeamLimitingDevice mlc{plan::term(plan::DeviceType::mlcx), std::nullopt, 10, {}};
  for (int i = 0; i <= 10; ++i) mlc.leaf_boundaries_mm.push_back(-50.0 + 10.0 * i);
  beam.beam_limiting_devices.push_back(mlc);
  plan::ControlPoint c0 = beam.control_points[0];
  c0.devices.push_back({plan::term(plan::DeviceType::mlcx), l_shape(-10.0)});
  plan::ControlPoint c1 = c0;
  c1.index = 1;
  c1.cumulative_meterset_weight = two_segments ? 0.5 : 1.0;
  if (!two_segments) {
    c1.dose_reference_coefficients.push_back({1, 1.0});
    beam.control_points = {c0, c1};
    return beam;
  }
  c1.dose_reference_coefficients.clear();
  plan::ControlPoint c2 = c1;
  c2.index = 2;
  c2.devices.back().positions_mm = l_shape(50.0);  // every leaf at the jaws
  plan::ControlPoint c3 = c2;
  c3.index = 3;
  c3.cumulative_meterset_weight = 1.0;
  c3.dose_reference_coefficients.push_back({1, 1.0});
  beam.control_points = {c0, c1, c2, c3};
  return beam;
}

// The point at patient (−25, 0, −20) mm: HFS, gantry 0, it lies at (−25, −20) mm of the collimator
// system, in the full-width lower arm, 25 mm from every edge.
// The check keeps pointers into the library it used: one library for the whole program.
const beamdata::Library& library() {
  static const beamdata::Library invented = fx::test_library();
  return invented;
}

check::PlanCheck checked(bool two_segments) {
  plan::Plan plan = fx::make_plan({{mlc_beam(two_segments), 100.0, 1.0, 100.0}}, {-25.0, 0.0, -20.0});
  const check::PlanCheck first = check::check_plan(plan, library(), {});
  plan.fraction_groups[0].beams[0].dose_gy = first.beams.at(0).computed_dose_gy.value_or(1.0);
  return check::check_plan(plan, library(), {});
}

double difference(double sector, double equivalent) { return 100.0 * (sector - equivalent) / equivalent; }

// `pattern` filled with the beam's sector-integration dose, its equivalent-square dose and their
// difference, in that order.
std::string with_beam_doses(const char* pattern, const engine::BeamDose& m) {
  return fmt::format(fmt::runtime(pattern), m.computed_dose_gy, m.equivalent_square_dose_gy,
                     difference(m.computed_dose_gy, m.equivalent_square_dose_gy));
}

TEST(ScatterComparison, BeamThenEverySectorPart) {
  const check::PlanCheck one = checked(false);
  ASSERT_TRUE(one.beams[0].calculation);
  const engine::BeamDose& c = *one.beams[0].calculation;
  ASSERT_TRUE(c.dose_computed) << one.beams[0].reason.sentence;
  const std::vector<ScatterComparison> rows = scatter_comparisons(c);
  ASSERT_EQ(rows.size(), 1u);  // a static beam: the beam only
  EXPECT_EQ(rows[0].part, 0);
  EXPECT_DOUBLE_EQ(rows[0].sector_dose_gy, c.computed_dose_gy);
  EXPECT_DOUBLE_EQ(rows[0].equivalent_square_dose_gy, c.equivalent_square_dose_gy);
  EXPECT_NEAR(rows[0].difference_percent, difference(c.computed_dose_gy, c.equivalent_square_dose_gy), 1e-9);
  EXPECT_NE(rows[0].difference_percent, 0.0);  // an L shape: the two methods differ

  const check::PlanCheck two = checked(true);
  const engine::BeamDose& m = *two.beams[0].calculation;
  ASSERT_EQ(m.segments.size(), 2u);
  const std::vector<ScatterComparison> parts = scatter_comparisons(m);
  // The beam, then both parts: the second part's leaves stand at the jaws, but an MLC in the beam
  // makes every part go through sector integration.
  ASSERT_EQ(parts.size(), 3u);
  for (std::size_t k = 0; k < 2; ++k) {
    const engine::Segment& s = m.segments[k];
    EXPECT_EQ(parts[k + 1].part, static_cast<int>(k) + 1);
    EXPECT_EQ(parts[k + 1].from_control_point, s.from_control_point);
    EXPECT_NEAR(parts[k + 1].sector_dose_gy, s.dose.dose_cgy / 100.0, 1e-12);
    EXPECT_NEAR(parts[k + 1].equivalent_square_dose_gy, s.equivalent_square_dose_cgy / 100.0, 1e-12);
    EXPECT_NEAR(parts[k + 1].difference_percent, difference(s.dose.dose_cgy, s.equivalent_square_dose_cgy),
                1e-9);
  }
  EXPECT_EQ(parts[2].from_control_point, 2);

  // A jaw-only field has no comparison.
  const check::PlanCheck open =
      check::check_plan(fx::make_plan({{fx::static_beam(1, 0.0), 100.0, 1.0, 100.0}}), library(), {});
  EXPECT_TRUE(scatter_comparisons(*open.beams[0].calculation).empty());
}

TEST(ScatterComparison, TerminalTextShowsBothDosesAndTheDifference) {
  const check::PlanCheck c = checked(true);
  const engine::BeamDose& m = *c.beams[0].calculation;
  std::ostringstream out;
  write_check_text(out, c);
  const std::string text = out.str();
  EXPECT_NE(text.find("Sector integration beside the equivalent square"), std::string::npos) << text;
  EXPECT_NE(
      text.find(with_beam_doses(
          "beam 1 B1: sector integration {:.4f} Gy, equivalent square {:.4f} Gy, difference {:+.2f} %", m)),
      std::string::npos)
      << text;
  // The range over the two parts, smallest first (hand: compare the two differences).
  const double first = difference(m.segments[0].dose.dose_cgy, m.segments[0].equivalent_square_dose_cgy);
  const double second = difference(m.segments[1].dose.dose_cgy, m.segments[1].equivalent_square_dose_cgy);
  const bool first_lower = first < second;
  EXPECT_NE(
      text.find(fmt::format("2 of 2 parts by sector integration, differences from {:+.2f} % (part {}) to "
                            "{:+.2f} % (part {})",
                            first_lower ? first : second, first_lower ? 1 : 2, first_lower ? second : first,
                            first_lower ? 2 : 1)),
      std::string::npos)
      << text;
}

TEST(ScatterComparison, ExplainTextAndJsonListTheBeamAndEveryPart) {
  const check::PlanCheck c = checked(true);
  const check::BeamCheck& beam = c.beams[0];
  const engine::BeamDose& m = *beam.calculation;
  const BeamExplanation e = explain_beam(beam);
  const std::string text = explanation_text(c, beam, e);
  EXPECT_NE(text.find("Sector integration beside the equivalent square"), std::string::npos) << text;
  EXPECT_NE(text.find(fmt::format("{:>10.5f}  {:>13.5f}", m.computed_dose_gy, m.equivalent_square_dose_gy)),
            std::string::npos)
      << text;

  const nlohmann::json j = explanation_to_json(c, beam, e);
  const nlohmann::json& rows = j.at("scatter_comparison");
  ASSERT_EQ(rows.size(), 3u) << j.dump(2);
  EXPECT_TRUE(rows[0].at("part").is_null());
  EXPECT_DOUBLE_EQ(rows[0].at("sector_integration_dose_gy").get<double>(), m.computed_dose_gy);
  EXPECT_DOUBLE_EQ(rows[0].at("equivalent_square_dose_gy").get<double>(), m.equivalent_square_dose_gy);
  EXPECT_NEAR(rows[0].at("difference_percent").get<double>(),
              difference(m.computed_dose_gy, m.equivalent_square_dose_gy), 1e-9);
  EXPECT_EQ(rows[1].at("part").get<int>(), 1);
  EXPECT_EQ(rows[1].at("from_control_point").get<int>(), 0);
}

TEST(ScatterComparison, HtmlRecordHasTheTable) {
  const check::PlanCheck c = checked(false);
  const engine::BeamDose& m = *c.beams[0].calculation;
  const std::string page = html_report(c);
  EXPECT_NE(page.find("<h3>Sector integration beside the equivalent square</h3>"), std::string::npos);
  EXPECT_NE(
      page.find(with_beam_doses(
          "<td class=\"num\">{:.4f}</td><td class=\"num\">{:.4f}</td><td class=\"num\">{:+.2f}</td>", m)),
      std::string::npos)
      << page;
}

}  // namespace
}  // namespace countersign::report
