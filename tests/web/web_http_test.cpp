// The web view over HTTP, with cpp-httplib's client against `countersign serve` started on a free
// loopback port: no page without a login, viewers cannot post, forms need the session's token,
// markup from a plan stays text, failed logins are throttled and logged, and a review posted here
// enters the same history and audit trail as `countersign review`.

#include "support/serve_process.hpp"
#include "web_fixture.hpp"

#include <httplib.h>
#include <nlohmann/json.hpp>

#include <regex>

namespace countersign::web {
namespace {

using nlohmann::json;

// The value of `name` in a Set-Cookie header, or empty.
std::string set_cookie(const httplib::Result& result, const std::string& name) {
  for (std::size_t i = 0; i < result->get_header_value_count("Set-Cookie"); ++i) {
    const std::string header = result->get_header_value("Set-Cookie", i);
    if (header.rfind(name + "=", 0) == 0) return header;
  }
  return {};
}

std::string cookie_value(const std::string& set_cookie_header) {
  const auto eq = set_cookie_header.find('=');
  return set_cookie_header.substr(eq + 1, set_cookie_header.find(';') - eq - 1);
}

std::string hidden_csrf(const std::string& page) {
  std::smatch m;
  const std::regex field{R"re(name="csrf" value="([0-9a-f]{64})")re"};
  return std::regex_search(page, m, field) ? std::string{m[1]} : std::string{};
}

class WebHttp : public WebHistory {
 protected:
  void SetUp() override {
    ASSERT_TRUE(setup_problem_.empty()) << setup_problem_;
    server_ = std::make_unique<test::ServeProcess>(
        test::program(), std::vector<std::string>{"--results", results_.string()}, dir_);
    ASSERT_TRUE(server_->running()) << server_->output();
    client_ = std::make_unique<httplib::Client>("127.0.0.1", server_->port());
  }
  void TearDown() override {
    client_.reset();
    server_.reset();
  }

  // POST /login as the user; returns the session cookie header ("" on failure) and the status.
  std::pair<std::string, int> login(const std::string& name, const std::string& password) {
    const auto form = client_->Get("/login");
    EXPECT_TRUE(form);
    if (!form) return {"", 0};
    const std::string login_cookie = cookie_value(set_cookie(form, "countersign_login"));
    const httplib::Headers headers{{"Cookie", "countersign_login=" + login_cookie}};
    const auto posted = client_->Post(
        "/login", headers,
        httplib::Params{{"csrf", hidden_csrf(form->body)}, {"name", name}, {"password", password}});
    EXPECT_TRUE(posted);
    if (!posted) return {"", 0};
    return {set_cookie(posted, "countersign_session"), posted->status};
  }

  httplib::Headers session_headers(const std::string& session) {
    return {{"Cookie", "countersign_session=" + cookie_value(session)}};
  }

  json history(const std::string& extra = "") {
    const auto listed = countersign("history --json" + results_option() + " " + extra);
    EXPECT_EQ(listed.exit_code, 0) << listed.err;
    const json parsed = json::parse(listed.out, nullptr, false);
    EXPECT_FALSE(parsed.is_discarded()) << listed.out;
    return parsed;
  }

  std::int64_t flagged_check_id() {
    const json listed = history();  // kept: a range-for over history()["checks"] would outlive it
    for (const auto& c : listed["checks"]) {
      if (c["status"] == "outside_tolerance") return c["check_id"].get<std::int64_t>();
    }
    return 0;
  }

  std::unique_ptr<test::ServeProcess> server_;
  std::unique_ptr<httplib::Client> client_;
};

TEST_F(WebHttp, EveryPageNeedsALogin) {
  for (const char* path : {"/", "/checks/1", "/checks/1/record", "/trends", "/library"}) {
    const auto res = client_->Get(path);
    ASSERT_TRUE(res) << path;
    EXPECT_EQ(res->status, 401) << path;
    EXPECT_NE(res->body.find("id=\"login\""), std::string::npos) << path;
    EXPECT_NE(res->body.find("supports, and does not replace"), std::string::npos) << path;
    EXPECT_EQ(res->body.find("FERN"), std::string::npos) << path;  // nothing of the records
  }
  const auto posted =
      client_->Post("/checks/1/review", httplib::Params{{"decision", "accept"}, {"reason", "x"}});
  ASSERT_TRUE(posted);
  EXPECT_EQ(posted->status, 401);
}

TEST_F(WebHttp, SessionCookiesAreHttpOnlyAndStrict) {
  const auto [session, status] = login("alice", reviewer_password);
  EXPECT_EQ(status, 303);
  ASSERT_FALSE(session.empty());
  EXPECT_NE(session.find("HttpOnly"), std::string::npos) << session;
  EXPECT_NE(session.find("SameSite=Strict"), std::string::npos) << session;
  EXPECT_EQ(cookie_value(session).size(), 64U);  // 256 bits as hex
  const auto page = client_->Get("/", session_headers(session));
  ASSERT_TRUE(page);
  EXPECT_EQ(page->status, 200);
  EXPECT_NE(page->get_header_value("Content-Security-Policy").find("default-src 'none'"), std::string::npos);
  EXPECT_EQ(page->body.find("<script"), std::string::npos);  // no script at all
  EXPECT_EQ(page->body.find("http://"), std::string::npos);  // no external request
  EXPECT_EQ(page->body.find("https://"), std::string::npos);
}

TEST_F(WebHttp, AViewerMayReadButNotReview) {
  const auto [session, status] = login("victor", viewer_password);
  ASSERT_EQ(status, 303);
  const std::int64_t id = flagged_check_id();
  ASSERT_GT(id, 0) << history().dump(1);
  const auto page = client_->Get("/checks/" + std::to_string(id), session_headers(session));
  ASSERT_TRUE(page);
  EXPECT_EQ(page->status, 200);
  EXPECT_EQ(page->body.find("id=\"review-form\""), std::string::npos);
  const auto posted = client_->Post(
      "/checks/" + std::to_string(id) + "/review", session_headers(session),
      httplib::Params{
          {"csrf", hidden_csrf(page->body)}, {"decision", "accept"}, {"reason", "looked fine to me"}});
  ASSERT_TRUE(posted);
  EXPECT_EQ(posted->status, 403);
  EXPECT_EQ(history("--check " + std::to_string(id)).dump().find("looked fine"), std::string::npos);
}

TEST_F(WebHttp, APostWithoutTheSessionsTokenIsRefused) {
  const auto [session, status] = login("alice", reviewer_password);
  ASSERT_EQ(status, 303);
  const std::int64_t id = flagged_check_id();
  for (const std::string& token : {std::string{}, std::string(64, 'a')}) {
    const auto posted = client_->Post(
        "/checks/" + std::to_string(id) + "/review", session_headers(session),
        httplib::Params{{"csrf", token}, {"decision", "accept"}, {"reason", "forged from another site"}});
    ASSERT_TRUE(posted);
    EXPECT_EQ(posted->status, 403);
  }
  EXPECT_EQ(history().dump().find("forged"), std::string::npos);
  EXPECT_NE(server_->log().find("refused a form without this session's token"), std::string::npos);
  // The login form too: its token must match its cookie.
  const auto forged = client_->Post(
      "/login",
      httplib::Params{{"csrf", std::string(64, 'b')}, {"name", "alice"}, {"password", reviewer_password}});
  ASSERT_TRUE(forged);
  EXPECT_EQ(forged->status, 403);
  EXPECT_TRUE(set_cookie(forged, "countersign_session").empty());
}

TEST_F(WebHttp, MarkupFromAPlanIsShownAsText) {
  const auto [session, status] = login("alice", reviewer_password);
  ASSERT_EQ(status, 303);
  const auto list = client_->Get("/", session_headers(session));
  ASSERT_TRUE(list);
  EXPECT_EQ(list->body.find("<script"), std::string::npos);
  EXPECT_NE(list->body.find("&lt;script&gt;alert(7)&lt;/script&gt;"), std::string::npos);
  EXPECT_NE(list->body.find("&lt;b&gt;x&lt;/b&gt;"), std::string::npos);
  std::int64_t id = 0;
  const json listed = history();
  for (const auto& c : listed["checks"]) {
    if (c["patient_id"] == script_patient_id) id = c["check_id"].get<std::int64_t>();
  }
  ASSERT_GT(id, 0);
  for (const std::string& path :
       {"/checks/" + std::to_string(id), "/checks/" + std::to_string(id) + "/record"}) {
    const auto page = client_->Get(path, session_headers(session));
    ASSERT_TRUE(page) << path;
    EXPECT_EQ(page->status, 200) << path;
    EXPECT_EQ(page->body.find("<script"), std::string::npos) << path;
    EXPECT_NE(page->body.find("&lt;script&gt;alert("), std::string::npos) << path;
  }
}

TEST_F(WebHttp, FailedLoginsAreThrottledAndLogged) {
  for (int i = 0; i < 5; ++i) EXPECT_EQ(login("alice", "not the password at all").second, 401) << i;
  // The sixth try is refused even with the right password, for this name only.
  const auto [session, status] = login("alice", reviewer_password);
  EXPECT_EQ(status, 429);
  EXPECT_TRUE(session.empty());
  EXPECT_EQ(login("victor", viewer_password).second, 303);
  const std::string log = server_->log();
  EXPECT_NE(log.find("failed login for alice from 127.0.0.1 (5 within the window)"), std::string::npos)
      << log;
  EXPECT_NE(log.find("login refused for alice from 127.0.0.1: too many failed attempts"), std::string::npos)
      << log;
  EXPECT_EQ(log.find("not the password"), std::string::npos);  // passwords never logged
}

TEST_F(WebHttp, AReviewPostedHereIsInTheHistoryAndTheAuditTrailHolds) {
  const auto [session, status] = login("alice", reviewer_password);
  ASSERT_EQ(status, 303);
  const std::int64_t id = flagged_check_id();
  const auto page = client_->Get("/checks/" + std::to_string(id), session_headers(session));
  ASSERT_TRUE(page);
  ASSERT_NE(page->body.find("id=\"review-form\""), std::string::npos);
  const auto posted = client_->Post("/checks/" + std::to_string(id) + "/review", session_headers(session),
                                    httplib::Params{{"csrf", hidden_csrf(page->body)},
                                                    {"decision", "reject"},
                                                    {"beam", ""},
                                                    {"reason", "MU raised by hand; replan (HTTP test)"}});
  ASSERT_TRUE(posted);
  EXPECT_EQ(posted->status, 303) << posted->body;
  const json detail = history("--check " + std::to_string(id));
  const std::string text = detail.dump();
  EXPECT_NE(text.find("\"reviewer\":\"alice\""), std::string::npos) << text;
  EXPECT_NE(text.find("\"reviewer_kind\":\"web_user\""), std::string::npos) << text;
  EXPECT_NE(text.find("replan (HTTP test)"), std::string::npos) << text;
  const auto verified = countersign("audit verify" + results_option());
  EXPECT_EQ(verified.exit_code, 0) << verified.out << verified.err;
  // The page shows it, and the check is no longer first in the worklist as unreviewed.
  const auto after = client_->Get("/checks/" + std::to_string(id), session_headers(session));
  ASSERT_TRUE(after);
  EXPECT_NE(after->body.find("replan (HTTP test)"), std::string::npos);
  EXPECT_NE(after->body.find("alice (web_user)"), std::string::npos);
}

TEST_F(WebHttp, TrendsAndLibraryPagesShowTheNumbers) {
  const auto [session, status] = login("victor", viewer_password);
  ASSERT_EQ(status, 303);
  const auto trends = client_->Get("/trends", session_headers(session));
  ASSERT_TRUE(trends);
  EXPECT_EQ(trends->status, 200);
  EXPECT_NE(trends->body.find("FERN-LINAC-1"), std::string::npos);
  EXPECT_NE(trends->body.find("<svg class=\"chart\""), std::string::npos);
  EXPECT_NE(trends->body.find("upper control limit"), std::string::npos);
  const auto library = client_->Get("/library", session_headers(session));
  ASSERT_TRUE(library);
  EXPECT_EQ(library->status, 200);
  const json checks = history()["checks"];
  ASSERT_FALSE(checks.empty());
  EXPECT_NE(library->body.find(checks[0]["beamdata_sha256"].get<std::string>() + "</td></tr>"),
            std::string::npos);
  EXPECT_NE(library->body.find("in use here"), std::string::npos);
}

}  // namespace
}  // namespace countersign::web

namespace countersign::web {
namespace {

// HTTPS with a throwaway certificate made by openssl (tools/install-deps installs it): the session
// cookie is Secure, and a page is served only over TLS.
TEST_F(WebHistory, UnderTlsTheSessionCookieIsSecure) {
  ASSERT_TRUE(setup_problem_.empty()) << setup_problem_;
  const std::filesystem::path cert = dir_ / "tls.crt";
  const std::filesystem::path key = dir_ / "tls.key";
  const auto made =
      test::run_command("openssl req -x509 -newkey rsa:2048 -nodes -days 1 -subj /CN=127.0.0.1 -keyout " +
                        test::quote(key.string()) + " -out " + test::quote(cert.string()));
  ASSERT_EQ(made.exit_code, 0) << "openssl is needed: " << made.err;
  const test::ServeProcess server(
      test::program(),
      {"--results", results_.string(), "--tls-cert", cert.string(), "--tls-key", key.string()}, dir_);
  ASSERT_TRUE(server.running()) << server.output();
  EXPECT_EQ(server.url().rfind("https://", 0), 0U) << server.url();
  httplib::SSLClient client("127.0.0.1", server.port());
  client.enable_server_certificate_verification(false);  // self-signed, made just now
  const auto form = client.Get("/login");
  ASSERT_TRUE(form) << httplib::to_string(form.error());
  const std::string login_cookie = cookie_value(set_cookie(form, "countersign_login"));
  EXPECT_NE(set_cookie(form, "countersign_login").find("; Secure"), std::string::npos);
  const auto posted = client.Post(
      "/login", {{"Cookie", "countersign_login=" + login_cookie}},
      httplib::Params{{"csrf", hidden_csrf(form->body)}, {"name", "alice"}, {"password", reviewer_password}});
  ASSERT_TRUE(posted);
  EXPECT_EQ(posted->status, 303);
  const std::string session = set_cookie(posted, "countersign_session");
  EXPECT_NE(session.find("; Secure"), std::string::npos) << session;
  EXPECT_NE(session.find("HttpOnly"), std::string::npos) << session;
  // Plain HTTP to the same port gets no page.
  httplib::Client plain("127.0.0.1", server.port());
  const auto clear = plain.Get("/login");
  EXPECT_TRUE(!clear || clear->status != 200);
}

}  // namespace
}  // namespace countersign::web
