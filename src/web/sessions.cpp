#include <countersign/web/sessions.hpp>

#include <sodium.h>

#include <array>
#include <stdexcept>

namespace countersign::web {

std::string random_token() {
  if (sodium_init() < 0) throw std::runtime_error("libsodium could not be initialised");
  std::array<unsigned char, 32> bytes{};
  randombytes_buf(bytes.data(), bytes.size());
  std::array<char, 65> hex{};
  sodium_bin2hex(hex.data(), hex.size(), bytes.data(), bytes.size());
  return std::string{hex.data()};
}

bool same_token(const std::string& a, const std::string& b) {
  return a.size() == b.size() && !a.empty() && sodium_memcmp(a.data(), b.data(), a.size()) == 0;
}

std::string SessionTable::open(const std::string& user, Role role, Clock::time_point now) {
  std::string token = random_token();
  const std::scoped_lock lock(mutex_);
  sessions_[token] = Session{user, role, random_token(), now, now};
  return token;
}

std::optional<Session> SessionTable::find(const std::string& token, Clock::time_point now) {
  const std::scoped_lock lock(mutex_);
  // Expired sessions go whenever the table is consulted: it never grows without bound.
  std::erase_if(sessions_, [&](const auto& entry) {
    const Session& s = entry.second;
    return now - s.last_seen > limits_.idle_timeout || now - s.created > limits_.max_age;
  });
  const auto it = sessions_.find(token);
  if (it == sessions_.end()) return std::nullopt;
  it->second.last_seen = now;
  return it->second;
}

void SessionTable::close(const std::string& token) {
  const std::scoped_lock lock(mutex_);
  sessions_.erase(token);
}

std::size_t SessionTable::size() const {
  const std::scoped_lock lock(mutex_);
  return sessions_.size();
}

bool LoginThrottle::over(const std::map<std::string, Count>& table, const std::string& key, std::size_t limit,
                         Clock::time_point now) const {
  const auto it = table.find(key);
  return it != table.end() && now - it->second.last <= limits_.window && it->second.failures >= limit;
}

LoginThrottle::Count& LoginThrottle::bump(std::map<std::string, Count>& table, const std::string& key,
                                          Clock::time_point now) {
  Count& count = table[key];
  if (now - count.last > limits_.window) count.failures = 0;
  ++count.failures;
  count.last = now;
  return count;
}

bool LoginThrottle::locked(const std::string& user, const std::string& address, Clock::time_point now) {
  const std::scoped_lock lock(mutex_);
  return over(by_user_, user, limits_.max_failures, now) ||
         over(by_address_, address, limits_.max_failures_per_address, now);
}

std::size_t LoginThrottle::record_failure(const std::string& user, const std::string& address,
                                          Clock::time_point now) {
  const std::scoped_lock lock(mutex_);
  // Counts whose window has passed are dropped: names made up by a guesser do not pile up.
  const auto stale = [&](const auto& entry) { return now - entry.second.last > limits_.window; };
  std::erase_if(by_user_, stale);
  std::erase_if(by_address_, stale);
  bump(by_address_, address, now);
  return bump(by_user_, user, now).failures;
}

std::size_t LoginThrottle::tracked_names() {
  const std::scoped_lock lock(mutex_);
  return by_user_.size();
}

void LoginThrottle::record_success(const std::string& user) {
  const std::scoped_lock lock(mutex_);
  by_user_.erase(user);
}

}  // namespace countersign::web
