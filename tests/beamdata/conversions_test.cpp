// Physics of the commissioning conversions (DEVELOPERS.md, "Physics"). Each expected value names its source.
#include <countersign/beamdata/conversions.hpp>

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace countersign::beamdata {
namespace {

TEST(EquivalentSquare, SterlingFourAreaOverPerimeterHandValues) {
  // Hand values of 4A/P (Sterling's rule as stated in DEVELOPERS.md, "Physics"):
  EXPECT_DOUBLE_EQ(equivalent_square_cm(10.0, 10.0), 10.0);            // a square is its own equivalent
  EXPECT_NEAR(equivalent_square_cm(10.0, 20.0), 13.3333333333, 1e-9);  // 4*200/60
  EXPECT_NEAR(equivalent_square_cm(5.0, 20.0), 8.0, 1e-12);            // 4*100/50
  EXPECT_NEAR(equivalent_square_cm(4.0, 30.0), 7.0588235294, 1e-9);    // 4*120/68
  EXPECT_DOUBLE_EQ(equivalent_square_cm(20.0, 10.0), equivalent_square_cm(10.0, 20.0));  // symmetric
}

TEST(FieldAtDepth, DivergesWithDistance) {
  // Similar triangles: 10 cm at SSD 100 cm is 11 cm at 10 cm depth (hand value).
  EXPECT_NEAR(field_at_depth_cm(10.0, 100.0, 10.0), 11.0, 1e-12);
  EXPECT_DOUBLE_EQ(field_at_depth_cm(10.0, 100.0, 0.0), 10.0);
}

TEST(MayneordF, TextbookWorkedExample) {
  // Worked example in F. M. Khan, "The Physics of Radiation Therapy" (chapter on dose
  // distribution and scatter analysis), from memory, edition not verified: Co-60, dm = 0.5 cm,
  // 15x15 cm, depth 10 cm, PDD 58.4 % at SSD 80 cm; at SSD 100 cm F = 1.043 and PDD = 60.9 %.
  // Hand check: ((100.5/80.5)(90/110))^2 = 1.02146^2 = 1.04338.
  const double f = mayneord_f_factor(100.0, 80.0, 0.5, 10.0);
  EXPECT_NEAR(f, 1.0434, 0.0005);
  EXPECT_NEAR(58.4 * f, 60.9, 0.05);
}

TEST(MayneordF, HandValueSixMegavolt) {
  // Hand value: 6 MV, dm = 1.5 cm, depth 10 cm, table SSD 100 cm, SSD 120 cm:
  // ((121.5/101.5)(110/130))^2 = (1.197044 * 0.846154)^2 = 1.012883^2 = 1.025932.
  EXPECT_NEAR(mayneord_f_factor(120.0, 100.0, 1.5, 10.0), 1.025932, 1e-5);
}

TEST(MayneordF, AboveOneForLongerSsdBelowOneForShorter) {
  // Common practice, no source: PDD rises with SSD (DEVELOPERS.md, "Physics" "F > 1 when SSD > SSDt").
  for (const double depth : {3.0, 5.0, 10.0, 20.0, 30.0}) {
    EXPECT_GT(mayneord_f_factor(110.0, 100.0, 1.5, depth), 1.0) << depth;
    EXPECT_GT(mayneord_f_factor(140.0, 100.0, 1.5, depth), mayneord_f_factor(110.0, 100.0, 1.5, depth))
        << depth;
    EXPECT_LT(mayneord_f_factor(90.0, 100.0, 1.5, depth), 1.0) << depth;
    EXPECT_LT(mayneord_f_factor(80.0, 100.0, 1.5, depth), mayneord_f_factor(90.0, 100.0, 1.5, depth))
        << depth;
  }
  // At dmax and at the table's own SSD nothing changes.
  EXPECT_DOUBLE_EQ(mayneord_f_factor(120.0, 100.0, 1.5, 1.5), 1.0);
  EXPECT_DOUBLE_EQ(mayneord_f_factor(100.0, 100.0, 1.5, 10.0), 1.0);
}

TEST(TmrFromPdd, HandValue) {
  // Hand value: PDD 66.8 % at depth 10 cm, SSD 100, dm 1.5, Sp(s_d) = 1.005, Sp(s_dm) = 1.0:
  // 0.668 * (110/101.5)^2 * 1.0/1.005 = 0.668 * 1.174501 / 1.005 = 0.780664.
  EXPECT_NEAR(tmr_from_pdd(66.8, 10.0, 100.0, 1.5, 1.005, 1.0), 0.780664, 1e-5);
  // At dmax the relation returns PDD/100 with s_d = s_dm.
  EXPECT_DOUBLE_EQ(tmr_from_pdd(100.0, 1.5, 100.0, 1.5, 1.02, 1.02), 1.0);
}

TEST(TmrFromPdd, RoundTripThroughPdd) {
  for (const double depth : {0.0, 1.5, 5.0, 10.0, 25.0}) {
    for (const double ssd : {80.0, 100.0, 120.0}) {
      const double tmr = tmr_from_pdd(71.3, depth, ssd, 1.5, 1.012, 0.991);
      EXPECT_NEAR(pdd_from_tmr(tmr, depth, ssd, 1.5, 1.012, 0.991), 71.3, 1e-10);
      EXPECT_NEAR(tmr_from_pdd(pdd_from_tmr(0.8, depth, ssd, 1.5, 1.03, 1.0), depth, ssd, 1.5, 1.03, 1.0),
                  0.8, 1e-12);
    }
  }
}

// A consistent pair of tables built by hand from pdd_from_tmr, for the table conversions.
struct Tables {
  Table2D pdd;
  Table2D tmr;
  Table1D sp;
};

// TMR(d, s) = exp(-0.05 (d - 1.5)) (1 + 0.004 s (d - 1.5)) beyond dmax, 1 at dmax; Sp linear.
double tmr_model(double d, double s) {
  return d <= 1.5 ? 1.0 : std::exp(-0.05 * (d - 1.5)) * (1.0 + 0.004 * s * (d - 1.5));
}
double sp_model(double s) { return 1.0 + 0.004 * (s - 10.0); }

Tables consistent_tables() {
  const std::vector<double> depths = {1.5, 5.0, 10.0, 20.0};
  const std::vector<double> fields = {4.0, 6.0, 8.0, 10.0, 12.0, 15.0, 20.0, 25.0};
  std::vector<double> pdd_values;
  std::vector<double> tmr_values;
  for (const double d : depths) {
    for (const double s : fields) {
      const double s_d = field_at_depth_cm(s, 100.0, d);
      const double s_dm = field_at_depth_cm(s, 100.0, 1.5);
      pdd_values.push_back(pdd_from_tmr(tmr_model(d, s_d), d, 100.0, 1.5, sp_model(s_d), sp_model(s_dm)));
      tmr_values.push_back(tmr_model(d, s));
    }
  }
  std::vector<double> sp_fields = {2.0, 4.0, 10.0, 20.0, 40.0};
  std::vector<double> sp_values;
  for (const double s : sp_fields) sp_values.push_back(sp_model(s));
  return {Table2D{"pdd.csv", "pdd", "depth_cm", depths, "field_cm", fields, pdd_values},
          Table2D{"tmr.csv", "tmr", "depth_cm", depths, "field_cm", fields, tmr_values},
          Table1D{"sp.csv", "sp", "field_cm", sp_fields, sp_values}};
}

TEST(DeriveTmrTable, RecoversTheTmrThatMadeThePdd) {
  const Tables t = consistent_tables();
  const DerivedTable derived = derive_tmr_table(t.pdd, t.sp, 100.0, 1.5, {6.0, 10.0, 15.0}, "out.csv");
  ASSERT_EQ(derived.table.rows().size(), 4u);
  ASSERT_EQ(derived.table.columns().size(), 3u);
  for (std::size_t r = 0; r < derived.table.rows().size(); ++r) {
    for (std::size_t c = 0; c < 3; ++c) {
      const double d = derived.table.rows()[r];
      const double s = derived.table.columns()[c];
      // Linear interpolation of PDD in field between nodes: agreement within 0.1 %.
      EXPECT_NEAR(derived.table.cell(r, c), tmr_model(d, s), 0.001 * tmr_model(d, s)) << d << " " << s;
      EXPECT_FALSE(derived.extrapolated[r * 3 + c]);
    }
  }
  EXPECT_EQ(derived.extrapolated_count(), 0u);
}

TEST(DeriveTmrTable, MarksCellsThatNeededExtrapolation) {
  const Tables t = consistent_tables();
  // A 4 cm field at any depth below the surface comes from less than 4 cm at the surface, below
  // the PDD table's smallest column; 10 cm fields stay inside.
  const DerivedTable derived = derive_tmr_table(t.pdd, t.sp, 100.0, 1.5, {4.0, 10.0}, "out.csv");
  for (std::size_t r = 0; r < derived.table.rows().size(); ++r) {
    EXPECT_TRUE(derived.extrapolated[2 * r]) << derived.table.rows()[r];
    EXPECT_FALSE(derived.extrapolated[2 * r + 1]) << derived.table.rows()[r];
  }
  EXPECT_EQ(derived.extrapolated_count(), derived.table.rows().size());
}

TEST(RescalePddTable, MultipliesEveryRowByItsFFactor) {
  const Tables t = consistent_tables();
  const Table2D rescaled = rescale_pdd_table(t.pdd, 100.0, 120.0, 1.5, "pdd120.csv");
  for (std::size_t r = 0; r < t.pdd.rows().size(); ++r) {
    const double f = mayneord_f_factor(120.0, 100.0, 1.5, t.pdd.rows()[r]);
    for (std::size_t c = 0; c < t.pdd.columns().size(); ++c)
      EXPECT_DOUBLE_EQ(rescaled.cell(r, c), f * t.pdd.cell(r, c));
  }
  EXPECT_DOUBLE_EQ(rescaled.cell(0, 0), t.pdd.cell(0, 0));  // dmax row unchanged
  EXPECT_GT(rescaled.cell(3, 3), t.pdd.cell(3, 3));         // deeper rows rise at a longer SSD
}

TEST(CompareTmr, ConsistentTablesAgreeAndADamagedNodeStandsOut) {
  Tables t = consistent_tables();
  auto comparisons = compare_tmr(t.tmr, t.pdd, t.sp, 100.0, 1.5, 1.5);
  std::size_t compared = 0;
  for (const auto& c : comparisons) {
    if (c.extrapolated) continue;
    ++compared;
    EXPECT_LT(std::abs(c.difference_percent), 0.1) << c.depth_cm << " " << c.field_at_depth_cm;
  }
  EXPECT_GT(compared, 20u);

  // Raise one measured TMR node by 2 %: exactly that node differs by about +2 %.
  std::vector<double> values;
  for (std::size_t r = 0; r < t.tmr.rows().size(); ++r)
    for (std::size_t c = 0; c < t.tmr.columns().size(); ++c)
      values.push_back(t.tmr.cell(r, c) * ((r == 2 && c == 3) ? 1.02 : 1.0));
  const Table2D damaged{"tmr.csv", "tmr", "depth_cm", t.tmr.rows(), "field_cm", t.tmr.columns(), values};
  comparisons = compare_tmr(damaged, t.pdd, t.sp, 100.0, 1.5, 1.5);
  for (const auto& c : comparisons) {
    if (c.row_index == 2 && c.column_index == 3) {
      EXPECT_NEAR(c.difference_percent, 2.0, 0.1);
      EXPECT_DOUBLE_EQ(c.depth_cm, 10.0);
      EXPECT_DOUBLE_EQ(c.field_at_depth_cm, 10.0);
    } else if (!c.extrapolated) {
      EXPECT_LT(std::abs(c.difference_percent), 0.1);
    }
  }
}

TEST(CompareTmr, SkipsDepthsShallowerThanAsked) {
  const Tables t = consistent_tables();
  for (const auto& c : compare_tmr(t.tmr, t.pdd, t.sp, 100.0, 1.5, 5.0)) EXPECT_GE(c.depth_cm, 5.0);
}

}  // namespace
}  // namespace countersign::beamdata
