#pragma once

// File access of the loader: table paths confined to their folder, reading, and the library
// fingerprint (beamdata/FORMAT.md "Library fingerprint").

#include <countersign/beamdata/sha256.hpp>

#include <filesystem>
#include <optional>
#include <string>
#include <variant>

namespace countersign::beamdata::detail {

[[nodiscard]] std::optional<std::string> read_file(const std::filesystem::path& file);

// Where a manifest's relative table path leads, or why it may not be used: empty, a backslash, an
// absolute path, a ".." component, a file that does not exist, or (after symbolic links) a file
// outside `folder`. The string is one sentence naming the path.
[[nodiscard]] std::variant<std::filesystem::path, std::string> confined_path(
    const std::filesystem::path& folder, const std::string& relative);

// The same rules for a file about to be written (it need not exist yet): its deepest existing
// ancestor, resolved, must lie inside `folder`.
[[nodiscard]] std::variant<std::filesystem::path, std::string> confined_new_path(
    const std::filesystem::path& folder, const std::string& relative);

// The library fingerprint: a SHA-256 over "<name>\n<size>\n<bytes>" records in a fixed order.
class Fingerprint {
 public:
  void add(const std::string& name, const std::string& bytes) {
    hash_.update(name + "\n" + std::to_string(bytes.size()) + "\n");
    hash_.update(bytes);
  }
  [[nodiscard]] std::string hex_digest() { return hash_.hex_digest(); }

 private:
  Sha256 hash_;
};

// A folder's own name, however the user spelt the path ("dir/", ".", "../x").
[[nodiscard]] std::string folder_name(const std::filesystem::path& folder);

}  // namespace countersign::beamdata::detail
