#pragma once

// The pages of the department web view, rendered on the server as complete HTML documents with
// inline CSS and SVG: no script, no external request, readable on a 1280 px screen and printable.
// Every string that comes from a plan or a user is escaped (report::html_escape); every page carries
// the caution (report::caution_text); "not checked" is never drawn like "within tolerance".
// The functions here know nothing of HTTP: the server (server.cpp) gathers the data and calls them.

#include <countersign/beamdata/library.hpp>
#include <countersign/store/filter.hpp>
#include <countersign/store/records.hpp>
#include <countersign/web/users.hpp>

#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::web {

// The logged-in person, as a page needs them (name in the header, forms).
struct Viewer {
  std::string user;
  Role role = Role::viewer;
  std::string csrf_token;  // put in every POST form of the page
};

// The query of a list page, as typed in its filter form (validated by worklist_filter).
using QueryParams = std::multimap<std::string, std::string>;

// A whole page: header with navigation and the user, the title, the body, the caution.
[[nodiscard]] std::string page(std::string_view title, const std::optional<Viewer>& viewer,
                               std::string_view body);

// The login form (answered with 401 to any request without a session). `message` is plain text.
[[nodiscard]] std::string login_page(std::string_view message, const std::string& form_token);

// A short page for an error or a refusal (plain-text message).
[[nodiscard]] std::string message_page(std::string_view title, std::string_view message,
                                       const std::optional<Viewer>& viewer);

// --- the worklist ---

struct WorklistQuery {
  std::string date;     // one day, YYYY-MM-DD (or a prefix accepted by store::parse_time_bound)
  std::string machine;  // Treatment Machine Name
  std::string verdict;  // within_tolerance | outside_tolerance | not_checked
  std::string review;   // open | reviewed
};
[[nodiscard]] WorklistQuery worklist_query(const QueryParams& params);
// The store filter of a query; an error (kind usage) names the field that cannot be used.
[[nodiscard]] Expected<store::CheckFilter> worklist_filter(const WorklistQuery& query);

// Open checks (flagged or not checked, nobody decided yet) first, newest first within each part.
void order_for_worklist(std::vector<store::CheckRecord>& checks);

// `checks`: every match, in worklist order; shown: the first `shown` of them.
[[nodiscard]] std::string worklist_page(const std::vector<store::CheckRecord>& checks, std::size_t shown,
                                        const WorklistQuery& query, const std::string& today,
                                        const Viewer& viewer);

// --- one check ---

// What became of the printable record file written with the check.
enum class RecordFileState { shown, none_written, missing, differs, elsewhere };

[[nodiscard]] std::string check_page(const store::CheckDetail& detail, RecordFileState record,
                                     const Viewer& viewer, std::string_view notice);

// --- trends ---

struct TrendQuery {
  std::string machine;
  std::string since;
  std::string until;
};
[[nodiscard]] TrendQuery trend_query(const QueryParams& params);
[[nodiscard]] Expected<store::CheckFilter> trend_filter(const TrendQuery& query);

[[nodiscard]] std::string trends_page(const std::vector<store::CheckRecord>& checks, const TrendQuery& query,
                                      const Viewer& viewer);

// --- the beam-data library ---

// One library as the history knows it: the checks computed with it.
struct LibraryUse {
  std::string sha256;
  std::string first_used_utc;
  std::string last_used_utc;
  std::size_t checks = 0;
};

[[nodiscard]] std::vector<LibraryUse> library_uses(const std::vector<store::CheckRecord>& checks);

[[nodiscard]] std::string library_page(const Expected<beamdata::Library>& library,
                                       const std::vector<LibraryUse>& uses, const Viewer& viewer);

}  // namespace countersign::web
