// Hands the network commands over to countersign-network (network_handover.hpp says why).

#include "network_handover.hpp"

#include <unistd.h>

#include <array>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <ostream>
#include <string_view>
#include <system_error>

namespace countersign::cli {

namespace {

constexpr std::string_view network_program_name = "countersign-network";

struct StandIn {
  const char* name;
  const char* description;
};

// Sized by its initialisers, so a command added here can never leave an empty entry behind.
constexpr auto stand_ins = std::to_array<StandIn>({
    {"watch",
     "Check every RT Plan file that arrives in a folder, exactly once (run by countersign-network; "
     "`countersign watch --help` for its options)"},
    {"receive",
     "Receive RT Plans (and their CT and structure sets) over the DICOM network and check each "
     "exactly once (run by countersign-network; `countersign receive --help` for its options)"},
    {"send",
     "Send the results of a recorded check again to an archive (run by countersign-network; "
     "`countersign send --help` for its options)"},
    {"serve",
     "The department web view of the history (run by countersign-network; `countersign serve --help` for "
     "its options)"},
    {"user", "Users of the web view (run by countersign-network; `countersign user --help` for its options)"},
});

bool is_network_command(std::string_view word) {
  for (const auto& stand_in : stand_ins) {
    if (word == stand_in.name) return true;
  }
  return false;
}

}  // namespace

bool needs_network_program(int argc, const char* const* argv) {
  bool command_seen = false;
  for (int i = 1; i < argc; ++i) {
    const std::string_view word{argv[i]};
    if (word == "--send-to" || word.rfind("--send-to=", 0) == 0) return true;
    if (!command_seen && !word.empty() && word.front() != '-') {
      if (is_network_command(word)) return true;
      command_seen = true;
    }
  }
  return false;
}

int hand_over_to_network_program(const char* const* argv, Io io) {
  std::error_code error;
  const std::filesystem::path self = std::filesystem::read_symlink("/proc/self/exe", error);
  const std::filesystem::path network = self.parent_path() / network_program_name;
  if (!error) {
    // execv's argument array is not const-qualified in POSIX; it does not change the strings.
    ::execv(network.c_str(),
            const_cast<char* const*>(argv));  // NOLINT(cppcoreguidelines-pro-type-const-cast)
  }
  const int reason = error ? error.value() : errno;
  io.err << "countersign: this command is run by " << network_program_name << ", which could not be started ("
         << (error ? std::string{"/proc/self/exe"} : network.string()) << ": " << std::strerror(reason)
         << "); it is installed beside countersign\n";
  return static_cast<int>(ExitCode::internal_error);
}

ProgramParts checking_program_parts(const char* const* argv) {
  ProgramParts parts;
  parts.add_commands = [argv](CLI::App& app, CommandContext& context) {
    for (const auto& stand_in : stand_ins) {
      auto* command = app.add_subcommand(stand_in.name, stand_in.description);
      command->allow_extras()->prefix_command();
      command->callback([argv, &context] {
        context.exit_code = static_cast<ExitCode>(hand_over_to_network_program(argv, context.io));
      });
    }
  };
  return parts;
}

}  // namespace countersign::cli
