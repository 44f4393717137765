#include "support/browser_pipe.hpp"

#include <poll.h>
#include <sys/wait.h>
#include <unistd.h>
#include <csignal>

#include <array>
#include <thread>
#include <vector>

namespace countersign::test {

namespace {

std::string base64_decode(const std::string& text) {
  static const std::string alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  unsigned buffer = 0;
  int bits = 0;
  for (const char c : text) {
    const auto at = alphabet.find(c);
    if (at == std::string::npos) continue;  // '=' and line breaks
    buffer = (buffer << 6U) | static_cast<unsigned>(at);
    bits += 6;
    if (bits >= 8) {
      bits -= 8;
      out += static_cast<char>((buffer >> static_cast<unsigned>(bits)) & 0xFFU);
    }
  }
  return out;
}

}  // namespace

BrowserPipe::BrowserPipe(const std::filesystem::path& chromium, const std::filesystem::path& profile,
                         int width, int height) {
  std::array<int, 2> commands{};
  std::array<int, 2> answers{};
  if (::pipe(commands.data()) != 0 || ::pipe(answers.data()) != 0) {
    problem_ = "no pipe";
    return;
  }
  pid_ = ::fork();
  if (pid_ == 0) {
    // The child: descriptor 3 reads commands, 4 writes answers; stdout and stderr are dropped.
    ::dup2(commands[0], 3);
    ::dup2(answers[1], 4);
    for (const int fd : {commands[0], commands[1], answers[0], answers[1]}) {
      if (fd > 4) ::close(fd);
    }
    const std::string profile_flag = "--user-data-dir=" + profile.string();
    const std::string size_flag = "--window-size=" + std::to_string(width) + "," + std::to_string(height);
    std::vector<std::string> args{chromium.string(),
                                  "--headless",
                                  "--no-sandbox",
                                  "--disable-gpu",
                                  "--disable-quic",
                                  "--no-first-run",
                                  "--disable-background-networking",
                                  "--disable-component-update",
                                  "--disable-sync",
                                  "--hide-scrollbars",
                                  "--remote-debugging-pipe",
                                  profile_flag,
                                  size_flag,
                                  "about:blank"};
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    ::freopen("/dev/null", "w", stdout);  // NOLINT(cert-err33-c): nothing to do if it fails
    ::freopen("/dev/null", "w", stderr);  // NOLINT(cert-err33-c): nothing to do if it fails
    ::execv(argv[0], argv.data());
    ::_exit(127);
  }
  ::close(commands[0]);
  ::close(answers[1]);
  to_browser_ = commands[1];
  from_browser_ = answers[0];
  if (pid_ < 0) {
    problem_ = "cannot start Chromium";
    return;
  }
  const auto target = call("Target.createTarget", {{"url", "about:blank"}}, false);
  if (!target.contains("targetId")) {
    problem_ = "Chromium answered no target: " + target.dump();
    return;
  }
  const auto attached =
      call("Target.attachToTarget", {{"targetId", target["targetId"]}, {"flatten", true}}, false);
  if (!attached.contains("sessionId")) {
    problem_ = "cannot attach to the page: " + attached.dump();
    return;
  }
  session_ = attached["sessionId"].get<std::string>();
  call("Page.enable", nlohmann::json::object());
  call("Emulation.setDeviceMetricsOverride",
       {{"width", width}, {"height", height}, {"deviceScaleFactor", 1}, {"mobile", false}});
}

BrowserPipe::~BrowserPipe() {
  if (to_browser_ >= 0) ::close(to_browser_);
  if (from_browser_ >= 0) ::close(from_browser_);
  if (pid_ <= 0) return;
  ::kill(pid_, SIGTERM);
  int status = 0;
  for (int i = 0; i < 100; ++i) {
    if (::waitpid(pid_, &status, WNOHANG) == pid_) return;
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  ::kill(pid_, SIGKILL);
  ::waitpid(pid_, &status, 0);
}

std::optional<nlohmann::json> BrowserPipe::read_message() {
  const auto deadline = std::chrono::steady_clock::now() + timeout_;
  while (true) {
    const auto end = buffer_.find('\0');
    if (end != std::string::npos) {
      auto message = nlohmann::json::parse(buffer_.substr(0, end), nullptr, false);
      buffer_.erase(0, end + 1);
      return message;
    }
    const auto left =
        std::chrono::duration_cast<std::chrono::milliseconds>(deadline - std::chrono::steady_clock::now());
    if (left.count() <= 0) return std::nullopt;
    pollfd wait{from_browser_, POLLIN, 0};
    if (::poll(&wait, 1, static_cast<int>(left.count())) <= 0) return std::nullopt;
    std::array<char, 65536> chunk{};
    const auto got = ::read(from_browser_, chunk.data(), chunk.size());
    if (got <= 0) return std::nullopt;
    buffer_.append(chunk.data(), static_cast<std::size_t>(got));
  }
}

nlohmann::json BrowserPipe::call(const std::string& method, const nlohmann::json& params, bool in_page) {
  const int id = next_id_++;
  nlohmann::json message{{"id", id}, {"method", method}, {"params", params}};
  if (in_page) message["sessionId"] = session_;
  const std::string text = message.dump() + std::string(1, '\0');
  if (::write(to_browser_, text.data(), text.size()) != static_cast<ssize_t>(text.size())) return {};
  while (auto answer = read_message()) {
    if (answer->value("id", 0) == id) return answer->contains("result") ? (*answer)["result"] : *answer;
    if (answer->contains("method")) events_.push_back(std::move(*answer));
  }
  problem_ = "no answer to " + method;
  return {};
}

bool BrowserPipe::wait_for_event(const std::string& method) {
  while (!events_.empty()) {
    const bool found = events_.front().value("method", "") == method;
    events_.pop_front();
    if (found) return true;
  }
  while (auto message = read_message()) {
    if (message->value("method", "") == method) return true;
  }
  problem_ = "no " + method;
  return false;
}

bool BrowserPipe::navigate(const std::string& url) {
  events_.clear();
  call("Page.navigate", {{"url", url}});
  return wait_for_event("Page.loadEventFired");
}

nlohmann::json BrowserPipe::evaluate(const std::string& expression) {
  const auto result = call("Runtime.evaluate", {{"expression", expression}, {"returnByValue", true}});
  return result.contains("result") && result["result"].contains("value") ? result["result"]["value"]
                                                                         : nlohmann::json{};
}

bool BrowserPipe::evaluate_and_wait(const std::string& expression) {
  events_.clear();
  call("Runtime.evaluate", {{"expression", expression}, {"returnByValue", true}});
  return wait_for_event("Page.loadEventFired");
}

std::string BrowserPipe::dom() {
  const auto value = evaluate("document.documentElement.outerHTML");
  return value.is_string() ? value.get<std::string>() : std::string{};
}

std::string BrowserPipe::screenshot_png() {
  const auto shot = call("Page.captureScreenshot", {{"format", "png"}});
  return shot.contains("data") ? base64_decode(shot["data"].get<std::string>()) : std::string{};
}

}  // namespace countersign::test
