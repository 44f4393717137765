#include <countersign/service/history.hpp>
#include <countersign/service/trend.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>
#include <sys/stat.h>

#include <cmath>
#include <filesystem>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;

class HistoryTest : public ::testing::Test {
 protected:
  void SetUp() override { dir_ = test::make_temp_dir("countersign-history"); }
  void TearDown() override { fs::remove_all(dir_); }

  static NewCheck make_check(const std::string& uid, const std::string& hash, PlanVerdict verdict,
                             std::vector<BeamOutcome> beams) {
    NewCheck check;
    check.content_sha256 = hash;
    check.source_name = uid + ".dcm";
    check.result_file = "/results/" + uid + ".json";
    check.software_version = "0.1.0";
    check.outcome.sop_instance_uid = uid;
    check.outcome.patient_id = "FERN-DEMO-001";  // invented
    check.outcome.plan_label = "DEMO";
    check.outcome.verdict = verdict;
    check.outcome.beamdata_sha256 = std::string(64, 'b');
    check.outcome.beams = std::move(beams);
    return check;
  }

  static BeamOutcome beam(int number, std::string machine, double energy_mv, std::string technique,
                          BeamVerdict verdict, std::optional<double> deviation_percent) {
    BeamOutcome b;
    b.beam_number = number;
    b.beam_name = "Field " + std::to_string(number);
    b.machine = std::move(machine);
    b.energy_mv = energy_mv;
    b.technique = std::move(technique);
    b.verdict = verdict;
    b.deviation_percent = deviation_percent;
    b.tolerance_percent = deviation_percent ? std::optional<double>{5.0} : std::nullopt;
    if (!deviation_percent) b.reason = "unknown_energy";
    return b;
  }

  fs::path dir_;
};

TEST_F(HistoryTest, CreatesThePrivateDatabaseAndFindsARecordByContent) {
  const fs::path file = dir_ / "history.sqlite";
  auto history = History::open(file, HistoryAccess::read_write);
  ASSERT_TRUE(history) << history.error().message();
  struct stat info {};
  ASSERT_EQ(::stat(file.c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0640U);

  const auto stored = history->record(
      make_check("2.25.1", "h1", PlanVerdict::within_tolerance,
                 {beam(1, "FERN-LINAC-1", 6.0, "isocentric", BeamVerdict::within_tolerance, 1.25),
                  beam(2, "FERN-LINAC-1", 6.0, "isocentric", BeamVerdict::skipped, std::nullopt)}),
      "2026-12-01T10:00:00Z");
  ASSERT_TRUE(stored) << stored.error().message();
  EXPECT_FALSE(stored->replaces_check_id);

  const auto found = history->find_by_content("h1");
  ASSERT_TRUE(found);
  ASSERT_TRUE(found.value().has_value());
  const CheckRecord& record = *found.value();
  EXPECT_EQ(record.id, stored->id);
  EXPECT_EQ(record.sop_instance_uid, "2.25.1");
  EXPECT_EQ(record.patient_id, "FERN-DEMO-001");
  EXPECT_EQ(record.verdict, PlanVerdict::within_tolerance);
  EXPECT_EQ(record.checked_at_utc, "2026-12-01T10:00:00Z");
  EXPECT_EQ(record.software_version, "0.1.0");
  EXPECT_EQ(record.beamdata_sha256, std::string(64, 'b'));
  ASSERT_EQ(record.beams.size(), 2U);
  EXPECT_EQ(record.beams[0].machine, "FERN-LINAC-1");
  EXPECT_DOUBLE_EQ(record.beams[0].deviation_percent.value(), 1.25);
  EXPECT_EQ(record.beams[1].verdict, BeamVerdict::skipped);
  EXPECT_FALSE(record.beams[1].deviation_percent);

  const auto missing = history->find_by_content("other");
  ASSERT_TRUE(missing);
  EXPECT_FALSE(missing.value().has_value());
}

TEST_F(HistoryTest, SameContentTwiceIsRefusedByTheStore) {
  auto history = History::open(dir_ / "h.sqlite", HistoryAccess::read_write);
  ASSERT_TRUE(history);
  ASSERT_TRUE(
      history->record(make_check("2.25.1", "h1", PlanVerdict::within_tolerance, {}), "2026-12-01T10:00:00Z"));
  // The key (SOP Instance UID, content hash) is unique: a second record of the same check fails.
  EXPECT_FALSE(
      history->record(make_check("2.25.1", "h1", PlanVerdict::within_tolerance, {}), "2026-12-01T10:00:01Z"));
  auto all = history->list(HistoryFilter{});
  ASSERT_TRUE(all);
  EXPECT_EQ(all->size(), 1U);
}

TEST_F(HistoryTest, AReExportWithOtherContentReplacesTheEarlierCheck) {
  auto history = History::open(dir_ / "h.sqlite", HistoryAccess::read_write);
  ASSERT_TRUE(history);
  const auto first = history->record(make_check("2.25.7", "old", PlanVerdict::outside_tolerance, {}),
                                     "2026-12-01T10:00:00Z");
  const auto second =
      history->record(make_check("2.25.7", "new", PlanVerdict::within_tolerance, {}), "2026-12-01T11:00:00Z");
  ASSERT_TRUE(first);
  ASSERT_TRUE(second);
  ASSERT_TRUE(second->replaces_check_id);
  EXPECT_EQ(*second->replaces_check_id, first->id);

  auto current = history->list(HistoryFilter{});
  ASSERT_TRUE(current);
  ASSERT_EQ(current->size(), 1U);
  EXPECT_EQ(current->front().content_sha256, "new");

  HistoryFilter everything;
  everything.superseded = Superseded::include;
  auto all = history->list(everything);
  ASSERT_TRUE(all);
  ASSERT_EQ(all->size(), 2U);
  EXPECT_EQ(all->back().superseded_by_check_id.value(), second->id);
}

TEST_F(HistoryTest, ABatchIsRecordedInOneTransactionInOrderAllOrNothing) {
  // The watcher's group commit: one transaction per batch of plans.
  auto history = History::open(dir_ / "h.sqlite", HistoryAccess::read_write);
  ASSERT_TRUE(history);
  const std::vector<NewCheck> batch{make_check("2.25.20", "a", PlanVerdict::within_tolerance, {}),
                                    make_check("2.25.21", "b", PlanVerdict::outside_tolerance, {}),
                                    make_check("2.25.20", "c", PlanVerdict::within_tolerance, {})};
  const auto stored = history->record_batch(batch, "2026-12-01T10:00:00Z");
  ASSERT_TRUE(stored) << stored.error().message();
  ASSERT_EQ(stored->size(), 3U);
  // A later re-export of the same plan in the same batch replaces the earlier one, as across batches.
  ASSERT_TRUE((*stored)[2].replaces_check_id);
  EXPECT_EQ(*(*stored)[2].replaces_check_id, (*stored)[0].id);
  EXPECT_LT((*stored)[0].id, (*stored)[1].id);

  // A batch with one bad record (the same check again) leaves no trace of the others.
  const std::vector<NewCheck> bad{make_check("2.25.22", "d", PlanVerdict::within_tolerance, {}),
                                  make_check("2.25.21", "b", PlanVerdict::outside_tolerance, {})};
  EXPECT_FALSE(history->record_batch(bad, "2026-12-01T11:00:00Z"));
  auto found = history->find_by_content("d");
  ASSERT_TRUE(found);
  EXPECT_FALSE(found->has_value());
  HistoryFilter everything;
  everything.superseded = Superseded::include;
  auto all = history->list(everything);
  ASSERT_TRUE(all);
  EXPECT_EQ(all->size(), 3U);
}

TEST_F(HistoryTest, FiltersByTimeVerdictPatientAndBeamFields) {
  auto history = History::open(dir_ / "h.sqlite", HistoryAccess::read_write);
  ASSERT_TRUE(history);
  ASSERT_TRUE(history->record(
      make_check("2.25.1", "a", PlanVerdict::within_tolerance,
                 {beam(1, "FERN-LINAC-1", 6.0, "isocentric", BeamVerdict::within_tolerance, 0.5)}),
      "2026-11-30T23:59:59Z"));
  ASSERT_TRUE(history->record(
      make_check("2.25.2", "b", PlanVerdict::outside_tolerance,
                 {beam(1, "FERN-LINAC-1", 15.0, "fixed_ssd", BeamVerdict::outside_tolerance, 6.0)}),
      "2026-12-01T08:00:00Z"));
  ASSERT_TRUE(history->record(
      make_check("2.25.3", "c", PlanVerdict::within_tolerance,
                 {beam(1, "FERN-LINAC-2", 6.0, "isocentric", BeamVerdict::within_tolerance, -0.5)}),
      "2026-12-02T08:00:00Z"));

  HistoryFilter december;
  december.since_utc = "2026-12-01";
  auto got = history->list(december);
  ASSERT_TRUE(got);
  EXPECT_EQ(got->size(), 2U);
  EXPECT_EQ(got->front().sop_instance_uid, "2.25.3");  // newest first

  HistoryFilter first_of_december;
  first_of_december.since_utc = "2026-12-01";
  first_of_december.until_utc = "2026-12-01";
  got = history->list(first_of_december);
  ASSERT_TRUE(got);
  ASSERT_EQ(got->size(), 1U);
  EXPECT_EQ(got->front().sop_instance_uid, "2.25.2");

  HistoryFilter outside;
  outside.verdict = PlanVerdict::outside_tolerance;
  got = history->list(outside);
  ASSERT_TRUE(got);
  ASSERT_EQ(got->size(), 1U);

  HistoryFilter six_mv;
  six_mv.energy_mv = 6.0;
  six_mv.machine = "FERN-LINAC-1";
  got = history->list(six_mv);
  ASSERT_TRUE(got);
  ASSERT_EQ(got->size(), 1U);
  EXPECT_EQ(got->front().sop_instance_uid, "2.25.1");

  HistoryFilter limited;
  limited.limit = 2;
  got = history->list(limited);
  ASSERT_TRUE(got);
  EXPECT_EQ(got->size(), 2U);
}

TEST_F(HistoryTest, ReadOnlyAccessSeesRecordsAndNeedsAnExistingFile) {
  const fs::path file = dir_ / "h.sqlite";
  EXPECT_FALSE(History::open(file, HistoryAccess::read_only));
  {
    auto history = History::open(file, HistoryAccess::read_write);
    ASSERT_TRUE(history);
    ASSERT_TRUE(history->record(make_check("2.25.1", "a", PlanVerdict::within_tolerance, {}),
                                "2026-12-01T10:00:00Z"));
    // A reader while the writer is open (the service keeps running while someone looks).
    auto reader = History::open(file, HistoryAccess::read_only);
    ASSERT_TRUE(reader) << reader.error().message();
    auto got = reader->list(HistoryFilter{});
    ASSERT_TRUE(got) << got.error().message();
    EXPECT_EQ(got->size(), 1U);
  }
  auto reader = History::open(file, HistoryAccess::read_only);
  ASSERT_TRUE(reader) << reader.error().message();
  auto got = reader->list(HistoryFilter{});
  ASSERT_TRUE(got) << got.error().message();
  EXPECT_EQ(got->size(), 1U);
}

TEST_F(HistoryTest, TrendStatisticsPerMachineEnergyAndTechnique) {
  auto history = History::open(dir_ / "h.sqlite", HistoryAccess::read_write);
  ASSERT_TRUE(history);
  // Invented differences 1, 2, 3, 6 % on one beam type (tolerance 5 %, one outside) and one
  // not-checked beam; a second beam type with a single beam.
  const std::vector<double> deviations{1.0, 2.0, 3.0, 6.0};
  for (std::size_t i = 0; i < deviations.size(); ++i) {
    const auto verdict = deviations[i] > 5.0 ? BeamVerdict::outside_tolerance : BeamVerdict::within_tolerance;
    ASSERT_TRUE(history->record(
        make_check("2.25.1" + std::to_string(i), "h" + std::to_string(i), PlanVerdict::within_tolerance,
                   {beam(1, "FERN-LINAC-1", 6.0, "isocentric", verdict, deviations[i]),
                    beam(2, "FERN-LINAC-1", 6.0, "isocentric", BeamVerdict::skipped, std::nullopt)}),
        "2026-12-01T10:00:0" + std::to_string(i) + "Z"));
  }
  ASSERT_TRUE(history->record(
      make_check("2.25.99", "h99", PlanVerdict::not_checked,
                 {beam(1, "FERN-LINAC-1", 6.0, "isocentric", BeamVerdict::not_checked, std::nullopt),
                  beam(2, "FERN-LINAC-1", 10.0, "fixed_ssd", BeamVerdict::within_tolerance, -1.5)}),
      "2026-12-01T10:00:09Z"));

  auto checks = history->list(HistoryFilter{});
  ASSERT_TRUE(checks);
  const auto groups = summarize_trends(*checks, HistoryFilter{});
  ASSERT_EQ(groups.size(), 2U);
  const TrendGroup& six = groups[0];
  EXPECT_EQ(six.machine, "FERN-LINAC-1");
  EXPECT_DOUBLE_EQ(six.energy_mv.value(), 6.0);
  EXPECT_EQ(six.technique, "isocentric");
  EXPECT_EQ(six.checked_beams, 4U);
  EXPECT_EQ(six.not_checked_beams, 1U);  // skipped beams are not counted at all
  EXPECT_EQ(six.outside_tolerance_beams, 1U);
  // Hand-computed: mean (1+2+3+6)/4 = 3; sample SD sqrt((4+1+0+9)/3) = sqrt(14/3).
  EXPECT_DOUBLE_EQ(six.mean_deviation_percent.value(), 3.0);
  EXPECT_NEAR(six.sd_deviation_percent.value(), std::sqrt(14.0 / 3.0), 1e-12);
  EXPECT_DOUBLE_EQ(six.share_outside_tolerance.value(), 0.25);
  EXPECT_DOUBLE_EQ(six.min_deviation_percent.value(), 1.0);
  EXPECT_DOUBLE_EQ(six.max_deviation_percent.value(), 6.0);

  const TrendGroup& ten = groups[1];
  EXPECT_DOUBLE_EQ(ten.energy_mv.value(), 10.0);
  EXPECT_EQ(ten.checked_beams, 1U);
  EXPECT_DOUBLE_EQ(ten.mean_deviation_percent.value(), -1.5);
  EXPECT_FALSE(ten.sd_deviation_percent);  // undefined for one beam

  HistoryFilter only_ssd;
  only_ssd.technique = "fixed_ssd";
  const auto filtered = summarize_trends(*checks, only_ssd);
  ASSERT_EQ(filtered.size(), 1U);
  EXPECT_EQ(filtered[0].technique, "fixed_ssd");
}

}  // namespace
}  // namespace countersign::service
