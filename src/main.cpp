// countersign: every command that checks plans; the network commands are handed over to
// countersign-network (src/cli/network_handover.hpp says why).

#include <countersign/cli/commands.hpp>

#include "cli/network_handover.hpp"

#include <unistd.h>
#include <iostream>

int main(int argc, char** argv) {
  const countersign::cli::Io io{std::cout, std::cerr, ::isatty(STDOUT_FILENO) == 1,
                                ::isatty(STDERR_FILENO) == 1};
  if (countersign::cli::needs_network_program(argc, argv))
    return countersign::cli::hand_over_to_network_program(argv, io);
  return countersign::cli::run(argc, argv, io, countersign::cli::checking_program_parts(argv));
}
