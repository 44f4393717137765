#pragma once

// The `countersign` command line: one registration function per subcommand, each in its own
// source file under src/cli/. A command writes its exit code into the shared slot when it runs.

#include <countersign/util/exit_code.hpp>

#include <CLI/CLI.hpp>
#include <iosfwd>

namespace countersign::cli {

struct Io {
  std::ostream& out;
  std::ostream& err;
  bool out_is_terminal = false;  // progress indicators and colour only on a terminal
  bool err_is_terminal = false;  // the progress line goes to the error stream
};

struct CommandContext {
  Io io;
  ExitCode exit_code = ExitCode::all_within_tolerance;
};

void add_show_command(CLI::App& app, CommandContext& context);
void add_check_command(CLI::App& app, CommandContext& context);
void add_beamdata_command(CLI::App& app, CommandContext& context);
void add_selftest_command(CLI::App& app, CommandContext& context);
void add_watch_command(CLI::App& app, CommandContext& context);
void add_receive_command(CLI::App& app, CommandContext& context);
void add_history_command(CLI::App& app, CommandContext& context);
void add_explain_command(CLI::App& app, CommandContext& context);
void add_review_command(CLI::App& app, CommandContext& context);
void add_audit_command(CLI::App& app, CommandContext& context);
void add_send_command(CLI::App& app, CommandContext& context);
void add_serve_command(CLI::App& app, CommandContext& context);
void add_user_command(CLI::App& app, CommandContext& context);

// Parses the arguments, runs the chosen subcommand and returns the process exit code.
[[nodiscard]] int run(int argc, const char* const* argv, Io io);

}  // namespace countersign::cli
