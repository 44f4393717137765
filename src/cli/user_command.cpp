// `countersign user add NAME --role viewer|reviewer`, `user remove NAME`, `user list`: the people who may
// log in to the web view (`countersign serve`). The password is read from the terminal without echo
// (twice), or from standard input with --password-stdin; only its Argon2id hash is stored.

#include <countersign/cli/commands.hpp>
#include <countersign/util/text.hpp>
#include <countersign/web/users.hpp>

#include "store_options.hpp"

#include <termios.h>
#include <unistd.h>

#include <iostream>
#include <memory>
#include <ostream>

namespace countersign::cli {

namespace {

struct UserCommandOptions {
  StoreFlags store;
  std::string users;
  std::string name;
  std::string role;
  bool password_stdin = false;
};

Expected<std::filesystem::path> users_file(const UserCommandOptions& options) {
  if (!options.users.empty()) return std::filesystem::path{options.users};
  if (auto folder = results_folder_from(options.store)) return web::default_users_file(*folder);
  return Error{ErrorKind::usage, "", "--users", "",
               "with a PostgreSQL --db and no --results, name the users file"};
}

// One line from the terminal with echo off (restored after), or from standard input.
std::string read_secret(std::string_view prompt, bool from_stdin, Io& io) {
  std::string line;
  if (from_stdin || ::isatty(STDIN_FILENO) == 0) {
    std::getline(std::cin, line);
    return line;
  }
  io.err << prompt << std::flush;
  termios saved{};
  ::tcgetattr(STDIN_FILENO, &saved);
  termios quiet = saved;
  quiet.c_lflag &= ~static_cast<tcflag_t>(ECHO);
  ::tcsetattr(STDIN_FILENO, TCSANOW, &quiet);
  std::getline(std::cin, line);
  ::tcsetattr(STDIN_FILENO, TCSANOW, &saved);
  io.err << "\n";
  return line;
}

ExitCode fail(Io& io, const Error& error) {
  io.err << "countersign user: " << escape_control_characters(error.message()) << "\n";
  return ExitCode::bad_input;
}

ExitCode run_add(const UserCommandOptions& options, Io& io) {
  auto file = users_file(options);
  if (!file) return fail(io, file.error());
  const auto role = web::role_from_string(options.role);
  if (!role) return fail(io, Error{ErrorKind::usage, "", "--role", "", "say viewer or reviewer"});
  auto list = web::UserList::load(file.value());
  if (!list) return fail(io, list.error());
  const std::string password = read_secret("Password for " + options.name + ": ", options.password_stdin, io);
  if (!options.password_stdin && ::isatty(STDIN_FILENO) != 0 &&
      read_secret("The same again: ", false, io) != password) {
    return fail(io,
                Error{ErrorKind::usage, "", "password", "", "the two passwords differ; nothing was changed"});
  }
  if (auto added = list->add(options.name, *role, password); !added) return fail(io, added.error());
  if (auto saved = list->save(file.value()); !saved) return fail(io, saved.error());
  io.out << "user " << options.name << " (" << options.role << ") added to " << file->string() << "\n";
  return ExitCode::all_within_tolerance;
}

ExitCode run_remove(const UserCommandOptions& options, Io& io) {
  auto file = users_file(options);
  if (!file) return fail(io, file.error());
  auto list = web::UserList::load(file.value());
  if (!list) return fail(io, list.error());
  if (!list->remove(options.name)) {
    return fail(io, Error{ErrorKind::usage, file->string(), "NAME", "", "no user " + options.name});
  }
  if (auto saved = list->save(file.value()); !saved) return fail(io, saved.error());
  io.out << "user " << options.name << " removed from " << file->string()
         << " (a session already open ends when the server restarts or the session expires)\n";
  return ExitCode::all_within_tolerance;
}

ExitCode run_list(const UserCommandOptions& options, Io& io) {
  auto file = users_file(options);
  if (!file) return fail(io, file.error());
  auto list = web::UserList::load(file.value());
  if (!list) return fail(io, list.error());
  for (const auto& user : list->users()) io.out << user.name << "\t" << web::to_string(user.role) << "\n";
  return ExitCode::all_within_tolerance;
}

void add_file_options(CLI::App& command, UserCommandOptions& options) {
  command.add_option("--users", options.users,
                     "the users file (default: web-users.txt in the results folder)");
  add_store_options(command, options.store);
}

}  // namespace

void add_user_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<UserCommandOptions>();
  auto* command =
      app.add_subcommand("user", "The people who may log in to the web view (`countersign serve`).");
  command->require_subcommand(1);

  auto* add = command->add_subcommand("add",
                                      "Add a user; the password (at least 12 characters) is read from the "
                                      "terminal and kept as an Argon2id hash.");
  add->add_option("name", options->name, "the user name (letters, digits, '.', '_', '-')")->required();
  add->add_option("--role", options->role, "viewer (reads) or reviewer (also records decisions)")
      ->required()
      ->check(CLI::IsMember({"viewer", "reviewer"}));
  add->add_flag("--password-stdin", options->password_stdin,
                "read the password from standard input (one line)");
  add_file_options(*add, *options);
  add->callback([options, &context] { context.exit_code = run_add(*options, context.io); });

  auto* remove = command->add_subcommand("remove", "Remove a user.");
  remove->add_option("name", options->name, "the user name")->required();
  add_file_options(*remove, *options);
  remove->callback([options, &context] { context.exit_code = run_remove(*options, context.io); });

  auto* list = command->add_subcommand("list", "List the users and their roles (never the hashes).");
  add_file_options(*list, *options);
  list->callback([options, &context] { context.exit_code = run_list(*options, context.io); });
}

}  // namespace countersign::cli
