#pragma once

// Runs a program the operator named (an alert for a flagged plan): argv as given, never through a
// shell, in a process group of its own, with the signals a normal program expects, its output
// captured (the first few kilobytes) for the log, and stopped when it runs too long.

#include <countersign/util/error.hpp>

#include <atomic>
#include <chrono>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace countersign::service {

// The words of a command line, split as a shell would split them but with nothing else a shell
// does (no variables, globs, redirections or pipes): words separated by blanks, '…' and "…" group
// (a backslash escapes the next character outside '…'). Errors (kind usage) name `option`.
[[nodiscard]] Expected<std::vector<std::string>> split_command_words(std::string_view text,
                                                                     std::string_view option);

// The program `name` resolves to: itself when it contains a '/', else the first executable of that
// name on PATH. An error (kind usage, naming `option`) when there is none.
[[nodiscard]] Expected<std::string> find_program(const std::string& name, std::string_view option);

struct ProgramOutcome {
  bool started = false;
  bool succeeded = false;  // exited with status 0
  std::string how;         // "exit status 3", "killed by signal 9", "stopped after 60 s", "cannot start: ..."
  std::string output;      // the first kilobytes of its standard output and error
};

// Runs `argv` with `environment` added to ours, waits up to `timeout` (then SIGTERM to its group,
// and SIGKILL 5 s later); `cancel` (when set) stops it the same way.
[[nodiscard]] ProgramOutcome run_program(const std::vector<std::string>& argv,
                                         const std::vector<std::pair<std::string, std::string>>& environment,
                                         std::chrono::seconds timeout,
                                         const std::atomic<bool>* cancel = nullptr);

}  // namespace countersign::service
