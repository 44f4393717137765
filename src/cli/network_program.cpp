// The parts only the network program (countersign-network) has: the services, the sender and the web view.

#include <countersign/cli/commands.hpp>

#include "check_archive_delivery.hpp"

namespace countersign::cli {

ProgramParts network_program_parts() {
  ProgramParts parts;
  parts.add_commands = [](CLI::App& app, CommandContext& context) {
    add_watch_command(app, context);
    add_receive_command(app, context);
    add_send_command(app, context);
    add_serve_command(app, context);
    add_user_command(app, context);
  };
  parts.open_archive_delivery = open_outbox_delivery;
  return parts;
}

}  // namespace countersign::cli
