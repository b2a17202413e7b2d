// Write-to-temporary-then-rename output files; see atomic_file.hpp.
#include "baroz/output/atomic_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <system_error>
#include <utility>

#include "baroz/core/error.hpp"

namespace baroz {
namespace {

/// strerror text in lower case, e.g. "permission denied" (thread-safe).
std::string error_text(int error_number) {
  std::string text = std::generic_category().message(error_number);
  for (char& c : text) {
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  }
  return text;
}

/// The process's file mode creation mask. Read from /proc/self/status
/// (Linux >= 4.7) because calling umask() to read it briefly changes it for
/// every thread; the umask() round trip is only the fallback.
mode_t current_umask() {
  std::ifstream status("/proc/self/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("Umask:", 0) == 0) {
      return static_cast<mode_t>(std::strtoul(line.c_str() + 6, nullptr, 8) & 0777);
    }
  }
  const mode_t mask = ::umask(022);
  ::umask(mask);
  return mask;
}

}  // namespace

AtomicFile::AtomicFile(std::string target_path)
    : target_path_(std::move(target_path)),
      buffer_(new char[kBufferSize]) {  // uninitialised on purpose
  const std::size_t slash = target_path_.rfind('/');
  const std::string dir =
      slash == std::string::npos ? std::string() : target_path_.substr(0, slash + 1);
  const std::string name =
      slash == std::string::npos ? target_path_ : target_path_.substr(slash + 1);
  if (name.empty()) fail(target_path_.empty() ? ENOENT : EISDIR);
  if (name == "." || name == "..") fail(EISDIR);

  // A target that exists and is not a regular file (/dev/null, /dev/stdout,
  // a FIFO) cannot be replaced by a rename: write to it directly.
  struct stat info {};
  if (::stat(target_path_.c_str(), &info) == 0 && !S_ISREG(info.st_mode) &&
      !S_ISDIR(info.st_mode)) {
    do {
      fd_ = ::open(target_path_.c_str(), O_WRONLY | O_CLOEXEC);
    } while (fd_ < 0 && errno == EINTR);
    if (fd_ < 0) fail(errno);
    direct_ = true;
    return;
  }

  temp_path_ = dir + "." + name + ".tmp.XXXXXX";
  fd_ = ::mkostemp(temp_path_.data(), O_CLOEXEC);
  if (fd_ < 0) {
    const int error_number = errno;
    temp_path_.clear();
    fail(error_number);
  }
  // mkstemp creates mode 0600; give the file the mode open(O_CREAT, 0666)
  // would have given it.
  if (::fchmod(fd_, 0666 & ~current_umask()) != 0) {
    const int error_number = errno;
    ::close(fd_);
    fd_ = -1;
    ::unlink(temp_path_.c_str());
    temp_path_.clear();
    fail(error_number);
  }
}

AtomicFile::AtomicFile(AtomicFile&& other) noexcept
    : target_path_(std::move(other.target_path_)),
      temp_path_(std::exchange(other.temp_path_, std::string())),
      buffer_(std::move(other.buffer_)),
      used_(std::exchange(other.used_, kBufferSize)),  // full: writes fail
      fd_(std::exchange(other.fd_, -1)),
      committed_(other.committed_),
      direct_(other.direct_) {}

AtomicFile::~AtomicFile() {
  if (fd_ >= 0) ::close(fd_);
  if (!committed_ && !temp_path_.empty()) ::unlink(temp_path_.c_str());
}

void AtomicFile::fail(int error_number) const {
  throw output_error("cannot write '" + target_path_ + "': " +
                     error_text(error_number));
}

void AtomicFile::write_fd(const char* data, std::size_t size) {
  while (size > 0) {
    const ssize_t n = ::write(fd_, data, size);
    if (n < 0) {
      if (errno == EINTR) continue;
      fail(errno);
    }
    data += n;
    size -= static_cast<std::size_t>(n);
  }
}

void AtomicFile::write_slow(const char* data, std::size_t size) {
  if (fd_ < 0) fail(EBADF);  // after commit()
  flush();
  if (size >= kBufferSize) {
    write_fd(data, size);  // large block: no copy
  } else {
    std::memcpy(buffer_.get(), data, size);
    used_ = size;
  }
}

void AtomicFile::flush() {
  if (used_ == 0) return;
  if (fd_ < 0) fail(EBADF);
  const std::size_t n = used_;
  used_ = 0;  // on failure the data is dropped; the file is not committed anyway
  write_fd(buffer_.get(), n);
}

void AtomicFile::commit() {
  if (committed_) return;
  if (fd_ < 0) fail(EBADF);
  flush();
  if (direct_) {
    const int fd = std::exchange(fd_, -1);
    used_ = kBufferSize;
    if (::close(fd) != 0) fail(errno);
    committed_ = true;
    return;
  }
  if (::fsync(fd_) != 0) fail(errno);
  const int fd = std::exchange(fd_, -1);
  used_ = kBufferSize;  // "full" buffer: any later write() reaches fail()
  if (::close(fd) != 0) fail(errno);
  if (std::rename(temp_path_.c_str(), target_path_.c_str()) != 0) fail(errno);
  committed_ = true;
  // Make the rename itself durable: fsync the directory (best effort; not
  // every file system supports it, and the data is already in place).
  const std::size_t slash = target_path_.rfind('/');
  const std::string dir =
      slash == std::string::npos ? std::string(".")
                                 : target_path_.substr(0, slash == 0 ? 1 : slash);
  const int dir_fd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (dir_fd >= 0) {
    (void)::fsync(dir_fd);
    ::close(dir_fd);
  }
}

}  // namespace baroz
