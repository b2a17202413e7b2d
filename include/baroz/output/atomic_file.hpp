// An output file that is never left half-written: the data goes to a
// temporary file next to the target, which is renamed onto the target only
// by commit() (POSIX rename() replaces the target atomically).
#pragma once

#include <cstddef>
#include <cstring>
#include <memory>
#include <string>
#include <string_view>

namespace baroz {

class AtomicFile {
 public:
  /// Size of the write buffer [bytes].
  static constexpr std::size_t kBufferSize = std::size_t{1} << 20;

  /// Creates the temporary file "<dir>/.<name>.tmp.XXXXXX" (mkstemp) in the
  /// directory of `target_path`, with the permissions a newly created file
  /// gets (0666 & ~umask). Throws baroz::Error with ExitCode::kOutput,
  /// "cannot write 'TARGET': <reason>", if it cannot be created.
  explicit AtomicFile(std::string target_path);
  /// Without a successful commit(): closes and removes the temporary file;
  /// the target is untouched. Never throws.
  ~AtomicFile();

  AtomicFile(AtomicFile&& other) noexcept;
  AtomicFile& operator=(AtomicFile&&) = delete;
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  /// Appends bytes through the buffer; the buffer is written out when full.
  /// Throws baroz::Error (kOutput) on a write error (e.g. disk full).
  void write(const char* data, std::size_t size) {
    if (size <= kBufferSize - used_) {
      std::memcpy(buffer_.get() + used_, data, size);
      used_ += size;
    } else {
      write_slow(data, size);
    }
  }
  void write(std::string_view s) { write(s.data(), s.size()); }

  /// Writes the buffered bytes to the temporary file (no fsync). Call it
  /// before writing to fd() directly, and for `--line-buffered` output.
  void flush();

  /// flush(), fsync(), close(), then rename the temporary file onto the
  /// target (replacing it; its old permissions, owner and links are not
  /// preserved; a symbolic link at the target is itself replaced), then
  /// fsync the directory (best effort). Throws baroz::Error (kOutput); the
  /// temporary file is then still removed by the destructor.
  void commit();

  /// The temporary file's descriptor (-1 after commit()). Writing after
  /// commit() throws.
  int fd() const noexcept { return fd_; }
  const std::string& target_path() const noexcept { return target_path_; }
  const std::string& temp_path() const noexcept { return temp_path_; }
  bool committed() const noexcept { return committed_; }

 private:
  void write_slow(const char* data, std::size_t size);
  void write_fd(const char* data, std::size_t size);
  [[noreturn]] void fail(int error_number) const;

  std::string target_path_;
  std::string temp_path_;
  std::unique_ptr<char[]> buffer_;
  std::size_t used_ = 0;
  int fd_ = -1;
  bool committed_ = false;
  bool direct_ = false;  ///< the target is a device or FIFO, written in place
};

}  // namespace baroz

// References:
//   POSIX.1-2017 (IEEE Std 1003.1): rename() (an existing target is replaced
//   so that the name always refers to either the old or the new file),
//   mkstemp(), fsync().
