#include <countersign/service/program_runner.hpp>

#include <countersign/service/unique_fd.hpp>

#include <fcntl.h>
#include <poll.h>
#include <signal.h>
#include <spawn.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <optional>
#include <sstream>

extern char** environ;

namespace countersign::service {

namespace {

constexpr std::size_t max_output_bytes = 4096;

Error usage(std::string_view option, const std::string& detail) {
  return Error{ErrorKind::usage, "", std::string{option}, "", detail};
}

bool executable(const std::string& path) {
  struct stat info {};
  return ::stat(path.c_str(), &info) == 0 && S_ISREG(info.st_mode) && ::access(path.c_str(), X_OK) == 0;
}

std::string describe(int status) {
  if (WIFEXITED(status)) return "exit status " + std::to_string(WEXITSTATUS(status));
  if (WIFSIGNALED(status)) return "killed by signal " + std::to_string(WTERMSIG(status));
  return "ended with status " + std::to_string(status);
}

}  // namespace

Expected<std::vector<std::string>> split_command_words(std::string_view text, std::string_view option) {
  std::vector<std::string> words;
  std::string word;
  bool in_word = false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (c == ' ' || c == '\t' || c == '\n') {
      if (in_word) words.push_back(std::move(word));
      word.clear();
      in_word = false;
      continue;
    }
    in_word = true;
    if (c == '\\') {
      if (++i == text.size()) return usage(option, "the command ends with a lone backslash");
      word += text[i];
    } else if (c == '\'') {
      const auto end = text.find('\'', i + 1);
      if (end == std::string_view::npos) return usage(option, "a ' quote of the command is not closed");
      word.append(text.substr(i + 1, end - i - 1));
      i = end;
    } else if (c == '"') {
      for (++i;; ++i) {
        if (i >= text.size()) return usage(option, "a \" quote of the command is not closed");
        if (text[i] == '"') break;
        if (text[i] == '\\' && i + 1 < text.size() && (text[i + 1] == '"' || text[i + 1] == '\\')) ++i;
        word += text[i];
      }
    } else {
      word += c;
    }
  }
  if (in_word) words.push_back(std::move(word));
  if (words.empty()) return usage(option, "the command is empty");
  return words;
}

Expected<std::string> find_program(const std::string& name, std::string_view option) {
  if (name.find('/') != std::string::npos) {
    if (executable(name)) return name;
    return usage(option, "\"" + name + "\" is not an executable file");
  }
  const char* path = std::getenv("PATH");
  std::istringstream folders{path == nullptr ? std::string{"/usr/bin:/bin"} : std::string{path}};
  for (std::string folder; std::getline(folders, folder, ':');) {
    const std::string candidate = (folder.empty() ? std::string{"."} : folder) + "/" + name;
    if (executable(candidate)) return candidate;
  }
  return usage(option, "no program \"" + name + "\" on PATH");
}

ProgramOutcome run_program(const std::vector<std::string>& argv,
                           const std::vector<std::pair<std::string, std::string>>& environment,
                           std::chrono::seconds timeout, const std::atomic<bool>* cancel) {
  ProgramOutcome outcome;
  if (argv.empty()) {
    outcome.how = "cannot start: no program";
    return outcome;
  }
  int pipe_fds[2] = {-1, -1};
  if (::pipe2(pipe_fds, O_CLOEXEC) != 0) {
    outcome.how = std::string{"cannot start: "} + std::strerror(errno);
    return outcome;
  }
  UniqueFd read_end{pipe_fds[0]};
  UniqueFd write_end{pipe_fds[1]};

  std::vector<std::string> variables;
  for (char** variable = environ; *variable != nullptr; ++variable) variables.emplace_back(*variable);
  for (const auto& [name, value] : environment) variables.push_back(name + "=" + value);
  std::vector<char*> env;
  for (auto& v : variables) env.push_back(v.data());
  env.push_back(nullptr);
  std::vector<std::string> args = argv;
  std::vector<char*> arg_pointers;
  for (auto& a : args) arg_pointers.push_back(a.data());
  arg_pointers.push_back(nullptr);

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
  posix_spawn_file_actions_adddup2(&actions, write_end.get(), STDOUT_FILENO);
  posix_spawn_file_actions_adddup2(&actions, write_end.get(), STDERR_FILENO);
  // The service blocks SIGTERM and SIGINT in every thread (it reads them from a signalfd): the
  // program gets a clean mask and default handlers, and a process group of its own.
  posix_spawnattr_t attributes;
  posix_spawnattr_init(&attributes);
  sigset_t none;
  sigemptyset(&none);
  sigset_t defaults;
  sigemptyset(&defaults);
  for (const int signal : {SIGTERM, SIGINT, SIGPIPE, SIGHUP, SIGQUIT}) sigaddset(&defaults, signal);
  posix_spawnattr_setsigmask(&attributes, &none);
  posix_spawnattr_setsigdefault(&attributes, &defaults);
  posix_spawnattr_setpgroup(&attributes, 0);
  posix_spawnattr_setflags(&attributes,
                           POSIX_SPAWN_SETSIGMASK | POSIX_SPAWN_SETSIGDEF | POSIX_SPAWN_SETPGROUP);
  pid_t pid = -1;
  const int spawned =
      ::posix_spawn(&pid, arg_pointers[0], &actions, &attributes, arg_pointers.data(), env.data());
  posix_spawn_file_actions_destroy(&actions);
  posix_spawnattr_destroy(&attributes);
  write_end = UniqueFd{};
  if (spawned != 0) {
    outcome.how = std::string{"cannot start: "} + std::strerror(spawned);
    return outcome;
  }
  outcome.started = true;

  using Clock = std::chrono::steady_clock;
  const auto deadline = Clock::now() + timeout;
  std::optional<Clock::time_point> killed_at;
  bool open = true;
  int status = 0;
  for (;;) {
    const pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid) break;
    const auto now = Clock::now();
    const bool stop = now >= deadline || (cancel != nullptr && cancel->load());
    if (stop && !killed_at) {
      ::kill(-pid, SIGTERM);
      killed_at = now;
      outcome.how = now >= deadline ? "stopped after " + std::to_string(timeout.count()) + " s" : "stopped";
    } else if (killed_at && now - *killed_at > std::chrono::seconds{5}) {
      ::kill(-pid, SIGKILL);
    }
    if (open) {
      pollfd polled{read_end.get(), POLLIN, 0};
      if (::poll(&polled, 1, 100) > 0) {
        char buffer[1024];
        const ssize_t got = ::read(read_end.get(), buffer, sizeof buffer);
        if (got <= 0) {
          open = false;
        } else if (outcome.output.size() < max_output_bytes) {
          outcome.output.append(buffer, static_cast<std::size_t>(got));
        }
      }
    } else {
      ::poll(nullptr, 0, 50);
    }
  }
  if (outcome.output.size() > max_output_bytes) outcome.output.resize(max_output_bytes);
  if (!killed_at) outcome.how = describe(status);
  outcome.succeeded = !killed_at && WIFEXITED(status) && WEXITSTATUS(status) == 0;
  return outcome;
}

}  // namespace countersign::service
