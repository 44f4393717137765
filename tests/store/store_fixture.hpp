#pragma once

// One fixture for the store's behaviour tests, run against both backends: an SQLite file in a
// temporary folder, and a fresh database of a throwaway PostgreSQL server (tests/support/postgres).
// Names, UIDs and patients are invented (Fernhollow Radiotherapy Unit demo scenario).

#include <countersign/store/store.hpp>

#include "support/paths.hpp"
#include "support/postgres.hpp"

#include <gtest/gtest.h>

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace countersign::store {

class StoreTest : public ::testing::TestWithParam<std::string> {
 protected:
  void SetUp() override {
    dir_ = test::make_temp_dir("countersign-store");
    std::string error;
    location_ = test::fresh_store_location(GetParam(), dir_, error);
    ASSERT_FALSE(location_.empty()) << error;
  }
  void TearDown() override { std::filesystem::remove_all(dir_); }

  [[nodiscard]] std::unique_ptr<Store> open(Access access = Access::read_write) const {
    auto store = Store::open(StoreLocation::parse(location_), access);
    EXPECT_TRUE(store) << (store ? "" : store.error().message());
    return store ? std::move(store.value()) : nullptr;
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

  // A check with a reserved id, files named as the services name them.
  static NewCheck make_check(Store& store, const std::string& uid, const std::string& content,
                             PlanVerdict verdict, std::vector<BeamOutcome> beams = {}) {
    NewCheck check;
    const auto ids = store.reserve_check_ids(1);
    EXPECT_TRUE(ids);
    check.id = ids ? ids->front() : 0;
    check.sop_instance_uid = uid;
    check.content_sha256 = content;
    check.patient_id = "FERN-DEMO-001";  // invented
    check.plan_label = "DEMO";
    check.verdict = verdict;
    check.beams = std::move(beams);
    check.software_version = "0.1.0";
    check.source_name = "RP." + uid + ".dcm";
    check.station = "fern-checker-1";
    check.results_folder = "/var/lib/countersign/results";
    check.files.result_json = uid + "/" + std::to_string(check.id) + ".json";
    check.files.record_html = uid + "/" + std::to_string(check.id) + ".html";
    check.files.plan = "plans/" + uid + ".0123456789abcdef.dcm";
    check.hashes.plan_sha256 = std::string(64, 'p');
    check.hashes.beamdata_sha256 = std::string(64, 'b');
    check.hashes.policy_sha256 = std::string(64, 'c');
    check.hashes.result_sha256 = std::string(64, 'r');
    check.hashes.record_sha256 = std::string(64, 'h');
    return check;
  }

  static Recorded record_one(Store& store, const NewCheck& check,
                             const std::string& at = "2026-12-01T10:00:00Z") {
    auto recorded = store.record_checks({check}, at);
    EXPECT_TRUE(recorded) << (recorded ? "" : recorded.error().message());
    return recorded ? recorded->front() : Recorded{};
  }

  std::filesystem::path dir_;
  std::string location_;
};

}  // namespace countersign::store
