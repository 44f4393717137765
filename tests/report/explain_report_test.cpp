// The sentences `explain` prints for the sensitivity search, from the engine's numbers.

#include <countersign/report/explain_report.hpp>

#include <gtest/gtest.h>

namespace countersign::report {
namespace {

TEST(ReconciliationSentence, ChangeFoundWithItsValues) {
  engine::Reconciliation r;
  r.quantity = engine::SensitivityQuantity::ssd;
  r.baseline_cm = 90.0;
  r.change_cm = -2.051185;
  EXPECT_EQ(
      reconciliation_sentence(r),
      "an SSD change of -2.05 cm (90.00 -> 87.95 cm) alone would make the computed dose equal the planned "
      "dose");
  r.extrapolated = true;
  EXPECT_NE(reconciliation_sentence(r).find("; that value lies outside the beam-data tables"),
            std::string::npos);
}

TEST(ReconciliationSentence, NoChangeInTheSearchedRange) {
  engine::Reconciliation r;
  r.quantity = engine::SensitivityQuantity::depth;
  r.search_min_change_cm = -9.9;
  r.search_max_change_cm = 10.0;
  EXPECT_EQ(reconciliation_sentence(r),
            "no depth change between -9.90 cm and +10.00 cm reconciles the two doses");
}

}  // namespace
}  // namespace countersign::report
