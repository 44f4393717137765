// The receiver against peers that misbehave, with DCMTK's echoscu and storescu as real clients on
// loopback: a trickling connection, an oversized object, a sender on a host it is not allowed
// from, TLS with certificates made by openssl for the test, the same plan sent again in another
// transfer syntax, the bind address and the association limit. All data is invented.

#include "service/receiver_support.hpp"
#include "service/result_files.hpp"

#include <gtest/gtest.h>

#include <dcmtk/dcmdata/dcdeftag.h>
#include <dcmtk/dcmdata/dcfilefo.h>

#include <sys/socket.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <thread>
#include <vector>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

void require_dcmtk_tools() {
  ASSERT_EQ(test::run_command("command -v storescu >/dev/null && command -v echoscu && command -v dcmconv")
                .exit_code,
            0)
      << "DCMTK's storescu, echoscu and dcmconv are needed (Debian package dcmtk; bash tools/install-deps)";
}

test::CommandOutput echo(const test::ReceiverUnderTest& receiver, const std::string& calling,
                         const std::string& host = "127.0.0.1", const std::string& extra = "") {
  return test::run_command("echoscu -to 10 " + extra + " -aet " + test::quote(calling) + " -aec FERN-CHECK " +
                           host + " " + std::to_string(receiver.port()));
}

test::CommandOutput store(const test::ReceiverUnderTest& receiver, const fs::path& file,
                          const std::string& extra = "") {
  return test::run_command("storescu -v -to 10 " + extra + " -aet FERN-TPS -aec FERN-CHECK 127.0.0.1 " +
                           std::to_string(receiver.port()) + " " + test::quote(file.string()));
}

std::size_t visible_files(const fs::path& dir) {
  std::size_t n = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{dir, ec})
    n += entry.path().filename().string().front() != '.';
  return n;
}

TEST(ReceiverHardening, ATricklingConnectionDelaysNobodyAndIsDroppedAfterTheAcseTimeout) {
  require_dcmtk_tools();
  test::ReceiverUnderTest receiver{"countersign-trickle"};
  auto settings = receiver.settings();
  settings.acse_timeout = 3s;
  ASSERT_EQ(receiver.start(settings), "");

  // A peer that announces an A-ASSOCIATE-RQ PDU of 200 bytes (PS3.8 9.3.2: type 01H, reserved,
  // length) and then sends its body one byte every 200 ms.
  const int trickler = test::connect_tcp("127.0.0.1", receiver.port());
  ASSERT_GE(trickler, 0);
  const unsigned char header[] = {0x01, 0x00, 0x00, 0x00, 0x00, 0xC8};
  ASSERT_EQ(::send(trickler, header, sizeof header, MSG_NOSIGNAL), static_cast<ssize_t>(sizeof header));
  std::atomic<bool> keep_trickling{true};
  std::thread trickle([&] {
    const char byte = 0x00;
    while (keep_trickling && ::send(trickler, &byte, 1, MSG_NOSIGNAL) == 1)
      std::this_thread::sleep_for(200ms);
  });
  std::this_thread::sleep_for(300ms);

  const auto started = std::chrono::steady_clock::now();
  const auto echoed = echo(receiver, "FERN-TPS");
  const auto elapsed = std::chrono::steady_clock::now() - started;
  EXPECT_EQ(echoed.exit_code, 0) << echoed.err << receiver.log();
  // The trickler is still connected; echoscu must not have waited for it (less than the timeout).
  EXPECT_LT(elapsed, 3s) << receiver.log();

  EXPECT_TRUE(
      test::wait_for([&] { return receiver.log_has("no complete association request within 3 s"); }, 10s))
      << receiver.log();
  keep_trickling = false;
  trickle.join();
  ::close(trickler);
}

TEST(ReceiverHardening, AnOversizedObjectIsRefusedWithAFailureStatusAndNotKept) {
  require_dcmtk_tools();
  test::ReceiverUnderTest receiver{"countersign-oversize"};
  auto settings = receiver.settings();
  settings.max_object_bytes = 64 * 1024;
  ASSERT_EQ(receiver.start(settings), "");

  // An invented plan carrying 1 MiB of private data, far over the 64 KiB limit.
  const std::string uid = test::new_dicom_uid();
  const fs::path big = receiver.dir() / "big.dcm";
  ASSERT_TRUE(test::write_demo_rt_plan(big, uid, "FERN-DEMO-090"));
  DcmFileFormat format;
  ASSERT_TRUE(format.loadFile(big.c_str()).good());
  const std::vector<Uint8> filler(1 << 20, 0x5A);
  format.getDataset()->putAndInsertString(DcmTag(0x0011, 0x0010, EVR_LO), "FERNHOLLOW DEMO");
  ASSERT_TRUE(format.getDataset()
                  ->putAndInsertUint8Array(DcmTag(0x0011, 0x1001, EVR_OB), filler.data(),
                                           static_cast<unsigned long>(filler.size()))
                  .good());
  ASSERT_TRUE(format.saveFile(big.c_str(), EXS_LittleEndianExplicit).good());

  const auto stored = store(receiver, big);
  const std::string client = stored.out + stored.err;
  EXPECT_NE(client.find("Refused: OutOfResources"), std::string::npos) << client;
  EXPECT_EQ(client.find("(Success)"), std::string::npos) << client;
  EXPECT_TRUE(receiver.log_has("is larger than the limit of 64 KiB (--max-object-mb)")) << receiver.log();
  std::this_thread::sleep_for(300ms);
  EXPECT_EQ(visible_files(settings.inbox), 0U);
  EXPECT_EQ(receiver.checks(), 0);

  // The association stays usable: a small plan afterwards is stored.
  const fs::path small = receiver.dir() / "small.dcm";
  ASSERT_TRUE(test::write_demo_rt_plan(small, test::new_dicom_uid(), "FERN-DEMO-091"));
  const auto both = test::run_command("storescu -v -nh -to 10 -aet FERN-TPS -aec FERN-CHECK 127.0.0.1 " +
                                      std::to_string(receiver.port()) + " " + test::quote(big.string()) +
                                      " " + test::quote(small.string()));
  EXPECT_NE((both.out + both.err).find("(Success)"), std::string::npos) << both.out << both.err;
  EXPECT_TRUE(test::wait_for([&] { return receiver.checks() == 1; }, 10s)) << receiver.log();
}

TEST(ReceiverHardening, AnAllowedAeTitleFromAnotherHostIsRefused) {
  require_dcmtk_tools();
  {
    // No entry names this host at all: the connection is closed before any DICOM is read.
    test::ReceiverUnderTest receiver{"countersign-host1"};
    auto settings = receiver.settings();
    settings.allowed_senders = {"FERN-TPS@192.0.2.10"};  // a documentation address (RFC 5737)
    ASSERT_EQ(receiver.start(settings), "");
    EXPECT_NE(echo(receiver, "FERN-TPS").exit_code, 0);
    EXPECT_TRUE(test::wait_for([&] { return receiver.log_has("refused connection from 127.0.0.1:"); }, 5s))
        << receiver.log();
    EXPECT_TRUE(receiver.log_has("no allowed sender on this host")) << receiver.log();
  }
  {
    // This host may send as another AE title only: the association is rejected, naming the reason.
    test::ReceiverUnderTest receiver{"countersign-host2"};
    auto settings = receiver.settings();
    settings.allowed_senders = {"FERN-TPS@192.0.2.10", "FERN-QA@127.0.0.1"};
    ASSERT_EQ(receiver.start(settings), "");
    const auto refused = echo(receiver, "FERN-TPS");
    EXPECT_NE(refused.exit_code, 0);
    EXPECT_NE(refused.err.find("Rejected"), std::string::npos) << refused.err;
    EXPECT_TRUE(receiver.log_has("refused association from AE \"FERN-TPS\" at 127.0.0.1:")) << receiver.log();
    EXPECT_TRUE(receiver.log_has("allowed only from 192.0.2.10, not from 127.0.0.1")) << receiver.log();
    EXPECT_EQ(echo(receiver, "FERN-QA").exit_code, 0) << receiver.log();
  }
  {
    // A network and a host name match as expected.
    test::ReceiverUnderTest receiver{"countersign-host3"};
    auto settings = receiver.settings();
    settings.allowed_senders = {"FERN-TPS@127.0.0.0/8", "FERN-QA@localhost"};
    ASSERT_EQ(receiver.start(settings), "");
    EXPECT_EQ(echo(receiver, "FERN-TPS").exit_code, 0) << receiver.log();
    EXPECT_EQ(echo(receiver, "FERN-QA").exit_code, 0) << receiver.log();
  }
}

TEST(ReceiverHardening, ListensOnlyOnTheBindAddress) {
  require_dcmtk_tools();
  {
    test::ReceiverUnderTest receiver{"countersign-bind1"};
    ASSERT_EQ(receiver.start(receiver.settings()), "");  // default: 127.0.0.1 only
    EXPECT_EQ(echo(receiver, "FERN-TPS").exit_code, 0) << receiver.log();
    EXPECT_EQ(test::connect_tcp("127.0.0.2", receiver.port()), -1);
  }
  {
    test::ReceiverUnderTest receiver{"countersign-bind2"};
    auto settings = receiver.settings();
    settings.bind_address = "127.0.0.2";
    ASSERT_EQ(receiver.start(settings), "");
    EXPECT_EQ(echo(receiver, "FERN-TPS", "127.0.0.2").exit_code, 0) << receiver.log();
    EXPECT_EQ(test::connect_tcp("127.0.0.1", receiver.port()), -1);
  }
}

TEST(ReceiverHardening, AssociationsBeyondTheLimitAreRefusedAndLogged) {
  require_dcmtk_tools();
  test::ReceiverUnderTest receiver{"countersign-limit"};
  auto settings = receiver.settings();
  settings.max_associations = 1;
  settings.acse_timeout = 5s;
  ASSERT_EQ(receiver.start(settings), "");
  // An idle connection holds the only slot until its ACSE timeout.
  const int idle = test::connect_tcp("127.0.0.1", receiver.port());
  ASSERT_GE(idle, 0);
  std::this_thread::sleep_for(300ms);
  const auto refused = echo(receiver, "FERN-TPS");
  EXPECT_NE(refused.exit_code, 0);
  EXPECT_TRUE(test::wait_for(
      [&] { return receiver.log_has("refused association from AE \"FERN-TPS\" at 127.0.0.1:"); }, 5s))
      << receiver.log();
  EXPECT_TRUE(receiver.log_has("over --max-associations (1 in progress)")) << receiver.log();
  ::close(idle);
  EXPECT_TRUE(test::wait_for([&] { return echo(receiver, "FERN-TPS").exit_code == 0; }, 10s))
      << receiver.log();
}

TEST(ReceiverHardening, TheSamePlanInAnotherTransferSyntaxIsRecognisedAsTheSamePlan) {
  require_dcmtk_tools();
  test::ReceiverUnderTest receiver{"countersign-resend"};
  ASSERT_EQ(receiver.start(receiver.settings()), "");
  const std::string uid = test::new_dicom_uid();
  const fs::path plan = receiver.dir() / "plan.dcm";
  ASSERT_TRUE(test::write_demo_rt_plan(plan, uid, "FERN-DEMO-092"));
  const fs::path implicit = receiver.dir() / "plan-implicit.dcm";
  const fs::path big_endian = receiver.dir() / "plan-big-endian.dcm";
  ASSERT_EQ(
      test::run_command("dcmconv +ti " + test::quote(plan.string()) + " " + test::quote(implicit.string()))
          .exit_code,
      0);
  ASSERT_EQ(
      test::run_command("dcmconv +tb " + test::quote(plan.string()) + " " + test::quote(big_endian.string()))
          .exit_code,
      0);

  EXPECT_EQ(store(receiver, plan).exit_code, 0);
  ASSERT_TRUE(
      test::wait_for([&] { return fs::exists(test::result_file(receiver.results(), uid, ".json")); }, 10s))
      << receiver.log();
  // Sent again in implicit VR and in big endian (storescu proposes the file's own transfer syntax).
  EXPECT_EQ(store(receiver, implicit, "-xi").exit_code, 0);
  EXPECT_EQ(store(receiver, big_endian, "-xb").exit_code, 0);
  EXPECT_TRUE(test::wait_for(
      [&] {
        const std::string log = receiver.log();
        std::size_t n = 0;
        for (auto at = log.find("already checked"); at != std::string::npos;
             at = log.find("already checked", at + 1))
          ++n;
        return n == 2;
      },
      15s))
      << receiver.log();
  EXPECT_EQ(receiver.checks(), 1) << receiver.log();
  EXPECT_FALSE(receiver.log_has("replaces #")) << receiver.log();
}

}  // namespace
}  // namespace countersign::service
