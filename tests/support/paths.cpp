#include "support/paths.hpp"

#include <sys/wait.h>
#include <array>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <random>
#include <sstream>
#include <stdexcept>
#include <thread>

namespace countersign::test {

namespace {
std::string env_or_throw(const char* name) {
  const char* value = std::getenv(name);
  if (value == nullptr || *value == '\0')
    throw std::runtime_error(std::string{"environment variable not set: "} + name);
  return value;
}

}  // namespace

// The environment wins; the compile-time paths from tests/CMakeLists.txt cover a variable that
// CTest did not pass on.
namespace {
std::string env_or_default(const char* name, const char* fallback) {
  const char* value = std::getenv(name);
  if (value != nullptr && *value != '\0') return value;
  if (fallback != nullptr && *fallback != '\0') return fallback;
  return env_or_throw(name);
}
}  // namespace

#ifndef COUNTERSIGN_TEST_SOURCE_DIR
#define COUNTERSIGN_TEST_SOURCE_DIR ""
#endif
#ifndef COUNTERSIGN_TEST_BINARY
#define COUNTERSIGN_TEST_BINARY ""
#endif

std::filesystem::path source_dir() {
  return env_or_default("COUNTERSIGN_SOURCE_DIR", COUNTERSIGN_TEST_SOURCE_DIR);
}
std::filesystem::path program() { return env_or_default("COUNTERSIGN_BINARY", COUNTERSIGN_TEST_BINARY); }

std::string quote(const std::string& argument) {
  std::string quoted = "'";
  for (const char c : argument) quoted += (c == '\'') ? std::string{"'\\''"} : std::string(1, c);
  return quoted + "'";
}

std::filesystem::path make_temp_dir(const std::string& prefix) {
  std::random_device device;
  for (int attempt = 0; attempt < 100; ++attempt) {
    const auto candidate = std::filesystem::temp_directory_path() / (prefix + "-" + std::to_string(device()));
    if (std::filesystem::create_directory(candidate)) return candidate;
  }
  throw std::runtime_error("cannot create a temporary directory");
}

CommandOutput run_command(const std::string& command_line) {
  const auto dir = make_temp_dir("countersign-run");
  const auto out_file = dir / "out";
  const auto err_file = dir / "err";
  const std::string full =
      command_line + " >" + quote(out_file.string()) + " 2>" + quote(err_file.string()) + " </dev/null";
  const int status = std::system(full.c_str());
  CommandOutput result;
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  result.out = file_text(out_file);
  result.err = file_text(err_file);
  std::filesystem::remove_all(dir);
  return result;
}

std::optional<std::string> python_with_pydicom() {
  for (const std::string candidate : {"/usr/bin/python3", "python3"}) {
    if (run_command(candidate + " -c 'import pydicom'").exit_code == 0) return candidate;
  }
  return std::nullopt;
}

std::string file_text(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

bool wait_until(const std::function<bool()>& condition, std::chrono::milliseconds timeout) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (std::chrono::steady_clock::now() < deadline) {
    if (condition()) return true;
    std::this_thread::sleep_for(std::chrono::milliseconds{20});
  }
  return condition();
}

}  // namespace countersign::test
