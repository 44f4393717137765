// Where a store is, opening it, the words of its enums, time bounds of filters.

#include "libpq_api.hpp"
#include "sql_store.hpp"

#include <countersign/store/store.hpp>

#include <chrono>
#include <cmath>
#include <ctime>
#include <memory>

namespace countersign::store {

namespace fs = std::filesystem;

StoreLocation StoreLocation::parse(const std::string& text) {
  const bool postgres = text.rfind("postgresql://", 0) == 0 || text.rfind("postgres://", 0) == 0;
  return StoreLocation{postgres ? Backend::postgresql : Backend::sqlite, text};
}

std::string StoreLocation::describe() const {
  if (backend == Backend::sqlite) return "SQLite " + text;
  // libpq's own parser, so that the description names what libpq will use and never the password.
  const auto loaded = detail::load_libpq();
  if (!loaded) return "PostgreSQL (connection URI not read: client library not available)";
  const detail::LibpqApi& pq = **loaded;
  char* error = nullptr;
  PQconninfoOption* options = pq.conninfo_parse(text.c_str(), &error);
  if (options == nullptr) {
    pq.freemem(error);
    return "PostgreSQL (connection URI not understood)";
  }
  std::string host;
  std::string database;
  std::string user;
  for (PQconninfoOption* option = options; option->keyword != nullptr; ++option) {
    if (option->val == nullptr) continue;
    const std::string keyword = option->keyword;
    if (keyword == "host" || keyword == "hostaddr") host = option->val;
    if (keyword == "dbname") database = option->val;
    if (keyword == "user") user = option->val;
  }
  pq.conninfo_free(options);
  std::string described = "PostgreSQL database " + (database.empty() ? std::string{"(default)"} : database);
  described += " on " + (host.empty() ? std::string{"the local socket"} : host);
  if (!user.empty()) described += " as " + user;
  return described;
}

Expected<std::unique_ptr<Store>> Store::open(const StoreLocation& location, Access access) {
  if (location.backend == Backend::postgresql) return detail::open_postgresql(location, access);
  return detail::open_sqlite(location, access);
}

fs::path default_history_file(const fs::path& results) { return results / "history.sqlite"; }

std::string utc_timestamp_now() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm parts{};
  ::gmtime_r(&now, &parts);
  char text[32];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &parts);
  return text;
}

std::string_view to_string(ReviewStatus status) {
  switch (status) {
    case ReviewStatus::not_needed:
      return "not_needed";
    case ReviewStatus::open:
      return "open";
    case ReviewStatus::accepted:
      return "accepted";
    case ReviewStatus::rejected:
      return "rejected";
  }
  return "open";
}

std::string_view to_string(Decision decision) {
  return decision == Decision::accepted ? "accepted" : "rejected";
}

std::string_view to_string(ReviewerKind kind) {
  return kind == ReviewerKind::os_user ? "os_user" : "web_user";
}

std::string_view to_string(AuditKind kind) {
  switch (kind) {
    case AuditKind::check:
      return "check";
    case AuditKind::review:
      return "review";
    case AuditKind::import:
      return "import";
  }
  return "check";
}

bool CheckFilter::beam_matches(const BeamOutcome& beam) const {
  if (machine && beam.machine != *machine) return false;
  if (technique && beam.technique != *technique) return false;
  if (energy_mv && (!beam.energy_mv || std::abs(*beam.energy_mv - *energy_mv) > 0.01)) return false;
  return true;
}

namespace {

bool digits(std::string_view text, std::size_t from, std::size_t count) {
  if (text.size() < from + count) return false;
  for (std::size_t i = from; i < from + count; ++i) {
    if (text[i] < '0' || text[i] > '9') return false;
  }
  return true;
}

int number(std::string_view text, std::size_t from, std::size_t count) {
  int value = 0;
  for (std::size_t i = from; i < from + count; ++i) value = value * 10 + (text[i] - '0');
  return value;
}

int days_in_month(int year, int month) {
  static constexpr int days[] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  const bool leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
  return month == 2 && leap ? 29 : days[month - 1];
}

}  // namespace

Expected<std::string> parse_time_bound(std::string_view text, std::string_view option) {
  std::string value{text};
  if (value.size() > 10 && value[10] == ' ') value[10] = 'T';  // "2026-12-01 08:15"
  if (!value.empty() && (value.back() == 'Z' || value.back() == 'z')) value.pop_back();
  const auto bad = [&](const std::string& why) {
    return Error{ErrorKind::usage, "", std::string{option}, "",
                 "\"" + std::string{text} + "\" is not a UTC date or time: " + why +
                     " (use YYYY, YYYY-MM, YYYY-MM-DD, YYYY-MM-DDThh:mm or YYYY-MM-DDThh:mm:ss)"};
  };
  // The accepted shapes and where their digits are.
  const std::size_t length = value.size();
  if (length != 4 && length != 7 && length != 10 && length != 13 && length != 16 && length != 19)
    return bad("unexpected length");
  const std::string_view shape = "0000-00-00T00:00:00";
  for (std::size_t i = 0; i < length; ++i) {
    const bool digit_wanted = shape[i] == '0';
    const bool is_digit = value[i] >= '0' && value[i] <= '9';
    if (digit_wanted != is_digit || (!digit_wanted && value[i] != shape[i]))
      return bad("unexpected character");
  }
  const int year = number(value, 0, 4);
  if (year < 1900) return bad("year before 1900");
  if (length >= 7) {
    const int month = number(value, 5, 2);
    if (month < 1 || month > 12) return bad("no month " + std::to_string(month));
    if (length >= 10) {
      const int day = number(value, 8, 2);
      if (day < 1 || day > days_in_month(year, month)) return bad("no such day");
    }
  }
  if (length >= 13 && number(value, 11, 2) > 23) return bad("hour above 23");
  if (length >= 16 && number(value, 14, 2) > 59) return bad("minute above 59");
  if (length >= 19 && number(value, 17, 2) > 59) return bad("second above 59");
  if (!digits(value, 0, 4)) return bad("unexpected character");
  if (length == 19) value += 'Z';  // the stored form ends with Z
  return value;
}

}  // namespace countersign::store
