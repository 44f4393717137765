#pragma once

// The `countersign` command line: one registration function per subcommand, each in its own
// source file under src/cli/. A command writes its exit code into the shared slot when it runs.

#include <countersign/util/error.hpp>
#include <countersign/util/exit_code.hpp>

#include <CLI/CLI.hpp>
#include <functional>
#include <iosfwd>
#include <memory>

namespace countersign::cli {

// The archive side of `check --send-to` (archive_delivery.hpp).
struct ArchiveRequest;
class ArchiveDelivery;
using ArchiveDeliveryOpener = std::function<Expected<std::unique_ptr<ArchiveDelivery>>(
    const ArchiveRequest& request, std::ostream& notes)>;

struct Io {
  std::ostream& out;
  std::ostream& err;
  bool out_is_terminal = false;  // progress indicators and colour only on a terminal
  bool err_is_terminal = false;  // the progress line goes to the error stream
};

struct CommandContext {
  Io io;
  ExitCode exit_code = ExitCode::all_within_tolerance;
  ArchiveDeliveryOpener open_archive_delivery;  // empty in the program without the network side
};

// What a program adds to the commands every program has (show, check, explain, ...): the network
// program adds watch, receive and send and the archive side of `check --send-to`; the checking
// program adds stand-ins that hand those over to the network program (src/main.cpp).
struct ProgramParts {
  std::function<void(CLI::App&, CommandContext&)> add_commands;
  ArchiveDeliveryOpener open_archive_delivery;
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
[[nodiscard]] int run(int argc, const char* const* argv, Io io, const ProgramParts& parts);

// The network program's parts (src/cli/network_program.cpp, linked only into countersign-network).
[[nodiscard]] ProgramParts network_program_parts();

}  // namespace countersign::cli
