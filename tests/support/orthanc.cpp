#include "support/orthanc.hpp"

#include "support/paths.hpp"

#include <arpa/inet.h>
#include <fcntl.h>
#include <netinet/in.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <fstream>
#include <sstream>
#include <thread>

extern char** environ;

namespace countersign::test {

std::uint16_t free_tcp_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  ::bind(fd, reinterpret_cast<const sockaddr*>(&address), sizeof address);
  socklen_t length = sizeof address;
  ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length);
  ::close(fd);
  return ntohs(address.sin_port);
}

namespace {

std::string json_string(const std::string& text) {
  std::string quoted = "\"";
  for (const char c : text) quoted += (c == '"' || c == '\\') ? std::string{"\\"} + c : std::string(1, c);
  return quoted + "\"";
}

std::string configuration(const std::filesystem::path& storage, std::uint16_t http_port,
                          std::uint16_t dicom_port, const std::string& ae_title,
                          const std::vector<OrthancPeer>& peers) {
  std::ostringstream modalities;
  for (std::size_t i = 0; i < peers.size(); ++i) {
    modalities << (i ? ",\n" : "") << "    " << json_string(peers[i].name)
               << ": {\"AET\": " << json_string(peers[i].ae_title)
               << ", \"Host\": \"127.0.0.1\", \"Port\": " << peers[i].port << "}";
  }
  std::ostringstream config;
  config << "{\n"
         << "  \"Name\": \"Fernhollow test archive (invented)\",\n"
         << "  \"StorageDirectory\": " << json_string(storage.string()) << ",\n"
         << "  \"IndexDirectory\": " << json_string(storage.string()) << ",\n"
         << "  \"Plugins\": [],\n"
         << "  \"HttpServerEnabled\": true, \"HttpPort\": " << http_port << ",\n"
         << "  \"RemoteAccessAllowed\": false, \"AuthenticationEnabled\": false,\n"
         << "  \"DicomServerEnabled\": true, \"DicomAet\": " << json_string(ae_title)
         << ", \"DicomPort\": " << dicom_port << ",\n"
         << "  \"DicomCheckCalledAETitle\": true, \"DicomCheckModalityHost\": true,\n"
         << "  \"DicomAlwaysAllowEcho\": false, \"DicomAlwaysAllowStore\": false,\n"
         << "  \"DicomScuTimeout\": 10, \"DicomAssociationCloseDelay\": 0,\n"
         << "  \"SaveJobs\": false, \"ConcurrentJobs\": 1,\n"
         << "  \"DicomModalities\": {\n"
         << modalities.str() << "\n  }\n"
         << "}\n";
  return config.str();
}

std::string slurp(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

}  // namespace

std::unique_ptr<OrthancUnderTest> OrthancUnderTest::start(const std::filesystem::path& dir,
                                                          const std::vector<OrthancPeer>& peers,
                                                          std::string& error, std::uint16_t dicom_port) {
  if (::access(orthanc_binary, X_OK) != 0) {
    error =
        std::string{orthanc_binary} + " is not installed (Debian package orthanc; bash tools/install-deps)";
    return nullptr;
  }
  std::unique_ptr<OrthancUnderTest> orthanc{new OrthancUnderTest()};
  orthanc->dir_ = dir;
  orthanc->http_port_ = free_tcp_port();
  orthanc->dicom_port_ = dicom_port != 0 ? dicom_port : free_tcp_port();
  std::filesystem::create_directories(dir / "storage");
  const auto config_file = dir / "orthanc.json";
  std::ofstream(config_file) << configuration(dir / "storage", orthanc->http_port_, orthanc->dicom_port_,
                                              orthanc->ae_title_, peers);

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
  const std::string log = (dir / "orthanc.log").string();
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, log.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
  posix_spawn_file_actions_adddup2(&actions, STDOUT_FILENO, STDERR_FILENO);
  std::string binary = orthanc_binary;
  std::string config = config_file.string();
  char* argv[] = {binary.data(), config.data(), nullptr};
  const int spawned = ::posix_spawn(&orthanc->pid_, orthanc_binary, &actions, nullptr, argv, environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) {
    orthanc->pid_ = -1;
    error = "cannot start Orthanc";
    return nullptr;
  }
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds{60};
  while (std::chrono::steady_clock::now() < deadline) {
    bool ok = false;
    orthanc->get("/system", &ok);
    if (ok) return orthanc;
    int status = 0;
    if (::waitpid(orthanc->pid_, &status, WNOHANG) == orthanc->pid_) {
      orthanc->pid_ = -1;
      error = "Orthanc stopped at start: " + slurp(dir / "orthanc.log");
      return nullptr;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds{200});
  }
  error = "Orthanc did not answer within 60 s: " + orthanc->log();
  return nullptr;
}

OrthancUnderTest::~OrthancUnderTest() {
  if (pid_ <= 0) return;
  ::kill(pid_, SIGTERM);
  int status = 0;
  for (int i = 0; i < 300 && ::waitpid(pid_, &status, WNOHANG) == 0; ++i) {
    std::this_thread::sleep_for(std::chrono::milliseconds{100});
  }
  if (::waitpid(pid_, &status, WNOHANG) == 0) {
    ::kill(pid_, SIGKILL);
    ::waitpid(pid_, &status, 0);
  }
}

std::string OrthancUnderTest::get(const std::string& path, bool* ok) const {
  const auto result = run_command("curl -sS -f --max-time 30 " +
                                  quote("http://127.0.0.1:" + std::to_string(http_port_) + path));
  if (ok != nullptr) *ok = result.exit_code == 0;
  return result.exit_code == 0 ? result.out : std::string{};
}

std::string OrthancUnderTest::post(const std::string& path, const std::string& body, bool* ok) const {
  const auto result = run_command("curl -sS -f --max-time 60 -X POST --data-binary " + quote(body) + " " +
                                  quote("http://127.0.0.1:" + std::to_string(http_port_) + path));
  if (ok != nullptr) *ok = result.exit_code == 0;
  return result.exit_code == 0 ? result.out : result.err;
}

std::string OrthancUnderTest::post_file(const std::string& path, const std::filesystem::path& file,
                                        bool* ok) const {
  const auto result = run_command("curl -sS -f --max-time 60 -X POST --data-binary @" + quote(file.string()) +
                                  " " + quote("http://127.0.0.1:" + std::to_string(http_port_) + path));
  if (ok != nullptr) *ok = result.exit_code == 0;
  return result.exit_code == 0 ? result.out : result.err;
}

std::string OrthancUnderTest::log() const { return slurp(dir_ / "orthanc.log"); }

}  // namespace countersign::test
