#include "library_files.hpp"

#include <algorithm>
#include <fstream>
#include <sstream>

namespace countersign::beamdata::detail {

namespace fs = std::filesystem;

std::optional<std::string> read_file(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) return std::nullopt;
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) return std::nullopt;
  return text.str();
}

namespace {

// The rules on the spelling of a manifest path; empty when it may be used.
std::string lexical_problem(const std::string& relative) {
  const std::string quoted = "'" + relative + "'";
  if (relative.empty()) return "an empty path";
  if (relative.find('\\') != std::string::npos) return quoted + " contains '\\'; write table paths with '/'";
  const fs::path named{relative};
  if (named.is_absolute() || named.has_root_name() || named.has_root_directory())
    return quoted + " is an absolute path; table paths are relative to the manifest's folder";
  for (const auto& part : named) {
    if (part == "..") return quoted + " leads out of the folder with '..'; tables must lie inside it";
  }
  return {};
}

// Empty when `real` (resolved) lies inside the resolved folder.
std::string outside_problem(const fs::path& folder, const fs::path& real, const std::string& relative) {
  std::error_code ec;
  const fs::path real_folder = fs::canonical(folder, ec);
  if (ec) return "'" + relative + "': cannot resolve " + folder.string() + " (" + ec.message() + ")";
  const auto [folder_end, file_end] =
      std::mismatch(real_folder.begin(), real_folder.end(), real.begin(), real.end());
  if (folder_end != real_folder.end())
    return "'" + relative + "' is a symbolic link to " + real.string() + ", outside " + real_folder.string();
  return {};
}

}  // namespace

std::variant<fs::path, std::string> confined_path(const fs::path& folder, const std::string& relative) {
  if (auto why = lexical_problem(relative); !why.empty()) return why;
  const fs::path path = folder / relative;
  std::error_code ec;
  if (!fs::is_regular_file(path, ec)) return "'" + relative + "', which does not exist in " + folder.string();
  // Symbolic links: the file, once resolved, must still lie inside the (resolved) folder.
  const fs::path real = fs::canonical(path, ec);
  if (ec) return "'" + relative + "': cannot resolve the path (" + ec.message() + ")";
  if (auto why = outside_problem(folder, real, relative); !why.empty()) return why;
  return path;
}

std::variant<fs::path, std::string> confined_new_path(const fs::path& folder, const std::string& relative) {
  if (auto why = lexical_problem(relative); !why.empty()) return why;
  const fs::path path = folder / relative;
  fs::path existing = path;
  std::error_code ec;
  while (!fs::exists(fs::symlink_status(existing, ec)) && existing.has_parent_path() && existing != folder)
    existing = existing.parent_path();
  const fs::path real = fs::canonical(existing, ec);
  if (ec) return "'" + relative + "': cannot resolve the path (" + ec.message() + ")";
  if (auto why = outside_problem(folder, real, relative); !why.empty()) return why;
  return path;
}

std::string folder_name(const fs::path& folder) {
  std::error_code ec;
  const fs::path canonical = fs::weakly_canonical(folder, ec);
  const fs::path named = ec ? folder.lexically_normal() : canonical;
  return (named.has_filename() ? named.filename() : named.parent_path().filename()).generic_string();
}

}  // namespace countersign::beamdata::detail
