#pragma once

// The checking program (countersign) does not link the DICOM network libraries: they cost a check
// of one plan more start-up time than the check itself (README, "Performance"). Commands that need
// them — watch, receive, send, serve, user, check --send-to — are handed over to countersign-network, installed
// beside it, which has every command; the process (and its PID) stays the same.

#include <countersign/cli/commands.hpp>

namespace countersign::cli {

// Whether the command line needs the network program.
[[nodiscard]] bool needs_network_program(int argc, const char* const* argv);

// Replaces this process with the network program beside it, with the same arguments. Returns only
// when that fails, with the internal-error exit code after saying why on `io.err`.
[[nodiscard]] int hand_over_to_network_program(const char* const* argv, Io io);

// The checking program's parts: stand-ins for the network commands, so that `--help` lists them
// (they hand over if ever reached).
[[nodiscard]] ProgramParts checking_program_parts(const char* const* argv);

}  // namespace countersign::cli
