#pragma once

// fsync'ed writes and renames for the outbox (internal to net). The services keep their own
// (service/private_files.hpp); both could move into util.

#include <countersign/util/error.hpp>

#include <filesystem>
#include <string_view>

namespace countersign::net::detail {

// Writes `content` to `file` (0640) and fsyncs it; the caller renames it into place.
[[nodiscard]] Expected<std::filesystem::path> write_synced(const std::filesystem::path& file,
                                                           std::string_view content);
// Copies `from` to `to` (0640) and fsyncs the copy.
[[nodiscard]] Expected<std::filesystem::path> copy_synced(const std::filesystem::path& from,
                                                          const std::filesystem::path& to);
// Replaces `target` with `content` atomically (temporary file beside it, fsync, rename).
[[nodiscard]] Expected<std::filesystem::path> replace_atomically(const std::filesystem::path& target,
                                                                 std::string_view content);
// fsync of a directory, so that renames inside it survive a power cut.
[[nodiscard]] Expected<std::filesystem::path> sync_directory(const std::filesystem::path& dir);
// Creates `dir` (and parents) with mode 0750.
[[nodiscard]] Expected<std::filesystem::path> make_private_directory(const std::filesystem::path& dir);

}  // namespace countersign::net::detail
