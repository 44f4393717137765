#include "support/serve_process.hpp"

#include "support/paths.hpp"

#include <fcntl.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>
#include <csignal>

#include <fstream>
#include <regex>
#include <sstream>
#include <thread>

extern char** environ;  // NOLINT(readability-redundant-declaration): posix_spawn needs the environment

namespace countersign::test {

ServeProcess::ServeProcess(const std::filesystem::path& program, const std::vector<std::string>& arguments,
                           const std::filesystem::path& scratch)
    : out_(scratch / "serve.out"), err_(scratch / "serve.err") {
  std::vector<std::string> args{program.string(), "serve"};
  args.insert(args.end(), arguments.begin(), arguments.end());
  args.insert(args.end(), {"--listen", "127.0.0.1:0"});
  std::vector<char*> argv;
  for (auto& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, out_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
  posix_spawn_file_actions_addopen(&actions, STDERR_FILENO, err_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
  const int spawned = posix_spawn(&pid_, argv[0], &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) {
    pid_ = -1;
    return;
  }
  const std::regex listening{"listening on (https?)://127\\.0\\.0\\.1:([0-9]+)/"};
  for (int i = 0; i < 200 && port_ == 0; ++i) {
    std::smatch m;
    const std::string text = file_text(out_);
    if (std::regex_search(text, m, listening)) {
      scheme_ = m[1];
      port_ = std::stoi(m[2]);
      break;
    }
    int status = 0;
    if (::waitpid(pid_, &status, WNOHANG) == pid_) {
      pid_ = -1;
      return;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
}

ServeProcess::~ServeProcess() {
  if (pid_ <= 0) return;
  ::kill(pid_, SIGTERM);
  int status = 0;
  for (int i = 0; i < 100; ++i) {
    if (::waitpid(pid_, &status, WNOHANG) == pid_) return;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  ::kill(pid_, SIGKILL);
  ::waitpid(pid_, &status, 0);
}

std::string ServeProcess::output() const { return file_text(out_) + file_text(err_); }
std::string ServeProcess::log() const { return file_text(err_); }

}  // namespace countersign::test
