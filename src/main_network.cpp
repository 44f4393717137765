// countersign-network: every command, including those that use the DICOM network (watch, receive,
// send, check --send-to). countersign hands those over to it.

#include <countersign/cli/commands.hpp>

#include <unistd.h>
#include <iostream>

int main(int argc, char** argv) {
  return countersign::cli::run(
      argc, argv, {std::cout, std::cerr, ::isatty(STDOUT_FILENO) == 1, ::isatty(STDERR_FILENO) == 1},
      countersign::cli::network_program_parts());
}
