// Where a reader's bytes come from: a file, standard input, or a string.
// When asked, every byte read passes through the source's SHA-256 so that the
// manifest can record the input's checksum without a second pass.
#pragma once

#include <cstddef>
#include <cstdint>
#include <istream>
#include <memory>
#include <string>

#include "baroz/output/sha256.hpp"

namespace baroz {

class ByteSource {
 public:
  virtual ~ByteSource() = default;
  /// Reads up to `capacity` bytes; returns 0 only at end of input. On a pipe
  /// it returns what has arrived (at least one byte) without waiting for the
  /// buffer to fill, so live telemetry streams. Throws baroz::Error (input)
  /// on a read error.
  std::size_t read(char* buffer, std::size_t capacity) {
    std::size_t n = read_some(buffer, capacity);
    if (hashing_) hasher_.update(buffer, n);
    bytes_ += n;
    return n;
  }
  /// Whether reading can never wait for data to arrive (a regular file or a
  /// string), so it may be read ahead on another thread.
  virtual bool is_regular_file() const { return false; }
  /// A second, independent reader of the same bytes from the start (for a
  /// model that needs a first pass over the whole log, e.g. a temperature
  /// profile); nullptr when the input cannot be read twice (a pipe). The new
  /// source is not hashed and must not outlive this one.
  virtual std::unique_ptr<ByteSource> reopen() const { return nullptr; }
  /// Name used in messages: the path as given, or "<stdin>".
  const std::string& name() const { return name_; }
  std::uint64_t bytes_read() const { return bytes_; }
  /// Hashing costs about as much as all the rest of the reading, so it is
  /// off unless a consumer needs the checksum (--manifest, inspect). Turn it
  /// on before the first read.
  void enable_hashing() { hashing_ = true; }
  bool hashing() const { return hashing_; }
  /// SHA-256 of everything read so far (call once, at the end); empty when
  /// hashing is off.
  std::string sha256_hex() { return hashing_ ? Sha256::to_hex(hasher_.finish()) : std::string(); }

 protected:
  explicit ByteSource(std::string name) : name_(std::move(name)) {}
  virtual std::size_t read_some(char* buffer, std::size_t capacity) = 0;

 private:
  std::string name_;
  Sha256 hasher_;
  std::uint64_t bytes_ = 0;
  bool hashing_ = false;
};

/// Opens a file for reading; throws baroz::Error (input) naming the path and
/// the system's reason when it cannot be opened.
std::unique_ptr<ByteSource> open_file_source(const std::string& path);
/// Reads a POSIX file descriptor (not closed at the end), e.g. 0 for stdin.
std::unique_ptr<ByteSource> make_fd_source(int fd, std::string name);
/// Reads a std::istream (used by in-process tests for standard input).
std::unique_ptr<ByteSource> make_istream_source(std::istream& in, std::string name);
/// Reads a string held by the source (tests).
std::unique_ptr<ByteSource> make_string_source(std::string data, std::string name);

}  // namespace baroz
