#pragma once

// The people who may use the web view: a small file of one line per user,
//
//   NAME <TAB> viewer|reviewer <TAB> $argon2id$v=19$m=...,t=...,p=...$salt$hash
//
// written with mode 0600 (the file is refused when others may read it). Passwords are kept only as
// Argon2id hashes (libsodium's crypto_pwhash_str_alg with ARGON2ID13, its "interactive" limits).

#include <countersign/util/error.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace countersign::web {

enum class Role { viewer, reviewer };
[[nodiscard]] std::string_view to_string(Role role);
[[nodiscard]] std::optional<Role> role_from_string(std::string_view word);

struct User {
  std::string name;
  Role role = Role::viewer;
  std::string password_hash;  // Argon2id, libsodium's string form
};

// Letters, digits, '.', '_' and '-', 1 to 64 characters: a name that needs no escaping anywhere.
[[nodiscard]] bool is_valid_user_name(std::string_view name);

// At least this many characters (common practice, no source).
inline constexpr std::size_t minimum_password_length = 12;

// The hash of a password (slow on purpose); an error when libsodium cannot allocate its memory.
[[nodiscard]] Expected<std::string> hash_password(std::string_view password);
// True when `password` matches `hash`. Takes as long for a wrong password as for a right one.
[[nodiscard]] bool password_matches(std::string_view password, const std::string& hash);

// The users file beside a results folder or history file.
[[nodiscard]] std::filesystem::path default_users_file(const std::filesystem::path& folder);

class UserList {
 public:
  // Reads the file; a missing file is an empty list. Refused (kind io) when group or others may
  // read or write it, and (kind bad_configuration) for a malformed line, naming the file and the line.
  [[nodiscard]] static Expected<UserList> load(const std::filesystem::path& file);

  [[nodiscard]] const User* find(std::string_view name) const;
  [[nodiscard]] const std::vector<User>& users() const { return users_; }

  // Adds a user; refused (kind usage) for a malformed or existing name, or a short password.
  [[nodiscard]] Expected<void> add(const std::string& name, Role role, std::string_view password);
  // Removes a user; false when there was none of that name.
  bool remove(std::string_view name);

  // Writes the file (a temporary file of mode 0600 in the same folder, then renamed).
  [[nodiscard]] Expected<void> save(const std::filesystem::path& file) const;

 private:
  std::vector<User> users_;
};

}  // namespace countersign::web
