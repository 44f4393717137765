#include <countersign/service/private_files.hpp>

#include <countersign/service/unique_fd.hpp>

#include <fcntl.h>
#include <stdio.h>  // renameat2, RENAME_NOREPLACE
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <string>
#include <system_error>

namespace countersign::service {

namespace fs = std::filesystem;

namespace {

Error io_error(const fs::path& file, const std::string& what, int error_number) {
  return Error{ErrorKind::io, file.string(), "", "", what + ": " + std::strerror(error_number)};
}

// Writes all of `content`, retrying short writes and interrupted calls.
bool write_all(int fd, std::string_view content) {
  const char* data = content.data();
  std::size_t left = content.size();
  while (left > 0) {
    const ssize_t written = ::write(fd, data, left);
    if (written < 0) {
      if (errno == EINTR) continue;
      return false;
    }
    data += written;
    left -= static_cast<std::size_t>(written);
  }
  return true;
}

fs::path parent_or_dot(const fs::path& file) {
  return file.has_parent_path() ? file.parent_path() : fs::path{"."};
}

// `wanted`, then "<name>.2", "<name>.3", ...
fs::path numbered_name(const fs::path& wanted, int n) {
  if (n <= 1) return wanted;
  fs::path candidate = wanted;
  candidate += "." + std::to_string(n);
  return candidate;
}

Expected<fs::path> copy_then_unlink(const fs::path& from, const fs::path& to) {
  const UniqueFd in{::open(from.c_str(), O_RDONLY | O_CLOEXEC)};
  if (!in.valid()) return io_error(from, "cannot open", errno);
  fs::path temporary = to;
  temporary += ".partial";
  {
    const UniqueFd out{::open(temporary.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0640)};
    if (!out.valid()) return io_error(temporary, "cannot create", errno);
    ::fchmod(out.get(), 0640);
    char buffer[1 << 16];
    for (;;) {
      const ssize_t got = ::read(in.get(), buffer, sizeof buffer);
      if (got < 0 && errno == EINTR) continue;
      if (got < 0) return io_error(from, "cannot read", errno);
      if (got == 0) break;
      if (!write_all(out.get(), std::string_view{buffer, static_cast<std::size_t>(got)}))
        return io_error(temporary, "cannot write", errno);
    }
    if (::fsync(out.get()) != 0) return io_error(temporary, "cannot flush to disk", errno);
  }
  if (::rename(temporary.c_str(), to.c_str()) != 0) return io_error(to, "cannot rename into place", errno);
  if (auto synced = sync_directory(parent_or_dot(to)); !synced) return synced.error();
  if (auto removed = remove_file_durably(from); !removed) return removed.error();
  return to;
}

}  // namespace

Expected<fs::path> sync_directory(const fs::path& dir) {
  const UniqueFd fd{::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)};
  if (!fd.valid()) return io_error(dir, "cannot open directory", errno);
  if (::fsync(fd.get()) != 0) return io_error(dir, "cannot flush directory to disk", errno);
  return dir;
}

Expected<fs::path> ensure_private_directory(const fs::path& dir) {
  std::error_code ec;
  if (fs::is_directory(dir, ec)) return dir;
  if (dir.has_parent_path() && dir.parent_path() != dir) {
    if (auto parent = ensure_private_directory(dir.parent_path()); !parent) return parent.error();
  }
  if (::mkdir(dir.c_str(), 0750) != 0 && errno != EEXIST)
    return io_error(dir, "cannot create directory", errno);
  // mkdir honours the umask; the mode must not depend on it.
  if (::chmod(dir.c_str(), 0750) != 0) return io_error(dir, "cannot set permissions", errno);
  if (!fs::is_directory(dir, ec)) return io_error(dir, "not a directory", ENOTDIR);
  return dir;
}

Expected<fs::path> write_file_atomically(const fs::path& target, std::string_view content,
                                         DirectorySync sync) {
  const fs::path dir = parent_or_dot(target);
  // A dot-name in the same directory: invisible to the folder watcher, and rename stays atomic.
  std::string pattern = (dir / ("." + target.filename().string() + ".XXXXXX")).string();
  const UniqueFd fd{::mkstemp(pattern.data())};
  if (!fd.valid()) return io_error(target, "cannot create a temporary file", errno);
  const fs::path temporary{pattern};
  const auto fail = [&](const std::string& what) {
    const int saved = errno;
    ::unlink(temporary.c_str());
    return io_error(target, what, saved);
  };
  if (::fchmod(fd.get(), 0640) != 0) return fail("cannot set permissions");
  if (!write_all(fd.get(), content)) return fail("cannot write");
  if (::fsync(fd.get()) != 0) return fail("cannot flush to disk");
  if (::rename(temporary.c_str(), target.c_str()) != 0) return fail("cannot rename into place");
  if (sync == DirectorySync::now) {
    if (auto synced = sync_directory(dir); !synced) return synced.error();
  }
  return target;
}

AtomicFileGroup::~AtomicFileGroup() {
  for (const Staged& staged : files_) ::unlink(staged.temporary.c_str());
}

Expected<fs::path> AtomicFileGroup::add(const fs::path& target, std::string_view content) {
  const fs::path dir = parent_or_dot(target);
  std::error_code ec;
  if (!fs::is_directory(dir, ec)) {
    // A folder of its own per plan: made now (0750), its entry made durable at commit.
    if (auto made = ensure_private_directory(dir); !made) return made.error();
    created_.push_back(dir);
  }
  std::string pattern = (dir / ("." + target.filename().string() + ".XXXXXX")).string();
  const UniqueFd fd{::mkstemp(pattern.data())};
  if (!fd.valid()) return io_error(target, "cannot create a temporary file", errno);
  const fs::path temporary{pattern};
  if (::fchmod(fd.get(), 0640) != 0 || !write_all(fd.get(), content)) {
    const int saved = errno;
    ::unlink(temporary.c_str());
    return io_error(target, "cannot write", saved);
  }
  files_.push_back(Staged{temporary, target});
  return temporary;
}

namespace {

// One syncfs per file system the directories are on: every dirty page and entry of it reaches the
// disk, far cheaper than an fsync per file (each commits the file system journal on its own).
Expected<std::size_t> sync_file_systems(const std::vector<fs::path>& dirs) {
  std::vector<dev_t> done;
  for (const fs::path& dir : dirs) {
    const UniqueFd fd{::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)};
    if (!fd.valid()) return io_error(dir, "cannot open directory", errno);
    struct stat info {};
    if (::fstat(fd.get(), &info) != 0) return io_error(dir, "cannot inspect directory", errno);
    if (std::find(done.begin(), done.end(), info.st_dev) != done.end()) continue;
    if (::syncfs(fd.get()) != 0) return io_error(dir, "cannot flush to disk", errno);
    done.push_back(info.st_dev);
  }
  return done.size();
}

}  // namespace

Expected<std::size_t> AtomicFileGroup::commit() {
  std::vector<fs::path> dirs;
  const auto note = [&dirs](const fs::path& dir) {
    if (std::find(dirs.begin(), dirs.end(), dir) == dirs.end()) dirs.push_back(dir);
  };
  for (const Staged& staged : files_) note(parent_or_dot(staged.target));
  for (const fs::path& dir : created_) note(parent_or_dot(dir));  // the new folder's own entry
  // The data of every temporary, in one flush.
  if (auto synced = sync_file_systems(dirs); !synced) return synced.error();
  std::size_t committed = 0;
  for (const Staged& staged : files_) {
    if (::rename(staged.temporary.c_str(), staged.target.c_str()) != 0) {
      return io_error(staged.target, "cannot rename into place", errno);
    }
    ++committed;
  }
  files_.clear();
  created_.clear();
  // The renames: a few directories are flushed one by one, many (a folder per plan) in one go.
  constexpr std::size_t few_directories = 4;
  if (dirs.size() > few_directories) {
    if (auto synced = sync_file_systems(dirs); !synced) return synced.error();
    return committed;
  }
  for (const fs::path& dir : dirs) {
    if (auto synced = sync_directory(dir); !synced) return synced.error();
  }
  return committed;
}

Expected<fs::path> move_file_durably(const fs::path& from, const fs::path& to, OnExisting on_existing,
                                     DirectorySync sync) {
  const unsigned flags = on_existing == OnExisting::pick_free_name ? RENAME_NOREPLACE : 0U;
  for (int n = 1; n < 10000; ++n) {
    const fs::path destination = numbered_name(to, n);
    if (::renameat2(AT_FDCWD, from.c_str(), AT_FDCWD, destination.c_str(), flags) == 0) {
      if (sync == DirectorySync::deferred) return destination;
      if (auto synced = sync_directory(parent_or_dot(destination)); !synced) return synced.error();
      if (parent_or_dot(from) != parent_or_dot(destination)) {
        if (auto synced = sync_directory(parent_or_dot(from)); !synced) return synced.error();
      }
      return destination;
    }
    if (errno == EEXIST && on_existing == OnExisting::pick_free_name) continue;
    if (errno == EXDEV) {
      std::error_code ec;
      if (on_existing == OnExisting::pick_free_name && fs::exists(destination, ec)) continue;
      return copy_then_unlink(from, destination);
    }
    return io_error(from, "cannot move to " + destination.string(), errno);
  }
  return io_error(to, "no free name", EEXIST);
}

Expected<fs::path> remove_file_durably(const fs::path& file, DirectorySync sync) {
  if (::unlink(file.c_str()) != 0 && errno != ENOENT) return io_error(file, "cannot remove", errno);
  if (sync == DirectorySync::deferred) return file;
  return sync_directory(parent_or_dot(file));
}

Expected<FolderLock> FolderLock::acquire(const fs::path& dir) {
  const fs::path file = dir / ".countersign.lock";
  UniqueFd fd{::open(file.c_str(), O_RDWR | O_CREAT | O_CLOEXEC, 0640)};
  if (!fd.valid()) return io_error(file, "cannot create lock file", errno);
  if (::flock(fd.get(), LOCK_EX | LOCK_NB) != 0) {
    if (errno == EWOULDBLOCK) {
      return Error{ErrorKind::usage, dir.string(), "", "",
                   "another countersign service is already using this results folder"};
    }
    return io_error(file, "cannot lock", errno);
  }
  return FolderLock{std::move(fd)};
}

std::size_t remove_stale_temporaries(const fs::path& dir) {
  const auto is_ours = [](const std::string& name) {
    if (name.size() > 8 && name.compare(name.size() - 8, 8, ".partial") == 0) return true;
    // ".<name>.XXXXXX": a leading dot and a six-character mkstemp suffix.
    if (name.size() < 9 || name.front() != '.' || name == ".countersign.lock") return false;
    const auto dot = name.rfind('.');
    return dot != 0 && name.size() - dot - 1 == 6;
  };
  std::size_t removed = 0;
  std::error_code ec;
  for (const auto& entry : fs::directory_iterator{dir, ec}) {
    std::error_code entry_ec;
    if (!entry.is_regular_file(entry_ec) || !is_ours(entry.path().filename().string())) continue;
    if (fs::remove(entry.path(), entry_ec)) ++removed;
  }
  return removed;
}

}  // namespace countersign::service
