#include "baroz/io/byte_source.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <limits>

#include "baroz/core/error.hpp"

namespace baroz {
namespace {

// strerror_r comes in two flavours (XSI returns int, GNU returns char*); these
// overloads pick the message out of either, and both are thread-safe (batch
// mode opens files from several threads).
[[maybe_unused]] const char* strerror_text(int /*xsi_status*/, const char* buffer) {
  return buffer;
}
[[maybe_unused]] const char* strerror_text(const char* gnu_result, const char* /*buffer*/) {
  return gnu_result;
}

/// The system's reason for `error`, with a lower-case first letter
/// ("No such file or directory" -> "no such file or directory").
std::string reason(int error) {
  char buffer[256] = {};
  std::string text = strerror_text(strerror_r(error, buffer, sizeof buffer), buffer);
  if (!text.empty() && text[0] >= 'A' && text[0] <= 'Z')
    text[0] = static_cast<char>(text[0] - 'A' + 'a');
  return text;
}

/// read(2) of at most `capacity` bytes, retried on EINTR. Returns as soon as
/// any data is available (a pipe delivers what has arrived).
std::size_t read_fd(int fd, char* buffer, std::size_t capacity, const std::string& name) {
  if (capacity == 0) return 0;
  // read(2) of more than SSIZE_MAX bytes is implementation-defined.
  capacity = std::min<std::size_t>(capacity, std::size_t{1} << 30);
  for (;;) {
    ssize_t n = ::read(fd, buffer, capacity);
    if (n >= 0) return static_cast<std::size_t>(n);
    if (errno == EINTR) continue;
    throw input_error("cannot read '" + name + "': " + reason(errno));
  }
}

/// Reads a regular file's descriptor with pread(2) from its own offset, so
/// that it does not disturb another reader of the same descriptor.
class PreadSource : public ByteSource {
 public:
  PreadSource(int fd, std::string name) : ByteSource(std::move(name)), fd_(fd) {}
  bool is_regular_file() const override { return true; }

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    if (capacity == 0) return 0;
    capacity = std::min<std::size_t>(capacity, std::size_t{1} << 30);
    for (;;) {
      ssize_t n = ::pread(fd_, buffer, capacity, offset_);
      if (n >= 0) {
        offset_ += n;
        return static_cast<std::size_t>(n);
      }
      if (errno == EINTR) continue;
      throw input_error("cannot read '" + name() + "': " + reason(errno));
    }
  }

 private:
  int fd_;
  off_t offset_ = 0;
};

class FdSource : public ByteSource {
 public:
  FdSource(int fd, std::string name, bool owned)
      : ByteSource(std::move(name)), fd_(fd), owned_(owned) {
    struct stat info {};
    regular_ = ::fstat(fd_, &info) == 0 && S_ISREG(info.st_mode);
  }
  bool is_regular_file() const override { return regular_; }
  std::unique_ptr<ByteSource> reopen() const override {
    if (!regular_) return nullptr;
    return std::make_unique<PreadSource>(fd_, name());
  }
  ~FdSource() override {
    if (owned_) ::close(fd_);
  }
  FdSource(const FdSource&) = delete;
  FdSource& operator=(const FdSource&) = delete;

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    return read_fd(fd_, buffer, capacity, name());
  }

 private:
  int fd_;
  bool owned_;
  bool regular_ = false;
};

class IstreamSource : public ByteSource {
 public:
  IstreamSource(std::istream& in, std::string name) : ByteSource(std::move(name)), in_(in) {}

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    using Traits = std::istream::traits_type;
    if (capacity == 0 || !in_.good()) return 0;
    std::streambuf* buf = in_.rdbuf();
    if (buf == nullptr) return 0;
    // sgetc() waits for at least one byte (or the end); then take what the
    // stream has already buffered, so that a live stream is not held up
    // waiting for a full buffer.
    if (Traits::eq_int_type(buf->sgetc(), Traits::eof())) {
      in_.setstate(std::ios::eofbit);
      return 0;
    }
    std::streamsize available = buf->in_avail();
    constexpr auto kMax = std::numeric_limits<std::streamsize>::max();
    std::streamsize want =
        std::clamp<std::streamsize>(available, 1,
                                    static_cast<std::streamsize>(std::min<std::size_t>(
                                        capacity, static_cast<std::size_t>(kMax))));
    std::streamsize got = buf->sgetn(buffer, want);
    if (got <= 0) {
      in_.setstate(std::ios::badbit);
      throw input_error("cannot read '" + name() + "': stream error");
    }
    return static_cast<std::size_t>(got);
  }

 private:
  std::istream& in_;
};

class StringSource : public ByteSource {
 public:
  bool is_regular_file() const override { return true; }  // never blocks
  std::unique_ptr<ByteSource> reopen() const override {
    return std::make_unique<StringSource>(data_, name());
  }
  StringSource(std::string data, std::string name)
      : ByteSource(std::move(name)), data_(std::move(data)) {}

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    std::size_t n = std::min(capacity, data_.size() - position_);
    std::memcpy(buffer, data_.data() + position_, n);
    position_ += n;
    return n;
  }

 private:
  std::string data_;
  std::size_t position_ = 0;
};

}  // namespace

std::unique_ptr<ByteSource> open_file_source(const std::string& path) {
  int fd = -1;
  do {
    fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
  } while (fd < 0 && errno == EINTR);
  if (fd < 0) throw input_error("cannot open '" + path + "': " + reason(errno));
  struct stat info {};
  if (::fstat(fd, &info) == 0 && S_ISDIR(info.st_mode)) {
    ::close(fd);
    throw input_error("cannot open '" + path + "': " + reason(EISDIR));
  }
  return std::make_unique<FdSource>(fd, path, /*owned=*/true);
}

std::unique_ptr<ByteSource> make_fd_source(int fd, std::string name) {
  return std::make_unique<FdSource>(fd, std::move(name), /*owned=*/false);
}

std::unique_ptr<ByteSource> make_istream_source(std::istream& in, std::string name) {
  return std::make_unique<IstreamSource>(in, std::move(name));
}

std::unique_ptr<ByteSource> make_string_source(std::string data, std::string name) {
  return std::make_unique<StringSource>(std::move(data), std::move(name));
}

}  // namespace baroz
