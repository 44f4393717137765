#include "durable_files.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <vector>

namespace countersign::net::detail {

namespace fs = std::filesystem;

namespace {

Error io_error(const fs::path& file, const std::string& what) {
  return Error{ErrorKind::io, file.string(), "", "", what + ": " + std::strerror(errno)};
}

class Fd {
 public:
  explicit Fd(int fd) : fd_(fd) {}
  Fd(const Fd&) = delete;
  Fd& operator=(const Fd&) = delete;
  ~Fd() {
    if (fd_ >= 0) ::close(fd_);
  }
  [[nodiscard]] int get() const { return fd_; }

 private:
  int fd_;
};

bool write_all(int fd, const char* data, std::size_t size) {
  while (size > 0) {
    const ssize_t written = ::write(fd, data, size);
    if (written < 0 && errno == EINTR) continue;
    if (written <= 0) return false;
    data += written;
    size -= static_cast<std::size_t>(written);
  }
  return true;
}

}  // namespace

Expected<fs::path> write_synced(const fs::path& file, std::string_view content) {
  const Fd fd{::open(file.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0640)};
  if (fd.get() < 0) return io_error(file, "cannot create");
  if (!write_all(fd.get(), content.data(), content.size()) || ::fsync(fd.get()) != 0)
    return io_error(file, "cannot write");
  return file;
}

Expected<fs::path> copy_synced(const fs::path& from, const fs::path& to) {
  const Fd in{::open(from.c_str(), O_RDONLY | O_CLOEXEC)};
  if (in.get() < 0) return io_error(from, "cannot open");
  const Fd out{::open(to.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0640)};
  if (out.get() < 0) return io_error(to, "cannot create");
  std::vector<char> buffer(1 << 16);
  for (;;) {
    const ssize_t got = ::read(in.get(), buffer.data(), buffer.size());
    if (got < 0 && errno == EINTR) continue;
    if (got < 0) return io_error(from, "cannot read");
    if (got == 0) break;
    if (!write_all(out.get(), buffer.data(), static_cast<std::size_t>(got)))
      return io_error(to, "cannot write");
  }
  if (::fsync(out.get()) != 0) return io_error(to, "cannot flush");
  return to;
}

Expected<fs::path> replace_atomically(const fs::path& target, std::string_view content) {
  fs::path temporary = target.parent_path() / ("." + target.filename().string() + ".tmp");
  if (auto written = write_synced(temporary, content); !written) return written.error();
  if (::rename(temporary.c_str(), target.c_str()) != 0) {
    const auto error = io_error(target, "cannot replace");
    ::unlink(temporary.c_str());
    return error;
  }
  return sync_directory(target.parent_path());
}

Expected<fs::path> sync_directory(const fs::path& dir) {
  const Fd fd{::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC)};
  if (fd.get() < 0 || ::fsync(fd.get()) != 0) return io_error(dir, "cannot flush the folder");
  return dir;
}

Expected<fs::path> make_private_directory(const fs::path& dir) {
  std::error_code ec;
  if (fs::is_directory(dir, ec)) return dir;
  fs::path partial;
  for (const auto& part : dir) {
    partial /= part;
    if (fs::is_directory(partial, ec)) continue;
    if (::mkdir(partial.c_str(), 0750) != 0 && errno != EEXIST)
      return io_error(partial, "cannot create the folder");
  }
  return dir;
}

}  // namespace countersign::net::detail
