#include <countersign/web/users.hpp>

#include <sodium.h>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>

namespace countersign::web {

namespace fs = std::filesystem;

namespace {

Error file_error(ErrorKind kind, const fs::path& file, const std::string& message) {
  return Error{kind, file.string(), "", "", message};
}

bool sodium_ready() {
  // sodium_init is safe to call more than once and from several threads; < 0 means unusable.
  return sodium_init() >= 0;
}

// A hash to verify against when the user is unknown, so that an unknown name costs as much time
// as a wrong password (made once, on first use).
const std::string& decoy_hash() {
  static const std::string hash = [] {
    auto made = hash_password("countersign decoy password");
    return made ? made.value() : std::string{};
  }();
  return hash;
}

}  // namespace

std::string_view to_string(Role role) { return role == Role::reviewer ? "reviewer" : "viewer"; }

std::optional<Role> role_from_string(std::string_view word) {
  if (word == "viewer") return Role::viewer;
  if (word == "reviewer") return Role::reviewer;
  return std::nullopt;
}

bool is_valid_user_name(std::string_view name) {
  if (name.empty() || name.size() > 64) return false;
  return std::all_of(name.begin(), name.end(), [](char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '.' ||
           c == '_' || c == '-';
  });
}

Expected<std::string> hash_password(std::string_view password) {
  if (!sodium_ready()) return Error{ErrorKind::io, "", "", "", "libsodium could not be initialised"};
  std::string hash(crypto_pwhash_STRBYTES, '\0');
  if (crypto_pwhash_str_alg(hash.data(), password.data(), password.size(), crypto_pwhash_OPSLIMIT_INTERACTIVE,
                            crypto_pwhash_MEMLIMIT_INTERACTIVE, crypto_pwhash_ALG_ARGON2ID13) != 0) {
    return Error{ErrorKind::io, "", "", "", "not enough memory to hash the password (Argon2id)"};
  }
  hash.resize(std::strlen(hash.c_str()));
  return hash;
}

bool password_matches(std::string_view password, const std::string& hash) {
  if (!sodium_ready()) return false;
  const std::string& against = hash.empty() ? decoy_hash() : hash;
  const bool matches = crypto_pwhash_str_verify(against.c_str(), password.data(), password.size()) == 0;
  return matches && !hash.empty();
}

fs::path default_users_file(const fs::path& folder) { return folder / "web-users.txt"; }

Expected<UserList> UserList::load(const fs::path& file) {
  UserList list;
  struct stat info {};
  if (::stat(file.c_str(), &info) != 0) {
    if (errno == ENOENT) return list;
    return file_error(ErrorKind::io, file,
                      std::string{"cannot read the users file: "} + std::strerror(errno));
  }
  if ((info.st_mode & (S_IRWXG | S_IRWXO)) != 0) {
    return file_error(ErrorKind::io, file,
                      "the users file may be read or changed by others; make it private (chmod 600)");
  }
  std::ifstream in(file);
  if (!in) return file_error(ErrorKind::io, file, "cannot read the users file");
  std::string line;
  for (int number = 1; std::getline(in, line); ++number) {
    if (line.empty() || line.front() == '#') continue;
    std::istringstream fields(line);
    User user;
    std::string role;
    std::getline(fields, user.name, '\t');
    std::getline(fields, role, '\t');
    std::getline(fields, user.password_hash);
    const auto parsed_role = role_from_string(role);
    if (!is_valid_user_name(user.name) || !parsed_role || user.password_hash.rfind("$argon2id$", 0) != 0) {
      return file_error(
          ErrorKind::bad_configuration, file,
          "line " + std::to_string(number) +
              " is not NAME<TAB>viewer|reviewer<TAB>Argon2id hash (use `countersign user add`)");
    }
    user.role = *parsed_role;
    list.users_.push_back(std::move(user));
  }
  return list;
}

const User* UserList::find(std::string_view name) const {
  const auto it = std::find_if(users_.begin(), users_.end(), [&](const User& u) { return u.name == name; });
  return it == users_.end() ? nullptr : &*it;
}

Expected<void> UserList::add(const std::string& name, Role role, std::string_view password) {
  if (!is_valid_user_name(name)) {
    return Error{ErrorKind::usage, "", "NAME", "",
                 "\"" + name + "\" is not a user name (1 to 64 letters, digits, '.', '_' or '-')"};
  }
  if (find(name) != nullptr) {
    return Error{ErrorKind::usage, "", "NAME", "",
                 "user " + name + " exists already (`countersign user remove " + name + "` first)"};
  }
  if (password.size() < minimum_password_length) {
    return Error{ErrorKind::usage, "", "password", "",
                 "the password is shorter than " + std::to_string(minimum_password_length) + " characters"};
  }
  auto hash = hash_password(password);
  if (!hash) return hash.error();
  users_.push_back(User{name, role, std::move(hash.value())});
  return {};
}

bool UserList::remove(std::string_view name) {
  const auto before = users_.size();
  std::erase_if(users_, [&](const User& u) { return u.name == name; });
  return users_.size() != before;
}

Expected<void> UserList::save(const fs::path& file) const {
  std::string text = "# countersign web users: NAME<TAB>ROLE<TAB>Argon2id hash (countersign user add)\n";
  for (const auto& user : users_) {
    text += user.name + "\t" + std::string{to_string(user.role)} + "\t" + user.password_hash + "\n";
  }
  const fs::path temporary = file.string() + ".tmp";
  const int fd = ::open(temporary.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0600);
  if (fd < 0) return file_error(ErrorKind::io, file, std::string{"cannot write: "} + std::strerror(errno));
  // A file left from an earlier run keeps its mode with O_CREAT: set it.
  const bool written = ::fchmod(fd, 0600) == 0 &&
                       ::write(fd, text.data(), text.size()) == static_cast<ssize_t>(text.size()) &&
                       ::fsync(fd) == 0;
  ::close(fd);
  if (!written || ::rename(temporary.c_str(), file.c_str()) != 0) {
    ::unlink(temporary.c_str());
    return file_error(ErrorKind::io, file, std::string{"cannot write: "} + std::strerror(errno));
  }
  return {};
}

}  // namespace countersign::web
