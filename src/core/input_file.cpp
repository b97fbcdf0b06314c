#include "core/input_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <fmt/format.h>

#include "core/error.hpp"
#include "core/machine_memory.hpp"

namespace nvsyn {
namespace {

// Why a file of this mode is not read, or nullopt for a regular file.
std::optional<std::string> kind_problem(mode_t mode, std::string_view what) {
  if (S_ISREG(mode)) return std::nullopt;
  if (S_ISDIR(mode)) return fmt::format("is a folder, not a {}", what);
  const char* kind = S_ISCHR(mode)    ? "a character device"
                     : S_ISBLK(mode)  ? "a block device"
                     : S_ISFIFO(mode) ? "a FIFO (named pipe)"
                     : S_ISSOCK(mode) ? "a socket"
                                      : "not a file";
  return fmt::format("is {}, not a regular file; a {} must be a regular file (devices and pipes such as /dev/zero "
                     "can be endless or wait for a writer forever)",
                     kind, what);
}

std::string cannot_read(std::string_view what, int error) {
  return fmt::format("cannot read the {}: {}", what, std::strerror(error));
}

// `size_bytes`: the size if known, 0 when the file grew past the limit while read.
std::string too_large(std::string_view what, std::uint64_t size_bytes, std::uint64_t max_bytes) {
  const std::string size =
      size_bytes > 0 ? "is " + format_bytes(static_cast<double>(size_bytes)) : std::string("grew while read");
  return fmt::format("{}; a {} may be at most {} (text inputs are read whole into memory)", size, what,
                     format_bytes(static_cast<double>(max_bytes)));
}

// Closes the descriptor on every way out of read_input_text.
class Descriptor {
 public:
  explicit Descriptor(int fd) : fd_(fd) {}
  ~Descriptor() {
    if (fd_ >= 0) ::close(fd_);
  }
  Descriptor(const Descriptor&) = delete;
  Descriptor& operator=(const Descriptor&) = delete;
  int get() const { return fd_; }

 private:
  int fd_;
};

}  // namespace

std::optional<std::string> input_file_problem(const std::string& path, std::string_view what,
                                              std::uint64_t* size_bytes) {
  struct stat info {};
  if (::stat(path.c_str(), &info) != 0) return cannot_read(what, errno);
  if (auto problem = kind_problem(info.st_mode, what)) return problem;
  if (::access(path.c_str(), R_OK) != 0) return cannot_read(what, errno);
  if (size_bytes) *size_bytes = static_cast<std::uint64_t>(info.st_size);
  return std::nullopt;
}

std::uint64_t check_input_file(const std::string& path, std::string_view what) {
  std::uint64_t size = 0;
  if (auto problem = input_file_problem(path, what, &size)) throw UserError({path}, "", *problem);
  return size;
}

std::string read_input_text(const std::string& path, std::string_view what, std::uint64_t max_bytes) {
  // O_NONBLOCK: opening a FIFO for reading would otherwise wait for a writer.
  const Descriptor fd(::open(path.c_str(), O_RDONLY | O_NONBLOCK | O_CLOEXEC));
  if (fd.get() < 0) {
    const int error = errno;
    struct stat info {};
    if (::stat(path.c_str(), &info) == 0)
      if (auto problem = kind_problem(info.st_mode, what)) throw UserError({path}, "", *problem);
    throw UserError({path}, "", cannot_read(what, error));
  }
  struct stat info {};
  if (::fstat(fd.get(), &info) != 0) throw UserError({path}, "", cannot_read(what, errno));
  if (auto problem = kind_problem(info.st_mode, what)) throw UserError({path}, "", *problem);
  const auto size = static_cast<std::uint64_t>(info.st_size);
  if (size > max_bytes) throw UserError({path}, "", too_large(what, size, max_bytes));

  std::string text;
  text.resize(static_cast<std::size_t>(size));
  std::size_t filled = 0;
  for (;;) {
    if (filled == text.size()) {
      // The file grew since fstat (or reports no size, as some special files do).
      if (text.size() > max_bytes) throw UserError({path}, "", too_large(what, 0, max_bytes));
      text.resize(std::min<std::uint64_t>(max_bytes + 1, std::max<std::size_t>(2 * text.size(), 4096)));
    }
    const ssize_t got = ::read(fd.get(), text.data() + filled, text.size() - filled);
    if (got < 0) {
      if (errno == EINTR) continue;
      throw UserError({path}, "", cannot_read(what, errno));
    }
    if (got == 0) break;
    filled += static_cast<std::size_t>(got);
  }
  text.resize(filled);
  return text;
}

}  // namespace nvsyn
