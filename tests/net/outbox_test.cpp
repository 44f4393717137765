// The durable outbox with a stand-in sender: delivered entries leave the queue (their record kept),
// failed attempts are retried later with a doubling delay, rejected objects are kept for a person,
// entries survive a restart, a half-made entry is never seen, and two processes sharing an outbox
// never send one entry twice. The real C-STORE path is tested against Orthanc (tests/cli).

#include <countersign/net/outbox.hpp>

#include "support/paths.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <fstream>
#include <thread>

namespace countersign::net {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

Destination archive() { return Destination::parse("FERN-PACS@127.0.0.1:11112").value(); }

class OutboxTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = test::make_temp_dir("countersign-outbox");
    object_ = dir_ / "object.dcm";
    std::ofstream(object_) << "an object (the outbox does not read it)";
  }
  void TearDown() override { fs::remove_all(dir_); }

  Outbox open(RetryPolicy policy = {}) {
    auto outbox = Outbox::open(dir_ / "outbox", policy);
    EXPECT_TRUE(outbox) << outbox.error().message();
    return std::move(outbox.value());
  }
  OutboxEntry enqueue(Outbox& outbox, const std::string& uid = "2.25.1") {
    auto entry = outbox.enqueue(object_, archive(), uid, "SR of plan 2.25.99");
    EXPECT_TRUE(entry) << entry.error().message();
    return entry.value();
  }

  fs::path dir_;
  fs::path object_;
};

Sender always(SendResult result, std::atomic<int>* calls = nullptr) {
  return [result, calls](const Destination&, const fs::path& file) {
    if (calls != nullptr) ++*calls;
    EXPECT_TRUE(fs::exists(file));
    return SendOutcome{result, result == SendResult::delivered ? "stored" : "archive down"};
  };
}

TEST_F(OutboxTest, ADeliveredEntryLeavesTheQueueAndItsRecordIsKept) {
  Outbox outbox = open();
  const OutboxEntry entry = enqueue(outbox);
  ASSERT_EQ(outbox.pending().size(), 1U);
  EXPECT_EQ(outbox.pending()[0].destination, archive());
  const auto events = outbox.deliver_due(always(SendResult::delivered));
  ASSERT_EQ(events.size(), 1U);
  EXPECT_EQ(events[0].status, DeliveryStatus::delivered);
  EXPECT_EQ(events[0].entry.attempts, 1);
  EXPECT_TRUE(outbox.pending().empty());
  EXPECT_TRUE(fs::exists(dir_ / "outbox" / "sent" / entry.id / "entry"));
  EXPECT_FALSE(fs::exists(dir_ / "outbox" / "sent" / entry.id / "object.dcm"));
  std::ifstream record(dir_ / "outbox" / "sent" / entry.id / "entry");
  const std::string text((std::istreambuf_iterator<char>(record)), std::istreambuf_iterator<char>());
  EXPECT_NE(text.find("delivered_at_ms="), std::string::npos) << text;
}

TEST_F(OutboxTest, AFailedAttemptIsRetriedLaterWithADoublingDelay) {
  Outbox outbox = open(RetryPolicy{10s, 25s});
  enqueue(outbox);
  const auto start = WallClock::now();
  auto events = outbox.deliver_due(always(SendResult::retry_later), start);
  ASSERT_EQ(events.size(), 1U);
  EXPECT_EQ(events[0].status, DeliveryStatus::queued);
  EXPECT_EQ(events[0].detail, "archive down");
  auto waiting = outbox.pending();
  ASSERT_EQ(waiting.size(), 1U);
  EXPECT_EQ(waiting[0].attempts, 1);
  EXPECT_EQ(waiting[0].last_error, "archive down");
  EXPECT_GE(waiting[0].next_attempt, start + 9s);
  // Not due yet: nothing happens.
  EXPECT_TRUE(outbox.deliver_due(always(SendResult::delivered), start + 5s).empty());
  // Due: tried again; the next delay doubles (20 s), the one after is capped (25 s).
  events = outbox.deliver_due(always(SendResult::retry_later), start + 11s);
  ASSERT_EQ(events.size(), 1U);
  EXPECT_GE(outbox.pending()[0].next_attempt, WallClock::now() + 19s);
  events = outbox.deliver_due(always(SendResult::retry_later), WallClock::now() + 21s);
  ASSERT_EQ(events.size(), 1U);
  EXPECT_LE(outbox.pending()[0].next_attempt, WallClock::now() + 26s);
  EXPECT_EQ(outbox.pending()[0].attempts, 3);
}

TEST_F(OutboxTest, ARejectedObjectIsKeptForAPerson) {
  Outbox outbox = open();
  const OutboxEntry entry = enqueue(outbox);
  const auto events = outbox.deliver_due(always(SendResult::rejected));
  ASSERT_EQ(events.size(), 1U);
  EXPECT_EQ(events[0].status, DeliveryStatus::rejected);
  EXPECT_TRUE(outbox.pending().empty());
  EXPECT_TRUE(fs::exists(dir_ / "outbox" / "failed" / entry.id / "object.dcm"));
  EXPECT_TRUE(fs::exists(dir_ / "outbox" / "failed" / entry.id / "entry"));
}

TEST_F(OutboxTest, EntriesSurviveARestartAndHalfMadeEntriesAreRemoved) {
  {
    Outbox outbox = open();
    enqueue(outbox, "2.25.1");
    enqueue(outbox, "2.25.2");
    std::ignore = outbox.deliver_due(always(SendResult::retry_later));
  }
  // What a crash in the middle of an enqueue leaves: a hidden staging folder.
  fs::create_directories(dir_ / "outbox" / "queue" / ".20260101T000000.000-deadbeef");
  Outbox reopened = open();
  EXPECT_FALSE(fs::exists(dir_ / "outbox" / "queue" / ".20260101T000000.000-deadbeef"));
  const auto waiting = reopened.pending();
  ASSERT_EQ(waiting.size(), 2U);
  EXPECT_EQ(waiting[0].sop_instance_uid, "2.25.1");  // oldest first
  EXPECT_EQ(waiting[1].sop_instance_uid, "2.25.2");
  EXPECT_EQ(waiting[0].attempts, 1);
  const auto events = reopened.deliver_due(always(SendResult::delivered), WallClock::now() + 1h);
  EXPECT_EQ(events.size(), 2U);
  EXPECT_TRUE(reopened.pending().empty());
}

TEST_F(OutboxTest, TwoOutboxesOnOneFolderNeverSendAnEntryTwice) {
  Outbox first = open();
  for (int i = 0; i < 6; ++i) enqueue(first, "2.25." + std::to_string(i));
  Outbox second = open();
  std::atomic<int> calls{0};
  const Sender slow = [&calls](const Destination&, const fs::path&) {
    ++calls;
    std::this_thread::sleep_for(50ms);
    return SendOutcome{SendResult::delivered, "stored"};
  };
  std::thread a([&] { std::ignore = first.deliver_due(slow); });
  std::thread b([&] { std::ignore = second.deliver_due(slow); });
  a.join();
  b.join();
  EXPECT_EQ(calls.load(), 6);
  EXPECT_TRUE(first.pending().empty());
}

TEST_F(OutboxTest, DeliverUntilRetriesWithinTheTimeAndLeavesTheRestQueued) {
  Outbox outbox = open(RetryPolicy{100ms, 400ms});
  enqueue(outbox);
  int attempts = 0;
  const Sender flaky = [&attempts](const Destination&, const fs::path&) {
    return ++attempts < 3 ? SendOutcome{SendResult::retry_later, "archive down"}
                          : SendOutcome{SendResult::delivered, "stored"};
  };
  const auto events = outbox.deliver_until(flaky, std::chrono::steady_clock::now() + 5s);
  ASSERT_EQ(events.size(), 3U);
  EXPECT_EQ(events.back().status, DeliveryStatus::delivered);
  EXPECT_TRUE(outbox.pending().empty());

  // An archive that stays down: the entry is still queued when the time is up.
  enqueue(outbox);
  const auto gave_up =
      outbox.deliver_until(always(SendResult::retry_later), std::chrono::steady_clock::now() + 300ms);
  EXPECT_GE(gave_up.size(), 1U);
  EXPECT_EQ(outbox.pending().size(), 1U);
}

TEST_F(OutboxTest, AnUnreachableArchiveIsWorthRetrying) {
  // A real C-STORE of an invented demo plan to a port nobody listens on.
  const fs::path plan = test::source_dir() / "testdata" / "plans" / "fern_box_4field.dcm";
  const auto outcome = send_file(Destination::parse("FERN-PACS@127.0.0.1:9").value(), plan, ScuSettings{});
  EXPECT_EQ(outcome.result, SendResult::retry_later) << outcome.detail;
  EXPECT_NE(outcome.detail.find("no association"), std::string::npos) << outcome.detail;
  // Something that is not DICOM at all cannot become deliverable by waiting.
  EXPECT_EQ(send_file(Destination::parse("FERN-PACS@127.0.0.1:9").value(), object_, ScuSettings{}).result,
            SendResult::rejected);
}

TEST(Destination, ParsesAeHostAndPort) {
  const auto d = Destination::parse("FERN-PACS@pacs.fernhollow.invalid:11112");
  ASSERT_TRUE(d) << d.error().message();
  EXPECT_EQ(d->ae_title, "FERN-PACS");
  EXPECT_EQ(d->host, "pacs.fernhollow.invalid");
  EXPECT_EQ(d->port, 11112);
  EXPECT_EQ(d->text(), "FERN-PACS@pacs.fernhollow.invalid:11112");
  const auto v6 = Destination::parse("FERN@PACS@[2001:db8::7]:104");
  ASSERT_TRUE(v6) << v6.error().message();
  EXPECT_EQ(v6->ae_title, "FERN@PACS");
  EXPECT_EQ(v6->host, "2001:db8::7");
  EXPECT_EQ(v6->text(), "FERN@PACS@[2001:db8::7]:104");
  for (const char* bad : {"", "FERN-PACS", "FERN-PACS@host", "@host:104", "FERN@host:0", "FERN@host:65536",
                          "FERN@host:12x", "A-TITLE-THAT-IS-TOO-LONG@host:104", "FERN@:104"}) {
    const auto parsed = Destination::parse(bad);
    ASSERT_FALSE(parsed) << bad;
    EXPECT_EQ(parsed.error().attribute, "--send-to");
  }
}

}  // namespace
}  // namespace countersign::net
