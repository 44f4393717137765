// The bundled demo library beamdata/FERN-LINAC-1 (INVENTED data for the fictional Fernhollow
// Radiotherapy Unit): plausible magnitudes against typical published values, mutual consistency
// (beamdata/FORMAT.md), and agreement with the model it was generated from.
#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/library.hpp>
#include <countersign/beamdata/validation.hpp>

// The model is header-only; the committed tables must be what it produces today.
#include "../../tools/demo_linac/model.hpp"
#include "beamdata/library_fixture.hpp"

#include <gtest/gtest.h>

#include <cmath>

namespace countersign::beamdata {
namespace {

class DemoLibrary : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    auto loaded = load_library(testing::demo_library());
    ASSERT_TRUE(loaded) << loaded.error().message();
    library_ = std::make_unique<Library>(std::move(*loaded));
  }
  static void TearDownTestSuite() { library_.reset(); }

  static const BeamData& beam(double energy_mv) {
    const BeamMatch m = library_->match("FERN-LINAC-1", "PHOTON", energy_mv);
    if (m.beam == nullptr) throw std::runtime_error(m.explanation);
    return *m.beam;
  }
  static double pdd(double energy_mv, double depth_cm, double field_cm) {
    const Lookup l = beam(energy_mv).pdd.at(depth_cm, field_cm);
    EXPECT_FALSE(l.extrapolated());
    return l.value;
  }

  static inline std::unique_ptr<Library> library_;
};

TEST_F(DemoLibrary, ManifestSaysItIsInventedDemoData) {
  const std::string manifest = testing::read_text(testing::demo_library() / "FERN-LINAC-1/machine.toml");
  EXPECT_NE(manifest.find(
                "INVENTED demo data for the fictional Fernhollow Radiotherapy Unit - not for clinical use"),
            std::string::npos);
  for (const char* table : {"6X/pdd.csv", "6X/tmr.csv", "10X/sc.csv", "10X/oar.csv"}) {
    EXPECT_NE(testing::read_text(testing::demo_library() / "FERN-LINAC-1" / table).find("INVENTED"),
              std::string::npos)
        << table;
  }
}

TEST_F(DemoLibrary, ValidatesClean) {
  const ValidationReport report = validate_library(testing::demo_library());
  for (const auto& p : report.problems) ADD_FAILURE() << p.text();
  EXPECT_GT(report.consistency_nodes_compared, 800u);
}

TEST_F(DemoLibrary, SixMegavoltMagnitudesAreTypical) {
  // Typical 6 MV values, from memory (cf. the central-axis data compiled in BJR Supplement 25,
  // 1996; not checked against the printed tables): dmax 1.5 cm; at SSD 100 cm, 10x10 cm,
  // PDD(5 cm) about 86-87 %, PDD(10 cm) about 66-67 %, PDD(20 cm) about 38-39 %.
  const BeamData& b = beam(6.0);
  EXPECT_DOUBLE_EQ(b.dmax_cm, 1.5);
  EXPECT_NEAR(pdd(6.0, 5.0, 10.0), 86.5, 1.5);
  EXPECT_GE(pdd(6.0, 10.0, 10.0), 66.0);
  EXPECT_LE(pdd(6.0, 10.0, 10.0), 67.5);
  EXPECT_NEAR(pdd(6.0, 20.0, 10.0), 38.5, 1.5);
  // TMR(10 cm, 10x10) about 0.78-0.79 for 6 MV (from memory).
  EXPECT_NEAR(b.tmr.at(10.0, 10.0).value, 0.785, 0.015);
}

TEST_F(DemoLibrary, TenMegavoltMagnitudesAreTypical) {
  // Typical 10 MV values, from memory (cf. BJR Supplement 25): dmax about 2.3-2.5 cm,
  // PDD(10 cm, 10x10, SSD 100) about 73 %, PDD(20 cm) about 46 %.
  const BeamData& b = beam(10.0);
  EXPECT_GE(b.dmax_cm, 2.3);
  EXPECT_LE(b.dmax_cm, 2.5);
  EXPECT_NEAR(pdd(10.0, 10.0, 10.0), 73.0, 1.0);
  EXPECT_NEAR(pdd(10.0, 20.0, 10.0), 46.0, 1.5);
}

TEST_F(DemoLibrary, TrendsWithFieldSizeAndEnergy) {
  // Common practice, no source: PDD at depth rises with field size and with energy; the surface
  // dose falls with energy; Sc and Sp rise with field size by a few percent over 4-40 cm.
  for (const double e : {6.0, 10.0}) {
    EXPECT_LT(pdd(e, 10.0, 5.0), pdd(e, 10.0, 10.0));
    EXPECT_LT(pdd(e, 10.0, 10.0), pdd(e, 10.0, 20.0));
    const BeamData& b = beam(e);
    EXPECT_NEAR(b.sc.at(4.0).value, 0.955, 0.03);
    EXPECT_NEAR(b.sc.at(40.0).value, 1.05, 0.03);
    EXPECT_NEAR(b.sp.at(4.0).value, 0.97, 0.03);
    EXPECT_NEAR(b.sp.at(40.0).value, 1.04, 0.03);
    EXPECT_DOUBLE_EQ(b.calibration.output_cgy_per_mu, 1.0);
    EXPECT_DOUBLE_EQ(b.calibration.depth_cm, b.dmax_cm);
  }
  EXPECT_GT(pdd(10.0, 10.0, 10.0), pdd(6.0, 10.0, 10.0));
  EXPECT_LT(pdd(10.0, 0.0, 10.0), pdd(6.0, 0.0, 10.0));
}

TEST_F(DemoLibrary, PddTmrSpConsistentWithinHalfAPercent) {
  // beamdata/FORMAT.md: the demo library is consistent through the PDD->TMR relation within 0.5 %.
  for (const double e : {6.0, 10.0}) {
    const BeamData& b = beam(e);
    std::size_t compared = 0;
    for (const auto& c : compare_tmr(b.tmr, b.pdd, b.sp, b.pdd_ssd_cm, b.dmax_cm, b.dmax_cm)) {
      if (c.extrapolated) continue;
      ++compared;
      EXPECT_LT(std::abs(c.difference_percent), 0.5)
          << e << " MV, depth " << c.depth_cm << ", field " << c.field_at_depth_cm;
    }
    EXPECT_GT(compared, 400u);
  }
}

TEST_F(DemoLibrary, TablesAreTheModelRounded) {
  for (const double e : {6.0, 10.0}) {
    const BeamData& b = beam(e);
    const demo_linac::BeamModel& m = demo_linac::beam_model(e);
    EXPECT_DOUBLE_EQ(b.dmax_cm, demo_linac::dmax_cm(m));
    for (std::size_t r = 0; r < b.pdd.rows().size(); ++r) {
      for (std::size_t c = 0; c < b.pdd.columns().size(); ++c) {
        EXPECT_NEAR(b.pdd.cell(r, c), demo_linac::pdd(m, b.pdd.rows()[r], b.pdd.columns()[c], 100.0), 0.0051);
        EXPECT_NEAR(b.tmr.cell(r, c), demo_linac::tmr(m, b.tmr.rows()[r], b.tmr.columns()[c]), 0.000051);
      }
    }
    for (std::size_t i = 0; i < b.sc.axis().size(); ++i) {
      EXPECT_NEAR(b.sc.values()[i], demo_linac::sc(m, b.sc.axis()[i]), 0.000051);
      EXPECT_NEAR(b.sp.values()[i], demo_linac::sp(m, b.sp.axis()[i]), 0.000051);
    }
    for (const char* w : {"W15", "W30", "W45", "W60"})
      EXPECT_DOUBLE_EQ(*b.wedge(w)->factor, demo_linac::wedge_factor(m, w));
    EXPECT_DOUBLE_EQ(b.tray("TRAY-A")->factor, demo_linac::tray_factor(m, "TRAY-A"));
    EXPECT_DOUBLE_EQ(*b.mlc_transmission, demo_linac::mlc_transmission(m));
  }
}

TEST(DemoLinacModel, DefinitionsHold) {
  for (const double e : {6.0, 10.0}) {
    const auto& m = demo_linac::beam_model(e);
    EXPECT_NEAR(demo_linac::sc(m, 10.0), 1.0, 1e-12);
    EXPECT_NEAR(demo_linac::sp(m, 10.0), 1.0, 1e-12);
    for (const double s : {3.0, 10.0, 40.0}) {
      EXPECT_NEAR(demo_linac::tmr(m, m.dmax_cm, s), 1.0, 1e-12);
      EXPECT_NEAR(demo_linac::pdd(m, m.dmax_cm, s, 100.0), 100.0, 1e-9);
      EXPECT_NEAR(demo_linac::pdd(m, m.dmax_cm, s, 120.0), 100.0, 1e-9);
      // The maximum of the depth dose lies at dmax (within the 0.1 cm search step).
      for (double d = 0.0; d <= 10.0; d += 0.1) EXPECT_LE(demo_linac::pdd(m, d, s, 100.0), 100.0 + 1e-9) << d;
      // PDD and TMR/Sp satisfy the relation of DEVELOPERS.md, "Physics" exactly, at another SSD too.
      for (const double ssd : {90.0, 100.0, 120.0}) {
        const double d = 12.0;
        const double s_d = field_at_depth_cm(s, ssd, d);
        const double s_dm = field_at_depth_cm(s, ssd, m.dmax_cm);
        EXPECT_NEAR(tmr_from_pdd(demo_linac::pdd(m, d, s, ssd), d, ssd, m.dmax_cm, demo_linac::sp(m, s_d),
                                 demo_linac::sp(m, s_dm)),
                    demo_linac::tmr(m, d, s_d), 1e-12);
      }
    }
    EXPECT_NEAR(demo_linac::oar(m, 10.0, 0.0), 1.0, 1e-12);
    EXPECT_DOUBLE_EQ(demo_linac::output_cgy_per_mu(m), 1.0);
  }
  EXPECT_THROW((void)demo_linac::beam_model(18.0), std::invalid_argument);
  EXPECT_THROW((void)demo_linac::wedge_factor(demo_linac::beam_model(6.0), "W10"), std::invalid_argument);
  EXPECT_THROW((void)demo_linac::tray_factor(demo_linac::beam_model(6.0), "TRAY-B"), std::invalid_argument);
}

}  // namespace
}  // namespace countersign::beamdata
