#pragma once

// Durable, private file operations for the services. Results, quarantined files and the history
// hold patient data: directories are created 0750 and files 0640, whatever the umask. Every write
// that must survive a crash is fsync'ed, and so is the directory entry that names it.

#include <countersign/service/unique_fd.hpp>
#include <countersign/util/error.hpp>

#include <cstddef>
#include <filesystem>
#include <string_view>
#include <vector>

namespace countersign::service {

inline constexpr std::filesystem::perms private_directory_perms = std::filesystem::perms{0750};
inline constexpr std::filesystem::perms private_file_perms = std::filesystem::perms{0640};

// Creates `dir` and any missing parents with mode 0750; an existing directory is left as it is.
[[nodiscard]] Expected<std::filesystem::path> ensure_private_directory(const std::filesystem::path& dir);

// Whether a call makes its directory entry durable itself (fsync of the directory) or leaves that
// to the caller, who syncs the directory once after several files, or does not need it at all.
enum class DirectorySync { now, deferred };

// Replaces `target` atomically with `content`: a temporary file in the same directory (0640), fsync,
// rename over the target, fsync of the directory. A reader sees the old file or the new, never a part.
[[nodiscard]] Expected<std::filesystem::path> write_file_atomically(const std::filesystem::path& target,
                                                                    std::string_view content,
                                                                    DirectorySync sync = DirectorySync::now);

// What to do when the destination of a move already exists.
enum class OnExisting { pick_free_name, replace };

// Moves `from` to `to` durably: rename when on the same file system, otherwise copy, fsync and unlink.
// With pick_free_name an existing `to` is kept and the file gets "<name>.2", "<name>.3", ...
// Returns the final path.
[[nodiscard]] Expected<std::filesystem::path> move_file_durably(const std::filesystem::path& from,
                                                                const std::filesystem::path& to,
                                                                OnExisting on_existing,
                                                                DirectorySync sync = DirectorySync::now);

// Removes a file and makes the removal durable; a file already gone is not an error.
[[nodiscard]] Expected<std::filesystem::path> remove_file_durably(const std::filesystem::path& file,
                                                                  DirectorySync sync = DirectorySync::now);

// fsync of a directory, so that a rename or unlink inside it survives a crash.
[[nodiscard]] Expected<std::filesystem::path> sync_directory(const std::filesystem::path& dir);

// Files replaced atomically and made durable together, for a batch of results: add() writes each to
// a hidden temporary file beside its target (0640, not yet flushed; a missing folder of the target
// is created 0750); commit() flushes them all with one syncfs of their file system, renames them
// into place in the order added (a later file of the same target wins) and makes the renames
// durable (an fsync of each of a few directories, or one more syncfs for many). A reader sees each target old
// or new, never a part. Temporaries not committed are removed on destruction; those a crash leaves are
// removed by remove_stale_temporaries.
class AtomicFileGroup {
 public:
  AtomicFileGroup() = default;
  AtomicFileGroup(const AtomicFileGroup&) = delete;
  AtomicFileGroup& operator=(const AtomicFileGroup&) = delete;
  ~AtomicFileGroup();

  // Writes `content` for `target`; returns the temporary file.
  [[nodiscard]] Expected<std::filesystem::path> add(const std::filesystem::path& target,
                                                    std::string_view content);
  // Flush, rename, sync directories; returns how many files were put in place. After an error no
  // target has been replaced by a file that is not on disk.
  [[nodiscard]] Expected<std::size_t> commit();
  [[nodiscard]] std::size_t size() const { return files_.size(); }

 private:
  struct Staged {
    std::filesystem::path temporary;
    std::filesystem::path target;
  };
  std::vector<Staged> files_;
  std::vector<std::filesystem::path> created_;  // folders made by add(), to be made durable
};

// An exclusive lock on a folder for as long as this object lives (flock on "<dir>/.countersign.lock";
// the kernel releases it when the process dies, even by SIGKILL). One service per results folder:
// two would race for the same inbox files and history.
class FolderLock {
 public:
  [[nodiscard]] static Expected<FolderLock> acquire(const std::filesystem::path& dir);

 private:
  explicit FolderLock(UniqueFd fd) : fd_(std::move(fd)) {}
  UniqueFd fd_;
};

// Removes what an interrupted write of ours leaves behind in `dir`: hidden temporary files made by
// write_file_atomically (".<name>.XXXXXX") and "*.partial" copies. Call only while holding the
// FolderLock of the service that owns `dir`. Returns how many were removed.
std::size_t remove_stale_temporaries(const std::filesystem::path& dir);

}  // namespace countersign::service
