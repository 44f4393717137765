// The DICOM receiver with DCMTK's own command-line tools (echoscu, storescu) as real peers on the
// loopback interface.

#include <countersign/service/checking_service.hpp>
#include <countersign/service/stop_signals.hpp>
#include <countersign/service/storage_receiver.hpp>

#include "service/dicom_plans.hpp"
#include "service/result_files.hpp"
#include "support/paths.hpp"

#include <arpa/inet.h>
#include <gtest/gtest.h>
#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <functional>
#include <future>
#include <sstream>
#include <thread>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

std::uint16_t free_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  address.sin_port = 0;
  ::bind(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address);
  socklen_t length = sizeof address;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length);
  ::close(fd);
  return ntohs(address.sin_port);
}

bool wait_until(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(20ms);
  }
  return condition();
}

std::size_t count_entries(const fs::path& dir) {
  std::size_t n = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{dir, ec}) {
    if (entry.path().filename().string().front() != '.') ++n;
  }
  return n;
}

class StorageReceiverTest : public ::testing::Test {
 protected:
  void SetUp() override {
    ASSERT_EQ(test::run_command("command -v storescu >/dev/null && command -v echoscu").exit_code, 0)
        << "DCMTK's storescu/echoscu are not installed (Debian package dcmtk; bash tools/install-deps)";
    dir_ = test::make_temp_dir("countersign-receive");
    port_ = free_port();
    ServiceSettings settings;
    settings.inbox = results() / "incoming";
    settings.results = results();
    settings.intake.quiet_period = 1s;
    auto service = CheckingService::open(settings, test::dicom_identity_processor(calls_), log_);
    ASSERT_TRUE(service) << service.error().message();
    service_ = std::move(service.value());
    checker_ = std::thread([this] {
      const int fds[] = {stop_.fd()};
      [[maybe_unused]] const auto summary = service_->run(RunUntil::stopped, fds);
    });
    ReceiverSettings receiver;
    receiver.port = port_;
    receiver.ae_title = "FERN-CHECK";
    receiver.allowed_senders = {"FERN-TPS", "FERN-TPS2"};
    receiver.inbox = settings.inbox;
    auto started = StorageReceiver::start(receiver, log_);
    ASSERT_TRUE(started) << started.error().message();
    receiver_ = std::move(started.value());
  }

  void TearDown() override {
    if (receiver_) receiver_->stop();
    stop_.request();
    if (checker_.joinable()) checker_.join();
    service_.reset();
    if (!dir_.empty()) fs::remove_all(dir_);
  }

  fs::path results() const { return dir_ / "results"; }

  test::CommandOutput echo(const std::string& calling, const std::string& called = "FERN-CHECK") const {
    return test::run_command("echoscu -to 10 -aet " + test::quote(calling) + " -aec " + test::quote(called) +
                             " 127.0.0.1 " + std::to_string(port_));
  }
  test::CommandOutput store(const std::string& calling, const fs::path& file) const {
    return test::run_command("storescu -to 10 -aet " + test::quote(calling) + " -aec FERN-CHECK 127.0.0.1 " +
                             std::to_string(port_) + " " + test::quote(file.string()));
  }
  std::string log_text() const { return log_stream_.str(); }

  fs::path dir_;
  std::uint16_t port_ = 0;
  std::ostringstream log_stream_;
  ServiceLog log_{log_stream_};
  std::shared_ptr<std::atomic<int>> calls_ = std::make_shared<std::atomic<int>>(0);
  std::unique_ptr<CheckingService> service_;
  std::unique_ptr<StorageReceiver> receiver_;
  StopSignal stop_;
  std::thread checker_;
};

TEST_F(StorageReceiverTest, AnAllowedSenderIsAnsweredAndItsPlanIsStoredAndChecked) {
  const auto echoed = echo("FERN-TPS");
  EXPECT_EQ(echoed.exit_code, 0) << echoed.err << log_text();

  const std::string uid = test::new_dicom_uid();
  ASSERT_TRUE(test::write_demo_rt_plan(dir_ / "plan.dcm", uid, "FERN-DEMO-030"));
  const auto stored = store("FERN-TPS", dir_ / "plan.dcm");
  EXPECT_EQ(stored.exit_code, 0) << stored.err << log_text();
  ASSERT_TRUE(wait_until([&] { return fs::exists(test::result_file(results(), uid, ".json")); }, 10s))
      << log_text();
  EXPECT_EQ(calls_->load(), 1);
  EXPECT_NE(log_text().find("received RT Plan " + uid + " from AE \"FERN-TPS\""), std::string::npos)
      << log_text();
  ASSERT_TRUE(wait_until([&] { return count_entries(results() / "incoming") == 0; }, 5s));

  // The checked plan is kept byte for byte as received (read back through DCMTK's own dump tool).
  std::string kept;
  for (const auto& entry : fs::directory_iterator{results() / "plans"}) kept = entry.path().string();
  ASSERT_FALSE(kept.empty());
  const auto dumped = test::run_command("dcmdump +P SOPInstanceUID " + test::quote(kept));
  EXPECT_NE(dumped.out.find(uid), std::string::npos) << dumped.out;

  // Sending the same plan again is received but not checked again.
  const auto again = store("FERN-TPS", dir_ / "plan.dcm");
  EXPECT_EQ(again.exit_code, 0);
  ASSERT_TRUE(wait_until([&] { return log_text().find("already checked") != std::string::npos; }, 10s))
      << log_text();
  EXPECT_EQ(calls_->load(), 1);
}

TEST_F(StorageReceiverTest, AnUnknownCallingAeTitleIsRefused) {
  const auto echoed = echo("INTRUDER");
  EXPECT_NE(echoed.exit_code, 0);
  const std::string uid = test::new_dicom_uid();
  ASSERT_TRUE(test::write_demo_rt_plan(dir_ / "plan.dcm", uid, "FERN-DEMO-031"));
  const auto stored = store("INTRUDER", dir_ / "plan.dcm");
  EXPECT_NE(stored.exit_code, 0);
  EXPECT_NE(stored.err.find("Rejected"), std::string::npos) << stored.err;
  EXPECT_NE(log_text().find("refused association from AE \"INTRUDER\""), std::string::npos) << log_text();
  std::this_thread::sleep_for(300ms);
  EXPECT_EQ(count_entries(results() / "incoming"), 0U);
  EXPECT_FALSE(fs::exists(test::result_file(results(), uid, ".json")));
  EXPECT_EQ(calls_->load(), 0);
}

TEST_F(StorageReceiverTest, AWrongCalledAeTitleIsRefused) {
  const auto echoed = echo("FERN-TPS", "SOMEONE-ELSE");
  EXPECT_NE(echoed.exit_code, 0);
  EXPECT_NE(log_text().find("is not ours"), std::string::npos) << log_text();
}

TEST_F(StorageReceiverTest, AnMrImageIsRefused) {
  // pydicom's bundled MR image as an independent, real DICOM object of another SOP class.
  const fs::path mr = "/usr/lib/python3/dist-packages/pydicom/data/test_files/MR_small.dcm";
  ASSERT_TRUE(fs::exists(mr)) << "python3-pydicom test files not installed (bash tools/install-deps)";
  const auto stored = store("FERN-TPS", mr);
  EXPECT_NE(stored.exit_code, 0) << stored.out << stored.err;
  std::this_thread::sleep_for(300ms);
  EXPECT_EQ(count_entries(results() / "incoming"), 0U);
  EXPECT_EQ(count_entries(results() / "quarantine"), 0U);
  EXPECT_EQ(calls_->load(), 0);
}

TEST_F(StorageReceiverTest, SeveralSendersAtOnceAreAllServed) {
  constexpr int senders = 4;
  constexpr int plans_each = 5;
  std::vector<std::string> uids;
  for (int s = 0; s < senders; ++s) {
    fs::create_directories(dir_ / ("sender" + std::to_string(s)));
    for (int p = 0; p < plans_each; ++p) {
      uids.push_back(test::new_dicom_uid());
      ASSERT_TRUE(
          test::write_demo_rt_plan(dir_ / ("sender" + std::to_string(s)) / ("p" + std::to_string(p) + ".dcm"),
                                   uids.back(), "FERN-DEMO-04" + std::to_string(s)));
    }
  }
  std::vector<std::future<test::CommandOutput>> running;
  for (int s = 0; s < senders; ++s) {
    running.push_back(std::async(std::launch::async, [this, s] {
      return test::run_command("storescu -to 10 +sd -aet FERN-TPS -aec FERN-CHECK 127.0.0.1 " +
                               std::to_string(port_) + " " +
                               test::quote((dir_ / ("sender" + std::to_string(s))).string()));
    }));
  }
  for (auto& r : running) {
    const auto output = r.get();
    EXPECT_EQ(output.exit_code, 0) << output.err;
  }
  const auto all_checked = [&] {
    return std::all_of(uids.begin(), uids.end(), [&](const std::string& uid) {
      return fs::exists(test::result_file(results(), uid, ".json"));
    });
  };
  ASSERT_TRUE(wait_until(all_checked, 20s)) << calls_->load() << "\n" << log_text();
  EXPECT_EQ(calls_->load(), senders * plans_each);
}

TEST(StorageReceiverSettings, RefusesUnusableSettingsWithAClearMessage) {
  std::ostringstream sink;
  ServiceLog log{sink};
  const fs::path dir = test::make_temp_dir("countersign-receive-settings");
  ReceiverSettings settings;
  settings.port = 11112;
  settings.ae_title = "FERN-CHECK";
  settings.inbox = dir / "incoming";
  auto started = StorageReceiver::start(settings, log);
  ASSERT_FALSE(started);
  EXPECT_EQ(started.error().attribute, "--allow-ae");
  settings.allowed_senders = {"A-TITLE-THAT-IS-TOO-LONG"};
  started = StorageReceiver::start(settings, log);
  ASSERT_FALSE(started);
  EXPECT_NE(started.error().message().find("not a valid AE title"), std::string::npos);
  EXPECT_TRUE(is_valid_ae_title("FERN-TPS"));
  EXPECT_FALSE(is_valid_ae_title("    "));
  EXPECT_FALSE(is_valid_ae_title("BACK\\SLASH"));
  fs::remove_all(dir);
}

}  // namespace
}  // namespace countersign::service
