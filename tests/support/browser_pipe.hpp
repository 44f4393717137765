#pragma once

// Headless Debian Chromium driven over its DevTools protocol on a pipe (--remote-debugging-pipe: the
// browser reads commands from descriptor 3 and writes answers to descriptor 4, NUL-separated JSON):
// for pages behind a login, where --dump-dom alone cannot carry a session cookie. A fresh profile,
// no network services, no GPU; stopped when the object goes.

#include <nlohmann/json.hpp>

#include <sys/types.h>
#include <chrono>
#include <deque>
#include <filesystem>
#include <optional>
#include <string>

namespace countersign::test {

class BrowserPipe {
 public:
  BrowserPipe(const std::filesystem::path& chromium, const std::filesystem::path& profile, int width,
              int height);
  BrowserPipe(const BrowserPipe&) = delete;
  BrowserPipe& operator=(const BrowserPipe&) = delete;
  ~BrowserPipe();

  // True when the browser started and a page is attached.
  [[nodiscard]] bool ready() const { return !session_.empty(); }
  [[nodiscard]] const std::string& problem() const { return problem_; }

  // Loads a URL and waits for its load event.
  bool navigate(const std::string& url);
  // Runs an expression in the page (DevTools, not page script) and returns its value.
  [[nodiscard]] nlohmann::json evaluate(const std::string& expression);
  // Runs an expression that submits a form or follows a link, and waits for the next page's load event.
  bool evaluate_and_wait(const std::string& expression);
  // The DOM as the browser holds it (document.documentElement.outerHTML).
  [[nodiscard]] std::string dom();
  // A PNG of the viewport.
  [[nodiscard]] std::string screenshot_png();

 private:
  nlohmann::json call(const std::string& method, const nlohmann::json& params, bool in_page = true);
  bool wait_for_event(const std::string& method);
  std::optional<nlohmann::json> read_message();

  pid_t pid_ = -1;
  int to_browser_ = -1;
  int from_browser_ = -1;
  int next_id_ = 1;
  std::string buffer_;
  std::deque<nlohmann::json> events_;  // events read while waiting for an answer
  std::string session_;
  std::string problem_;
  std::chrono::seconds timeout_{30};
};

}  // namespace countersign::test
