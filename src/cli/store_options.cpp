#include "store_options.hpp"

#include <pwd.h>
#include <unistd.h>

#include <cstdlib>

namespace countersign::cli {

namespace fs = std::filesystem;

void add_store_options(CLI::App& command, StoreFlags& flags) {
  command.add_option("--db", flags.db,
                     "the history: an SQLite file or a PostgreSQL connection URI (postgresql://…) "
                     "(default: RESULTS/history.sqlite with --results, else ./history.sqlite)");
  command.add_option("--results", flags.results, "a service's results folder (its history.sqlite and files)");
}

store::StoreLocation store_location_from(const StoreFlags& flags) {
  if (!flags.db.empty()) return store::StoreLocation::parse(flags.db);
  const fs::path file =
      flags.results.empty() ? fs::path{"history.sqlite"} : store::default_history_file(flags.results);
  return store::StoreLocation{store::Backend::sqlite, file.string()};
}

std::optional<fs::path> results_folder_from(const StoreFlags& flags) {
  if (!flags.results.empty()) return fs::path{flags.results};
  const store::StoreLocation location = store_location_from(flags);
  if (location.backend != store::Backend::sqlite) return std::nullopt;
  const fs::path parent = fs::path{location.text}.parent_path();
  return parent.empty() ? fs::path{"."} : parent;
}

Expected<std::unique_ptr<store::Store>> open_store(const StoreFlags& flags, store::Access access) {
  return store::Store::open(store_location_from(flags), access);
}

std::string operating_system_user() {
  // The account, not $USER (which anyone can set); the name when the system knows one.
  const uid_t uid = ::geteuid();
  if (const passwd* account = ::getpwuid(uid); account != nullptr && account->pw_name != nullptr)
    return account->pw_name;
  return "uid " + std::to_string(uid);
}

std::string brief_hash(const std::string& hash) {
  return hash.size() > 8 ? hash.substr(0, 8) + "\u2026" : hash;
}

std::string inputs_changed_text(const store::CheckRecord& check) {
  std::string text;
  for (const auto& change : check.inputs_changed) {
    const bool software = change.input == "software_version";
    const std::string input = change.input == "beam_data"          ? "beam data"
                              : change.input == "tolerance_policy" ? "tolerance policy"
                                                                   : "software";
    text += (text.empty() ? "" : ", ") + input + " " + (software ? change.from : brief_hash(change.from)) +
            " \u2192 " + (software ? change.to : brief_hash(change.to));
  }
  return text;
}

}  // namespace countersign::cli
