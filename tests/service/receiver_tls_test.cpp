// The receiver over TLS with DCMTK's echoscu and storescu (+tls) as real clients. A throwaway CA,
// a server and a client certificate are made with openssl in the test's temporary folder (invented
// names of the fictional Fernhollow Radiotherapy Unit); they are valid for one day.

#include "service/receiver_support.hpp"
#include "service/result_files.hpp"

#include <gtest/gtest.h>

namespace countersign::service {
namespace {

namespace fs = std::filesystem;
using namespace std::chrono_literals;

// Makes ca.crt, server.{key,crt} and client.{key,crt} in `dir`; false when openssl fails.
bool make_certificates(const fs::path& dir) {
  const std::string d = test::quote(dir.string());
  const std::string script =
      "set -e; cd " + d +
      "; openssl req -x509 -newkey rsa:2048 -nodes -keyout ca.key -out ca.crt -days 1"
      " -subj '/O=Fernhollow Radiotherapy Unit (invented)/CN=Fernhollow test CA' 2>/dev/null"
      "; for who in server client; do"
      " openssl req -newkey rsa:2048 -nodes -keyout $who.key -out $who.csr"
      " -subj \"/O=Fernhollow Radiotherapy Unit (invented)/CN=fern-$who\" 2>/dev/null;"
      " openssl x509 -req -in $who.csr -CA ca.crt -CAkey ca.key -CAcreateserial -out $who.crt -days 1 "
      "2>/dev/null;"
      " done";
  return test::run_command("bash -c " + test::quote(script)).exit_code == 0;
}

class ReceiverTlsTest : public ::testing::Test {
 protected:
  void SetUp() override {
    ASSERT_EQ(test::run_command("command -v openssl && command -v echoscu && command -v storescu").exit_code,
              0)
        << "openssl and DCMTK's echoscu/storescu are needed (bash tools/install-deps)";
    certificates_ = receiver_.dir() / "pki";
    fs::create_directories(certificates_);
    ASSERT_TRUE(make_certificates(certificates_));
    auto settings = receiver_.settings();
    settings.acse_timeout = 5s;
    settings.tls =
        ReceiverTls{certificates_ / "server.crt", certificates_ / "server.key", certificates_ / "ca.crt"};
    ASSERT_EQ(receiver_.start(settings), "");
  }

  [[nodiscard]] std::string tls_client() const {
    return "+tls " + test::quote((certificates_ / "client.key").string()) + " " +
           test::quote((certificates_ / "client.crt").string()) + " +cf " +
           test::quote((certificates_ / "ca.crt").string());
  }
  [[nodiscard]] std::string peer() const {
    return "-aec FERN-CHECK 127.0.0.1 " + std::to_string(receiver_.port());
  }

  test::ReceiverUnderTest receiver_{"countersign-tls"};
  fs::path certificates_;
};

TEST_F(ReceiverTlsTest, EchoAndStoreWithVerifiedCertificates) {
  const auto echoed = test::run_command("echoscu -to 10 " + tls_client() + " -aet FERN-TPS " + peer());
  EXPECT_EQ(echoed.exit_code, 0) << echoed.err << receiver_.log();

  const std::string uid = test::new_dicom_uid();
  const fs::path plan = receiver_.dir() / "plan.dcm";
  ASSERT_TRUE(test::write_demo_rt_plan(plan, uid, "FERN-DEMO-095"));
  const auto stored = test::run_command("storescu -to 10 " + tls_client() + " -aet FERN-TPS " + peer() + " " +
                                        test::quote(plan.string()));
  EXPECT_EQ(stored.exit_code, 0) << stored.err << receiver_.log();
  EXPECT_TRUE(
      test::wait_for([&] { return fs::exists(test::result_file(receiver_.results(), uid, ".json")); }, 10s))
      << receiver_.log();
  EXPECT_TRUE(receiver_.log_has("(TLS)")) << receiver_.log();
}

TEST_F(ReceiverTlsTest, PeersWithoutACertificateOrWithoutTlsAreRefusedAndLogged) {
  // TLS without a client certificate: the handshake fails, because peers must be verified.
  const auto anonymous =
      test::run_command("echoscu -to 10 +tla +cf " + test::quote((certificates_ / "ca.crt").string()) +
                        " -aet FERN-TPS " + peer());
  EXPECT_NE(anonymous.exit_code, 0);
  // Plain TCP to a TLS port.
  const auto plain = test::run_command("echoscu -to 10 -aet FERN-TPS " + peer());
  EXPECT_NE(plain.exit_code, 0);
  EXPECT_TRUE(test::wait_for(
      [&] {
        const std::string log = receiver_.log();
        std::size_t n = 0;
        for (auto at = log.find("TLS handshake failed"); at != std::string::npos;
             at = log.find("TLS handshake failed", at + 1))
          ++n;
        return n >= 2;
      },
      15s))
      << receiver_.log();
  EXPECT_TRUE(receiver_.log_has("dropped connection from 127.0.0.1:")) << receiver_.log();
}

}  // namespace
}  // namespace countersign::service

namespace countersign::service {
namespace {

TEST_F(ReceiverTlsTest, UnusableTlsFilesAreUsageErrorsNamingTheOptionAndFile) {
  std::ostringstream sink;
  ServiceLog log{sink};
  auto settings = receiver_.settings();
  settings.port = test::free_loopback_port();
  settings.tls =
      ReceiverTls{certificates_ / "missing.crt", certificates_ / "server.key", certificates_ / "ca.crt"};
  auto started = StorageReceiver::start(settings, log);
  ASSERT_FALSE(started);
  EXPECT_EQ(started.error().attribute, "--tls-cert");
  EXPECT_NE(started.error().message().find("missing.crt"), std::string::npos);
  // A key that belongs to another certificate.
  settings.tls =
      ReceiverTls{certificates_ / "server.crt", certificates_ / "client.key", certificates_ / "ca.crt"};
  started = StorageReceiver::start(settings, log);
  ASSERT_FALSE(started);
  EXPECT_EQ(started.error().attribute, "--tls-key");
  EXPECT_NE(started.error().message().find("does not match"), std::string::npos) << started.error().message();
}

}  // namespace
}  // namespace countersign::service
