// The routes of the web view: login and logout, the worklist, a check (with its record file and the
// review form), trends, the beam-data library. Every page but the login needs a session; a POST
// needs the session's CSRF token as well, and a review needs the reviewer role.

#include <countersign/beamdata/library.hpp>
#include <countersign/util/sha256.hpp>

#include "server_state.hpp"

#include <charconv>
#include <fstream>
#include <sstream>

namespace countersign::web {

namespace fs = std::filesystem;

namespace {

constexpr std::size_t worklist_rows = 200;

// No script, no external request, no framing by other sites; forms post only to this server.
void harden(httplib::Response& res) {
  res.set_header("Content-Security-Policy",
                 "default-src 'none'; style-src 'unsafe-inline'; img-src data:; frame-src 'self'; "
                 "frame-ancestors 'self'; form-action 'self'; base-uri 'none'");
  res.set_header("X-Content-Type-Options", "nosniff");
  res.set_header("Referrer-Policy", "no-referrer");
  res.set_header("Cache-Control", "no-store");
}

void html(httplib::Response& res, int status, const std::string& body) {
  res.status = status;
  res.set_content(body, "text/html; charset=utf-8");
}

std::string cookie_attributes(const WebServer::State& state) {
  return std::string{"; Path=/; HttpOnly; SameSite=Strict"} + (state.tls ? "; Secure" : "");
}

QueryParams params_of(const httplib::Request& req) {
  return QueryParams{req.params.begin(), req.params.end()};
}

// The login form with a fresh form token, also set as a cookie (checked on POST /login).
void send_login(WebServer::State& state, httplib::Response& res, int status, std::string_view message) {
  const std::string token = random_token();
  res.set_header("Set-Cookie", std::string{login_cookie} + "=" + token + cookie_attributes(state));
  html(res, status, login_page(message, token));
}

std::optional<Viewer> viewer_of(WebServer::State& state, const httplib::Request& req) {
  const std::string token = cookie(req, session_cookie);
  if (token.empty()) return std::nullopt;
  const auto session = state.sessions.find(token, Clock::now());
  if (!session) return std::nullopt;
  return Viewer{session->user, session->role, session->csrf_token};
}

// The viewer, or nullopt after answering 401 with the login form.
std::optional<Viewer> require_login(WebServer::State& state, const httplib::Request& req,
                                    httplib::Response& res) {
  auto viewer = viewer_of(state, req);
  if (!viewer) send_login(state, res, 401, "Log in to see the records.");
  return viewer;
}

// A POST's CSRF token must be the session's; else 403.
bool csrf_ok(WebServer::State& state, const httplib::Request& req, httplib::Response& res,
             const Viewer& viewer) {
  if (same_token(req.get_param_value("csrf"), viewer.csrf_token)) return true;
  state.note("refused a form without this session's token from " + req.remote_addr + " (user " + viewer.user +
             ")");
  html(res, 403,
       message_page("Form refused",
                    "The form did not carry this session's token; reload the page and try again.", viewer));
  return false;
}

std::int64_t id_of(const httplib::Request& req) {
  std::int64_t id = 0;
  const std::string text = req.matches[1];
  std::from_chars(text.data(), text.data() + text.size(), id);
  return id;
}

struct RecordFile {
  RecordFileState state = RecordFileState::none_written;
  fs::path path;
};

std::string read_file(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// Where the check's printable record is on this host, and whether it is the file written then.
RecordFile locate_record(const WebServer::State& state, const store::CheckRecord& c) {
  if (c.files.record_html.empty()) return {};
  std::vector<fs::path> folders{fs::path{c.results_folder}};
  if (state.options.results_folder) folders.push_back(*state.options.results_folder);
  for (const auto& folder : folders) {
    const fs::path file = folder / c.files.record_html;
    std::error_code ec;
    if (!fs::is_regular_file(file, ec)) continue;
    const bool same = util::sha256_hex(read_file(file)) == c.hashes.record_sha256;
    return RecordFile{same ? RecordFileState::shown : RecordFileState::differs, file};
  }
  std::error_code ec;
  const bool reachable = fs::is_directory(c.results_folder, ec) || state.options.results_folder.has_value();
  return RecordFile{reachable ? RecordFileState::missing : RecordFileState::elsewhere, {}};
}

void worklist(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer) return;
  const WorklistQuery query = worklist_query(params_of(req));
  auto filter = worklist_filter(query);
  if (!filter) return html(res, 400, message_page("Worklist", filter.error().detail, viewer));
  Expected<std::vector<store::CheckRecord>> checks = std::vector<store::CheckRecord>{};
  {
    const std::scoped_lock lock(state.store_mutex);
    checks = state.store->list_checks(filter.value());
  }
  if (!checks) return html(res, 500, message_page("Worklist", checks.error().message(), viewer));
  order_for_worklist(checks.value());
  html(
      res, 200,
      worklist_page(checks.value(), worklist_rows, query, store::utc_timestamp_now().substr(0, 10), *viewer));
}

std::optional<store::CheckDetail> detail_of(WebServer::State& state, std::int64_t id, httplib::Response& res,
                                            const Viewer& viewer) {
  Expected<std::optional<store::CheckDetail>> detail = std::optional<store::CheckDetail>{};
  {
    const std::scoped_lock lock(state.store_mutex);
    detail = state.store->get_check(id);
  }
  if (!detail) {
    html(res, 500, message_page("Check", detail.error().message(), viewer));
    return std::nullopt;
  }
  if (!detail.value()) html(res, 404, message_page("Check", "No check #" + std::to_string(id) + ".", viewer));
  return detail.value();
}

void check(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer) return;
  const auto detail = detail_of(state, id_of(req), res, *viewer);
  if (!detail) return;
  std::string notice;
  if (req.has_param("recorded")) notice = "Review #" + req.get_param_value("recorded") + " recorded.";
  html(res, 200, check_page(*detail, locate_record(state, detail->check).state, *viewer, notice));
}

void record(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer) return;
  const auto detail = detail_of(state, id_of(req), res, *viewer);
  if (!detail) return;
  const RecordFile file = locate_record(state, detail->check);
  if (file.state != RecordFileState::shown) {
    return html(res, 404,
                message_page("Printable record",
                             "The record file is not available as written; see the check.", viewer));
  }
  html(res, 200, read_file(file.path));
}

void review(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer || !csrf_ok(state, req, res, *viewer)) return;
  const std::int64_t id = id_of(req);
  if (viewer->role != Role::reviewer) {
    state.note("refused a review of check #" + std::to_string(id) + " by " + viewer->user + " (role viewer)");
    return html(
        res, 403,
        message_page("Review refused", "Your role (viewer) may read records, not review them.", viewer));
  }
  store::NewReview review;
  review.check_id = id;
  const std::string decision = req.get_param_value("decision");
  if (decision != "accept" && decision != "reject") {
    return html(res, 400, message_page("Review", "Choose accept or reject.", viewer));
  }
  review.decision = decision == "accept" ? store::Decision::accepted : store::Decision::rejected;
  if (const std::string beam = req.get_param_value("beam"); !beam.empty()) {
    int number = 0;
    const auto [end, ec] = std::from_chars(beam.data(), beam.data() + beam.size(), number);
    if (ec != std::errc{} || end != beam.data() + beam.size()) {
      return html(res, 400, message_page("Review", "\"" + beam + "\" is not a beam number.", viewer));
    }
    review.beam_number = number;
  }
  review.reason = req.get_param_value("reason");
  review.reviewer = store::Reviewer{viewer->user, store::ReviewerKind::web_user};
  Expected<store::Review> recorded = store::Review{};
  {
    const std::scoped_lock lock(state.store_mutex);
    recorded = state.store->add_review(review, store::utc_timestamp_now());
  }
  if (!recorded) return html(res, 400, message_page("Review not recorded", recorded.error().detail, viewer));
  state.note("review #" + std::to_string(recorded->id) + " of check #" + std::to_string(id) + " (" +
             decision + ") recorded by " + viewer->user + "; audit entry " +
             std::to_string(recorded->audit_seq.value_or(0)));
  res.set_redirect("/checks/" + std::to_string(id) + "?recorded=" + std::to_string(recorded->id), 303);
}

void trends(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer) return;
  const TrendQuery query = trend_query(params_of(req));
  auto filter = trend_filter(query);
  Expected<std::vector<store::CheckRecord>> checks = std::vector<store::CheckRecord>{};
  if (filter) {
    const std::scoped_lock lock(state.store_mutex);
    checks = state.store->list_checks(filter.value());
  }
  if (!checks) return html(res, 500, message_page("Trends", checks.error().message(), viewer));
  html(res, 200, trends_page(checks.value(), query, *viewer));
}

void library(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer) return;
  Expected<std::vector<store::CheckRecord>> checks = std::vector<store::CheckRecord>{};
  {
    const std::scoped_lock lock(state.store_mutex);
    checks = state.store->list_checks(store::CheckFilter{});
  }
  if (!checks) return html(res, 500, message_page("Beam data", checks.error().message(), viewer));
  html(res, 200,
       library_page(beamdata::load_library(state.options.beamdata_folder), library_uses(checks.value()),
                    *viewer));
}

void login(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  if (!same_token(req.get_param_value("csrf"), cookie(req, login_cookie))) {
    return send_login(state, res, 403, "The login form had expired; please log in again.");
  }
  const std::string name = req.get_param_value("name");
  const std::string address = req.remote_addr;
  const auto now = Clock::now();
  if (state.throttle.locked(name, address, now)) {
    state.note("login refused for " + (is_valid_user_name(name) ? name : "(malformed name)") + " from " +
               address + ": too many failed attempts");
    return send_login(state, res, 429, "Too many failed attempts; wait a quarter of an hour.");
  }
  auto users =
      UserList::load(state.options.users_file);  // read each time: `user add` works without a restart
  const User* user = users ? users->find(name) : nullptr;
  const bool matches = password_matches(req.get_param_value("password"), user ? user->password_hash : "");
  if (!user || !matches) {
    const std::size_t failures = state.throttle.record_failure(name, address, now);
    state.note("failed login for " + (is_valid_user_name(name) ? name : "(malformed name)") + " from " +
               address + " (" + std::to_string(failures) + " within the window)" +
               (users ? "" : "; users file: " + users.error().message()));
    return send_login(state, res, 401, "Unknown user name or wrong password.");
  }
  state.throttle.record_success(name);
  const std::string token = state.sessions.open(user->name, user->role, now);
  state.note("login of " + user->name + " (" + std::string{to_string(user->role)} + ") from " + address);
  res.set_header("Set-Cookie", std::string{session_cookie} + "=" + token + cookie_attributes(state));
  res.set_redirect("/", 303);
}

void logout(WebServer::State& state, const httplib::Request& req, httplib::Response& res) {
  const auto viewer = require_login(state, req, res);
  if (!viewer || !csrf_ok(state, req, res, *viewer)) return;
  state.sessions.close(cookie(req, session_cookie));
  res.set_header("Set-Cookie", std::string{session_cookie} + "=; Max-Age=0" + cookie_attributes(state));
  res.set_redirect("/login", 303);
}

}  // namespace

std::string cookie(const httplib::Request& request, const std::string& name) {
  const std::string header = request.get_header_value("Cookie");
  std::size_t at = 0;
  while (at < header.size()) {
    const std::size_t end = std::min(header.find(';', at), header.size());
    std::string pair = header.substr(at, end - at);
    const std::size_t start = pair.find_first_not_of(' ');
    pair = start == std::string::npos ? std::string{} : pair.substr(start);
    if (pair.size() > name.size() && pair.compare(0, name.size(), name) == 0 && pair[name.size()] == '=')
      return pair.substr(name.size() + 1);
    at = end + 1;
  }
  return {};
}

void add_routes(WebServer::State& state) {
  auto& http = *state.http;
  http.set_post_routing_handler([](const httplib::Request&, httplib::Response& res) { harden(res); });
  const auto bind = [&state](
                        void (*handler)(WebServer::State&, const httplib::Request&, httplib::Response&)) {
    return
        [&state, handler](const httplib::Request& req, httplib::Response& res) { handler(state, req, res); };
  };
  http.Get("/", bind(worklist));
  http.Get(R"(/checks/(\d+))", bind(check));
  http.Get(R"(/checks/(\d+)/record)", bind(record));
  http.Post(R"(/checks/(\d+)/review)", bind(review));
  http.Get("/trends", bind(trends));
  http.Get("/library", bind(library));
  http.Get("/login",
           [&state](const httplib::Request&, httplib::Response& res) { send_login(state, res, 200, ""); });
  http.Post("/login", bind(login));
  http.Post("/logout", bind(logout));
  http.set_error_handler([&state](const httplib::Request& req, httplib::Response& res) {
    if (res.status == 404)
      html(res, 404, message_page("Not found", "No page at " + req.path + ".", viewer_of(state, req)));
  });
}

}  // namespace countersign::web
