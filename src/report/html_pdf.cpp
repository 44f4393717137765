#include <countersign/report/html_pdf.hpp>

#include <fmt/format.h>

#include <cerrno>
#include <csignal>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <thread>

#include <fcntl.h>
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

extern char** environ;

namespace countersign::report {

namespace {

// A fresh private folder, removed with everything in it when the object goes.
class TemporaryFolder {
 public:
  static std::optional<TemporaryFolder> create(const std::string& prefix) {
    std::string pattern = (std::filesystem::temp_directory_path() / (prefix + "XXXXXX")).string();
    if (::mkdtemp(pattern.data()) == nullptr) return std::nullopt;
    return TemporaryFolder(pattern);
  }
  TemporaryFolder(TemporaryFolder&& other) noexcept : path_(std::move(other.path_)) { other.path_.clear(); }
  TemporaryFolder& operator=(TemporaryFolder&&) = delete;
  TemporaryFolder(const TemporaryFolder&) = delete;
  TemporaryFolder& operator=(const TemporaryFolder&) = delete;
  ~TemporaryFolder() {
    if (path_.empty()) return;
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  [[nodiscard]] const std::filesystem::path& path() const { return path_; }

 private:
  explicit TemporaryFolder(std::filesystem::path path) : path_(std::move(path)) {}
  std::filesystem::path path_;
};

bool executable(const std::filesystem::path& p) {
  std::error_code ec;
  return std::filesystem::is_regular_file(p, ec) && ::access(p.c_str(), X_OK) == 0;
}

std::string last_line(const std::filesystem::path& log) {
  std::ifstream in(log);
  std::string line, last;
  while (std::getline(in, line)) {
    if (!line.empty()) last = line;
  }
  return last.size() > 300 ? last.substr(0, 300) + "..." : last;
}

bool looks_like_pdf(const std::filesystem::path& p) {
  std::ifstream in(p, std::ios::binary);
  char head[5] = {};
  in.read(head, 5);
  return in.gcount() == 5 && std::string(head, 5) == "%PDF-";
}

Error pdf_error(const std::filesystem::path& pdf_file, std::string detail) {
  return Error{ErrorKind::io, pdf_file.string(), "", "", std::move(detail)};
}

}  // namespace

std::optional<std::filesystem::path> find_chromium() {
  if (const char* chosen = std::getenv("COUNTERSIGN_CHROMIUM"); chosen != nullptr && *chosen != '\0') {
    return executable(chosen) ? std::optional<std::filesystem::path>(chosen) : std::nullopt;
  }
  const char* path = std::getenv("PATH");
  if (path == nullptr) return std::nullopt;
  for (const char* name : {"chromium", "chromium-browser"}) {
    std::stringstream folders(path);
    std::string folder;
    while (std::getline(folders, folder, ':')) {
      if (folder.empty()) continue;
      const std::filesystem::path candidate = std::filesystem::path(folder) / name;
      if (executable(candidate)) return candidate;
    }
  }
  return std::nullopt;
}

std::string no_chromium_message(const std::filesystem::path& pdf_file) {
  return fmt::format(
      "{}: cannot write the PDF: no Chromium found (install Debian's chromium package, or set "
      "COUNTERSIGN_CHROMIUM; the HTML record (--html) needs no extra program)",
      pdf_file.string());
}

std::string file_url(const std::filesystem::path& absolute_path) {
  std::string url = "file://";
  for (const char byte : absolute_path.string()) {
    const auto c = static_cast<unsigned char>(byte);
    const bool plain = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                       c == '/' || c == '-' || c == '_' || c == '.' || c == '~';
    url += plain ? std::string(1, static_cast<char>(c)) : fmt::format("%{:02X}", c);
  }
  return url;
}

std::vector<std::string> chromium_print_arguments(const std::filesystem::path& chromium,
                                                  const std::filesystem::path& html_file,
                                                  const std::filesystem::path& pdf_file,
                                                  const std::filesystem::path& profile_dir) {
  return {chromium.string(),
          "--headless",
          "--no-sandbox",
          "--disable-gpu",
          "--disable-quic",
          "--no-first-run",
          "--disable-background-networking",
          "--disable-component-update",
          "--disable-sync",
          "--disable-extensions",
          "--disable-default-apps",
          "--no-default-browser-check",
          "--no-pdf-header-footer",
          "--user-data-dir=" + profile_dir.string(),
          "--print-to-pdf=" + pdf_file.string(),
          file_url(std::filesystem::absolute(html_file))};
}

Expected<std::filesystem::path> print_pdf(const std::filesystem::path& html_file,
                                          const std::filesystem::path& pdf_file,
                                          const std::filesystem::path& chromium,
                                          std::chrono::seconds timeout) {
  auto work = TemporaryFolder::create("countersign-pdf-");
  if (!work) return pdf_error(pdf_file, "cannot create a temporary folder for Chromium");
  const std::filesystem::path profile = work->path() / "profile";
  const std::filesystem::path output = work->path() / "record.pdf";
  const std::filesystem::path log = work->path() / "chromium.log";
  std::filesystem::create_directory(profile);

  const std::vector<std::string> args = chromium_print_arguments(chromium, html_file, output, profile);
  std::vector<char*> argv;
  for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);

  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDIN_FILENO, "/dev/null", O_RDONLY, 0);
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, log.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
  posix_spawn_file_actions_adddup2(&actions, STDOUT_FILENO, STDERR_FILENO);
  posix_spawnattr_t attributes;
  posix_spawnattr_init(&attributes);
  // Its own process group, so that a hung renderer and its helpers can be stopped together.
  posix_spawnattr_setflags(&attributes, POSIX_SPAWN_SETPGROUP);
  posix_spawnattr_setpgroup(&attributes, 0);
  pid_t pid = 0;
  const int spawned = posix_spawn(&pid, chromium.c_str(), &actions, &attributes, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  posix_spawnattr_destroy(&attributes);
  if (spawned != 0) return pdf_error(pdf_file, fmt::format("cannot start {}", chromium.string()));

  const auto deadline = std::chrono::steady_clock::now() + timeout;
  int status = 0;
  while (true) {
    const pid_t done = ::waitpid(pid, &status, WNOHANG);
    if (done == pid) break;
    if (done < 0 && errno != EINTR) return pdf_error(pdf_file, "lost track of Chromium");
    if (std::chrono::steady_clock::now() > deadline) {
      ::kill(-pid, SIGKILL);
      ::waitpid(pid, &status, 0);
      return pdf_error(pdf_file, fmt::format("Chromium did not finish within {} s", timeout.count()));
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(50));
  }
  if (!WIFEXITED(status) || WEXITSTATUS(status) != 0 || !looks_like_pdf(output)) {
    return pdf_error(pdf_file, fmt::format("Chromium could not print the record (exit status {}): {}",
                                           WIFEXITED(status) ? WEXITSTATUS(status) : -1, last_line(log)));
  }
  std::error_code ec;
  std::filesystem::rename(output, pdf_file, ec);
  if (ec) {  // another file system: copy beside the target, then rename there
    std::filesystem::path partial = pdf_file;
    partial += ".partial";
    std::filesystem::copy_file(output, partial, std::filesystem::copy_options::overwrite_existing, ec);
    if (!ec) std::filesystem::rename(partial, pdf_file, ec);
    if (ec) {
      std::filesystem::remove(partial, ec);
      return pdf_error(pdf_file, "cannot write the PDF");
    }
  }
  return pdf_file;
}

Expected<std::filesystem::path> write_pdf(const check::PlanCheck& check,
                                          const std::filesystem::path& pdf_file,
                                          const std::filesystem::path& chromium, const HtmlOptions& options) {
  auto work = TemporaryFolder::create("countersign-html-");
  if (!work) return pdf_error(pdf_file, "cannot create a temporary folder for the HTML record");
  std::filesystem::path html;
  TRY_ASSIGN(html, write_html(check, work->path() / "record.html", options));
  return print_pdf(html, pdf_file, chromium);
}

}  // namespace countersign::report
