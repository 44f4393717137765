#include <countersign/cli/commands.hpp>

#include <iostream>
#include <unistd.h>

int main(int argc, char** argv) {
  return countersign::cli::run(argc, argv, {std::cout, std::cerr, ::isatty(STDOUT_FILENO) == 1,
                                  ::isatty(STDERR_FILENO) == 1});
}
