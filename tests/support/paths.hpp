#pragma once

// Where tests find the source tree, the built program and an interpreter that imports pydicom.

#include <chrono>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>

namespace countersign::test {

// The repository root (COUNTERSIGN_SOURCE_DIR, set by CTest).
[[nodiscard]] std::filesystem::path source_dir();
// The built `countersign` program (COUNTERSIGN_BINARY, set by CTest).
[[nodiscard]] std::filesystem::path program();

struct CommandOutput {
  int exit_code = -1;
  std::string out;
  std::string err;
};
// Runs a shell command line, capturing stdout and stderr.
[[nodiscard]] CommandOutput run_command(const std::string& command_line);

// A Python interpreter that can `import pydicom`, or nullopt (Debian's
// /usr/bin/python3 has it even when another python3 comes first on PATH).
[[nodiscard]] std::optional<std::string> python_with_pydicom();

// The whole content of a file; empty when it cannot be read (a log not written yet).
[[nodiscard]] std::string file_text(const std::filesystem::path& file);

// Polls `condition` every 20 ms until it holds or `timeout` passes; its last answer.
[[nodiscard]] bool wait_until(const std::function<bool()>& condition, std::chrono::milliseconds timeout);

// A fresh empty directory under the system temporary directory, removed by the caller.
[[nodiscard]] std::filesystem::path make_temp_dir(const std::string& prefix);

// Shell-quotes one argument.
[[nodiscard]] std::string quote(const std::string& argument);

}  // namespace countersign::test
