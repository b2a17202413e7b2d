// Private to the readers (src/io): the fixed-size input buffer that the CSV
// and NDJSON readers share. It holds the unconsumed bytes of a ByteSource,
// compacts them to the front when it must refill, and grows only for a
// single record longer than its initial size, up to the record limit.
#pragma once

#include <algorithm>
#include <cstddef>
#include <cstring>
#include <memory>
#include <stdexcept>
#include <string_view>

#include "baroz/io/byte_source.hpp"

namespace baroz::detail {

/// The longest record a reader accepts (bytes, without its line break); a
/// longer one is reported as RecordProblem::kTooLong and skipped.
inline constexpr std::size_t kMaxRecordBytes = std::size_t{16} << 20;  // 16 MiB
/// Initial buffer size (bytes); also the largest single read.
inline constexpr std::size_t kInitialBufferBytes = std::size_t{1} << 20;  // 1 MiB
/// The buffer's largest size: a maximal record plus room for its line break
/// and the read that finds it.
inline constexpr std::size_t kMaxBufferBytes = kMaxRecordBytes + (std::size_t{64} << 10);
/// Bytes kept readable (zero-initialised) after the buffer's end, for
/// readers that scan in wide blocks (simdjson needs SIMDJSON_PADDING).
inline constexpr std::size_t kDefaultPadding = 64;
static_assert(kDefaultPadding >= 32, "the CSV fast path loads 32-byte blocks");

class LineBuffer {
 public:
  /// `prefix`: bytes already read from `source` (e.g. while sniffing the
  /// format); they are the start of the buffer. `padding`: readable bytes
  /// kept after the end of the allocation.
  LineBuffer(ByteSource& source, std::string_view prefix, std::size_t padding)
      : source_(source), padding_(padding) {
    capacity_ = std::max(kInitialBufferBytes, prefix.size());
    data_ = allocate(capacity_);
    if (!prefix.empty()) std::memcpy(data_.get(), prefix.data(), prefix.size());
    end_ = prefix.size();
  }

  /// The unconsumed bytes [begin(), end()).
  const char* begin() const { return data_.get() + begin_; }
  const char* end() const { return data_.get() + end_; }
  std::size_t size() const { return end_ - begin_; }
  /// Readable bytes from begin() to the end of the allocation (size() plus
  /// at least `padding`).
  std::size_t readable() const { return capacity_ + padding_ - begin_; }
  /// True once the source has reported the end of input.
  bool eof() const { return eof_; }
  /// Marks `n` bytes (n <= size()) at the front as consumed.
  void consume(std::size_t n) {
    begin_ += n;
    if (begin_ == end_) begin_ = end_ = 0;  // empty: restart at the front, no copy needed
  }

  /// Reads more bytes (one source read) after end(), keeping the unconsumed
  /// bytes (which may move: pointers into the buffer are then invalid;
  /// offsets from begin() stay valid). Returns false at the end of input.
  /// Must not be called when size() >= kMaxBufferBytes.
  bool fill() {
    if (eof_) return false;
    if (end_ == capacity_) make_room();
    std::size_t n = source_.read(data_.get() + end_, capacity_ - end_);
    if (n == 0) {
      eof_ = true;
      return false;
    }
    end_ += n;
    return true;
  }

 private:
  std::unique_ptr<char[]> allocate(std::size_t capacity) const {
    return std::unique_ptr<char[]>(new char[capacity + padding_]());
  }
  void make_room() {
    std::size_t used = end_ - begin_;
    if (begin_ > 0) {  // compact the unconsumed tail to the front
      std::memmove(data_.get(), data_.get() + begin_, used);
      begin_ = 0;
      end_ = used;
      return;
    }
    if (capacity_ >= kMaxBufferBytes)
      throw std::logic_error("line buffer: record exceeds the buffer");
    std::size_t grown = std::min(capacity_ * 2, kMaxBufferBytes);
    std::unique_ptr<char[]> bigger = allocate(grown);
    std::memcpy(bigger.get(), data_.get(), used);
    data_ = std::move(bigger);
    capacity_ = grown;
  }

  ByteSource& source_;
  std::size_t padding_;
  std::unique_ptr<char[]> data_;
  std::size_t capacity_ = 0;
  std::size_t begin_ = 0;
  std::size_t end_ = 0;
  bool eof_ = false;
};

/// The UTF-8 encoding of U+FEFF (byte order mark).
inline constexpr std::string_view kUtf8Bom = "\xEF\xBB\xBF";

/// Makes sure the buffer holds at least 3 bytes or the whole input, then
/// consumes a UTF-8 byte order mark at its front. Returns true if one was
/// skipped. Call only on a fresh buffer.
inline bool skip_bom(LineBuffer& buffer) {
  while (buffer.size() < kUtf8Bom.size() && buffer.fill()) {
  }
  if (buffer.size() >= kUtf8Bom.size() &&
      std::string_view(buffer.begin(), kUtf8Bom.size()) == kUtf8Bom) {
    buffer.consume(kUtf8Bom.size());
    return true;
  }
  return false;
}

}  // namespace baroz::detail
