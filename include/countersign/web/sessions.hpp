#pragma once

// Who is logged in, and who tried too often. Both tables live in the server's memory only: a
// restart logs everyone out. Thread-safe (the HTTP library answers on several threads).
//
// A session is a random 256-bit token (libsodium randombytes) in an HttpOnly cookie; the table maps
// it to the user, the role, the session's own CSRF token (a second 256-bit random value that every
// POST form carries) and its expiry: idle_timeout after the last request, at most max_age after login.

#include <countersign/web/users.hpp>

#include <chrono>
#include <cstddef>
#include <map>
#include <mutex>
#include <optional>
#include <string>

namespace countersign::web {

using Clock = std::chrono::steady_clock;

// 256 random bits as 64 hex digits.
[[nodiscard]] std::string random_token();

// Compares two strings in time independent of where they differ.
[[nodiscard]] bool same_token(const std::string& a, const std::string& b);

struct Session {
  std::string user;
  Role role = Role::viewer;
  std::string csrf_token;
  Clock::time_point created;
  Clock::time_point last_seen;
};

struct SessionLimits {
  std::chrono::minutes idle_timeout{30};
  std::chrono::hours max_age{12};
};

class SessionTable {
 public:
  explicit SessionTable(SessionLimits limits = {}) : limits_(limits) {}

  // A new session; returns its token.
  [[nodiscard]] std::string open(const std::string& user, Role role, Clock::time_point now);
  // The session of `token`, refreshed, or nullopt when unknown or expired (an expired one is removed).
  [[nodiscard]] std::optional<Session> find(const std::string& token, Clock::time_point now);
  void close(const std::string& token);
  [[nodiscard]] std::size_t size() const;

 private:
  SessionLimits limits_;
  mutable std::mutex mutex_;
  std::map<std::string, Session> sessions_;
};

// Failed logins, counted per user name and per client address: after `max_failures` for a name, or
// `max_failures_per_address` from an address, within `window`, logins for that name (or from that
// address) are refused until the window has passed since the last failure, even with the right
// password. The address allows more: behind a reverse proxy every client has the proxy's address.
struct ThrottleLimits {
  std::size_t max_failures = 5;
  std::size_t max_failures_per_address = 20;
  std::chrono::minutes window{15};
};

class LoginThrottle {
 public:
  explicit LoginThrottle(ThrottleLimits limits = {}) : limits_(limits) {}

  // True when a login for `user` from `address` is refused now.
  [[nodiscard]] bool locked(const std::string& user, const std::string& address, Clock::time_point now);
  // Counts a failure; returns the failures of the user name within the window, this one included.
  std::size_t record_failure(const std::string& user, const std::string& address, Clock::time_point now);
  // A successful login clears the user's count (not the address's).
  void record_success(const std::string& user);
  // How many user names have a count (stale ones go at the next failure).
  [[nodiscard]] std::size_t tracked_names();

 private:
  struct Count {
    std::size_t failures = 0;
    Clock::time_point last;
  };
  [[nodiscard]] bool over(const std::map<std::string, Count>& table, const std::string& key,
                          std::size_t limit, Clock::time_point now) const;
  Count& bump(std::map<std::string, Count>& table, const std::string& key, Clock::time_point now);

  ThrottleLimits limits_;
  std::mutex mutex_;
  std::map<std::string, Count> by_user_;
  std::map<std::string, Count> by_address_;
};

}  // namespace countersign::web
