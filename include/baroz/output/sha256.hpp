// SHA-256 (FIPS 180-4), streaming, for the run manifest's input checksums.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace baroz {

class Sha256 {
 public:
  using Digest = std::array<std::uint8_t, 32>;
  Sha256();
  void update(const void* data, std::size_t size);
  /// Finishes the hash; the object is then reset for a new message.
  Digest finish();
  /// Lower-case hexadecimal (64 characters).
  static std::string to_hex(const Digest& digest);

 private:
  void compress(const std::uint8_t* block);
  std::array<std::uint32_t, 8> state_{};
  std::array<std::uint8_t, 64> buffer_{};
  std::uint64_t total_bytes_ = 0;
  std::size_t buffered_ = 0;
};

/// SHA-256 of a whole string, as lower-case hex.
std::string sha256_hex(std::string_view data);

}  // namespace baroz
