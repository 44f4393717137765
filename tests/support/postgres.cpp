#include "support/postgres.hpp"

#include <fcntl.h>
#include <grp.h>
#include <pwd.h>
#include <signal.h>
#include <stdlib.h>
#include <sys/prctl.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cstdlib>
#include <fstream>
#include <memory>
#include <sstream>
#include <thread>
#include <vector>

namespace countersign::test {

namespace fs = std::filesystem;

namespace {

// Debian installs the server programs per major version; the newest is taken.
fs::path server_bindir() {
  if (const char* dir = std::getenv("COUNTERSIGN_PG_BINDIR"); dir != nullptr && *dir != '\0') return dir;
  std::vector<fs::path> found;
  std::error_code ec;
  for (const auto& version : fs::directory_iterator{"/usr/lib/postgresql", ec}) {
    if (fs::exists(version.path() / "bin" / "initdb", ec)) found.push_back(version.path() / "bin");
  }
  std::sort(found.begin(), found.end(), [](const fs::path& a, const fs::path& b) {
    return std::stoi("0" + a.parent_path().filename().string()) <
           std::stoi("0" + b.parent_path().filename().string());
  });
  return found.empty() ? fs::path{} : found.back();
}

// PostgreSQL refuses to run as root: as root the server runs as `nobody`.
struct Account {
  bool drop = false;
  uid_t uid = 0;
  gid_t gid = 0;
};

Account server_account() {
  Account account;
  if (::geteuid() != 0) return account;
  if (const passwd* nobody = ::getpwnam("nobody")) {
    account.drop = true;
    account.uid = nobody->pw_uid;
    account.gid = nobody->pw_gid;
  }
  return account;
}

// Starts `argv` with its output in `log`, as `account`; with `die_with_parent`, the kernel sends it
// SIGQUIT (PostgreSQL's immediate shutdown) if this test program dies first.
pid_t spawn(const std::vector<std::string>& argv, const fs::path& log, const Account& account,
            bool die_with_parent) {
  const pid_t parent = ::getpid();
  const pid_t child = ::fork();
  if (child != 0) return child;
  const int out = ::open(log.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0600);
  if (out >= 0) {
    if (account.drop) {
      [[maybe_unused]] const int owned = ::fchown(out, account.uid, account.gid);
    }
    ::dup2(out, STDOUT_FILENO);
    ::dup2(out, STDERR_FILENO);
  }
  if (account.drop &&
      (::setgroups(0, nullptr) != 0 || ::setgid(account.gid) != 0 || ::setuid(account.uid) != 0))
    ::_exit(126);
  if (die_with_parent) {
    ::prctl(PR_SET_PDEATHSIG, SIGQUIT);
    if (::getppid() != parent) ::_exit(1);
  }
  std::vector<char*> args;
  for (const auto& a : argv) args.push_back(const_cast<char*>(a.c_str()));
  args.push_back(nullptr);
  ::execv(args[0], args.data());
  ::_exit(127);
}

int wait_for(pid_t pid) {
  int status = 0;
  if (::waitpid(pid, &status, 0) != pid) return -1;
  return WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
}

std::string tail(const fs::path& file) {
  std::ifstream in(file);
  std::stringstream text;
  text << in.rdbuf();
  const std::string all = text.str();
  return all.size() > 2000 ? all.substr(all.size() - 2000) : all;
}

}  // namespace

PostgresServer* PostgresServer::shared(std::string& error) {
  static std::unique_ptr<PostgresServer> server;
  static std::string failure;
  if (server) return server.get();
  if (!failure.empty()) {
    error = failure;
    return nullptr;
  }
  const fs::path bindir = server_bindir();
  if (bindir.empty() || !fs::exists(bindir / "postgres")) {
    failure =
        "PostgreSQL's server programs were not found (Debian package postgresql; bash tools/install-deps)";
    error = failure;
    return nullptr;
  }
  std::unique_ptr<PostgresServer> started{new PostgresServer};
  // Short and fixed: a Unix socket path must stay under about 100 characters.
  std::string pattern = "/tmp/countersign-pg-XXXXXX";
  if (::mkdtemp(pattern.data()) == nullptr) {
    failure = "cannot make a temporary folder for PostgreSQL";
    error = failure;
    return nullptr;
  }
  started->dir_ = pattern;
  const Account account = server_account();
  if (account.drop && ::chown(started->dir_.c_str(), account.uid, account.gid) != 0) {
    failure = "cannot give the PostgreSQL folder to the user nobody";
    error = failure;
    return nullptr;
  }
  const fs::path data = started->dir_ / "data";
  const int made = wait_for(spawn({(bindir / "initdb").string(), "-D", data.string(), "-U", "postgres",
                                   "--auth=trust", "--no-sync", "-E", "UTF8", "--locale=C"},
                                  started->dir_ / "initdb.log", account, false));
  if (made != 0) {
    failure = "initdb failed (" + std::to_string(made) + "): " + tail(started->dir_ / "initdb.log");
    error = failure;
    return nullptr;
  }
  started->pid_ =
      spawn({(bindir / "postgres").string(), "-D", data.string(), "-k", started->dir_.string(), "-c",
             "listen_addresses=", "-c", "fsync=off", "-c", "shared_buffers=16MB", "-c", "max_connections=60"},
            started->dir_ / "server.log", account, true);
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds{60};
  for (;;) {
    if (started->psql("postgres", "SELECT 1").exit_code == 0) break;
    int status = 0;
    if (::waitpid(started->pid_, &status, WNOHANG) == started->pid_ ||
        std::chrono::steady_clock::now() > deadline) {
      started->pid_ = -1;
      failure = "the PostgreSQL server did not start: " + tail(started->dir_ / "server.log");
      error = failure;
      return nullptr;
    }
    std::this_thread::sleep_for(std::chrono::milliseconds{50});
  }
  server = std::move(started);
  return server.get();
}

PostgresServer::~PostgresServer() {
  if (pid_ > 0) {
    ::kill(pid_, SIGINT);  // fast shutdown
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds{20};
    int status = 0;
    while (::waitpid(pid_, &status, WNOHANG) == 0) {
      if (std::chrono::steady_clock::now() > deadline) {
        ::kill(pid_, SIGKILL);
        ::waitpid(pid_, &status, 0);
        break;
      }
      std::this_thread::sleep_for(std::chrono::milliseconds{20});
    }
  }
  std::error_code ec;
  if (!dir_.empty()) fs::remove_all(dir_, ec);
}

std::string PostgresServer::url(const std::string& database) const {
  return "postgresql:///" + database + "?host=" + dir_.string() + "&user=postgres";
}

CommandOutput PostgresServer::psql(const std::string& database, const std::string& sql) const {
  const fs::path bindir = server_bindir();
  const std::string program = fs::exists(bindir / "psql") ? (bindir / "psql").string() : std::string{"psql"};
  return run_command(quote(program) + " -X -q -A -t -v ON_ERROR_STOP=1 " + quote(url(database)) + " -c " +
                     quote(sql));
}

std::string PostgresServer::create_database(std::string& error) {
  const std::string name = "countersign_test_" + std::to_string(++databases_);
  const auto made = psql("postgres", "CREATE DATABASE " + name);
  if (made.exit_code != 0) {
    error = "cannot create a database: " + made.err;
    return {};
  }
  return url(name);
}

std::string fresh_store_location(const std::string& backend, const fs::path& dir, std::string& error) {
  if (backend == "sqlite") return (dir / "history.sqlite").string();
  PostgresServer* server = PostgresServer::shared(error);
  if (server == nullptr) return {};
  return server->create_database(error);
}

}  // namespace countersign::test
