#pragma once

// A throwaway PostgreSQL server for the tests: Debian's `postgresql` package (initdb and postgres of
// /usr/lib/postgresql/<version>/bin, or COUNTERSIGN_PG_BINDIR), a cluster made in a temporary folder,
// reachable only through a Unix socket in that folder (no TCP), stopped and removed when the test
// program ends (and by the kernel, with SIGQUIT, if the program dies first). As root, the server
// runs as the unprivileged user `nobody`, as PostgreSQL requires. Each test takes a database of its
// own. A test that needs it fails, never skips, when PostgreSQL is missing.

#include "support/paths.hpp"

#include <sys/types.h>

#include <filesystem>
#include <string>

namespace countersign::test {

class PostgresServer {
 public:
  // The server of this test program, started at first use; null with `error` saying why.
  static PostgresServer* shared(std::string& error);

  PostgresServer(const PostgresServer&) = delete;
  PostgresServer& operator=(const PostgresServer&) = delete;
  ~PostgresServer();

  // A new empty database; returns its connection URI (libpq syntax), or "" with `error` set.
  std::string create_database(std::string& error);
  // The connection URI of an existing database.
  [[nodiscard]] std::string url(const std::string& database) const;
  // Runs SQL with psql in `database` (as the superuser); output and exit code.
  [[nodiscard]] CommandOutput psql(const std::string& database, const std::string& sql) const;
  [[nodiscard]] const std::filesystem::path& socket_dir() const { return dir_; }

 private:
  PostgresServer() = default;
  std::filesystem::path dir_;
  pid_t pid_ = -1;
  int databases_ = 0;
};

// For parameterised tests over both stores: the location of a fresh store of `backend` ("sqlite":
// a file in `dir`; "postgresql": a new database of the shared server). "" with `error` set.
std::string fresh_store_location(const std::string& backend, const std::filesystem::path& dir,
                                 std::string& error);

}  // namespace countersign::test
