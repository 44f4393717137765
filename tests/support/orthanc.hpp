#pragma once

// A real PACS for the tests: Debian's Orthanc (/usr/sbin/Orthanc) started with a temporary
// configuration in a temporary folder, its HTTP and DICOM servers on free ports, no plugins, and
// only the DICOM peers the test names (checked by AE title and host). HTTP answers loopback only
// (RemoteAccessAllowed false). Stopped (SIGTERM, then waited for) when the object goes.

#include <sys/types.h>

#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

namespace countersign::test {

inline constexpr const char* orthanc_binary = "/usr/sbin/Orthanc";

// A TCP port free on loopback right now.
[[nodiscard]] std::uint16_t free_tcp_port();

// A DICOM peer Orthanc knows: it may send to Orthanc, and Orthanc may send to it (by `name`).
struct OrthancPeer {
  std::string name;
  std::string ae_title;
  std::uint16_t port = 104;  // where the peer listens, when Orthanc sends to it
};

class OrthancUnderTest {
 public:
  // Starts Orthanc in `dir` (created) and waits until its REST API answers (up to 60 s). A port of
  // 0 picks a free one. On failure returns null and says why in `error`.
  static std::unique_ptr<OrthancUnderTest> start(const std::filesystem::path& dir,
                                                 const std::vector<OrthancPeer>& peers, std::string& error,
                                                 std::uint16_t dicom_port = 0);
  OrthancUnderTest(const OrthancUnderTest&) = delete;
  OrthancUnderTest& operator=(const OrthancUnderTest&) = delete;
  ~OrthancUnderTest();

  [[nodiscard]] std::uint16_t dicom_port() const { return dicom_port_; }
  [[nodiscard]] const std::string& ae_title() const { return ae_title_; }

  // REST calls through curl; the body of the answer, or "" with `ok` false on an HTTP error.
  std::string get(const std::string& path, bool* ok = nullptr) const;
  std::string post(const std::string& path, const std::string& body, bool* ok = nullptr) const;
  std::string post_file(const std::string& path, const std::filesystem::path& file, bool* ok = nullptr) const;
  // Orthanc's own log so far.
  [[nodiscard]] std::string log() const;

 private:
  OrthancUnderTest() = default;
  std::filesystem::path dir_;
  pid_t pid_ = -1;
  std::uint16_t http_port_ = 0;
  std::uint16_t dicom_port_ = 0;
  std::string ae_title_ = "FERN-PACS";
};

}  // namespace countersign::test
