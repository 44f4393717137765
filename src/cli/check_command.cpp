#include <countersign/cli/commands.hpp>

namespace countersign::cli {

// Placeholder registration so the program builds while the command is written.
void add_check_command(CLI::App& app, CommandContext& context) {
  auto* command = app.add_subcommand("check", "(being written)");
  command->callback([&context] { context.exit_code = ExitCode::bad_input; });
}

}  // namespace countersign::cli
