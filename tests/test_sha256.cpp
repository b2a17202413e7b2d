// SHA-256 against the FIPS 180-4 / NIST example values, and streaming.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "baroz/output/sha256.hpp"

namespace {

std::string hash_in_chunks(const std::string& data, std::size_t chunk) {
  baroz::Sha256 hasher;
  for (std::size_t i = 0; i < data.size(); i += chunk) {
    hasher.update(data.data() + i, std::min(chunk, data.size() - i));
  }
  return baroz::Sha256::to_hex(hasher.finish());
}

}  // namespace

TEST_CASE("sha256 reproduces the FIPS 180-4 example values", "[output][sha256]") {
  // Source: FIPS 180-4 / NIST CSRC "Examples with Intermediate Values",
  // SHA-256 (one-block and two-block messages); also checked with GNU
  // coreutils sha256sum 9.1.
  CHECK(baroz::sha256_hex("abc") ==
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(baroz::sha256_hex(
            "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  // Source: NIST CSRC SHA-256 example value of the empty message (from
  // memory); checked with GNU coreutils sha256sum 9.1.
  CHECK(baroz::sha256_hex("") ==
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  // Source: NIST CSRC / FIPS 180-2 appendix B.3, one million 'a'; checked
  // with GNU coreutils sha256sum 9.1.
  CHECK(baroz::sha256_hex(std::string(1000000, 'a')) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  // Source: NIST CSRC SHA-256 example of the 896-bit message (from memory);
  // checked with GNU coreutils sha256sum 9.1.
  CHECK(baroz::sha256_hex("abcdefghbcdefghicdefghijdefghijkefghijklfghijklmghij"
                          "klmnhijklmnoijklmnopjklmnopqklmnopqrlmnopqrsmnopqrst"
                          "nopqrstu") ==
        "cf5b16a778af8380036ce59e7b0492370b249b11e8f07a51afac45037afee9d1");
}

TEST_CASE("sha256 pads correctly at the block boundaries", "[output][sha256]") {
  // Lengths around the 55/56-byte padding limit and the 64-byte block.
  // Source: GNU coreutils sha256sum 9.1 over n bytes of 'x' (independent
  // implementation).
  struct Case {
    std::size_t length;
    const char* hex;
  };
  const Case cases[] = {
      {55, "d5e285683cd4efc02d021a5c62014694958901005d6f71e89e0989fac77e4072"},
      {56, "04c26261370ee7541549d16dee320c723e3fd14671e66a099afe0a377c16888e"},
      {63, "75220b47218278e656f2013bb8f0c455a25eaf01e86c64924e9d48d89776d6f2"},
      {64, "7ce100971f64e7001e8fe5a51973ecdfe1ced42befe7ee8d5fd6219506b5393c"},
      {65, "9537c5fdf120482f7d58d25e9ed583f52c02b4e304ea814db1633ad565aed7e9"},
      {119, "000b48d4edf0fa7bee3c6236ecd2785baa5db4eeb8bb54341b029e0d9fa5fb0c"},
      {120, "13f05a0b594787f5ecd315edc96141bd3243203d1b7d4f0836f37308b276ba98"},
  };
  for (const Case& c : cases) {
    INFO("length " << c.length);
    CHECK(baroz::sha256_hex(std::string(c.length, 'x')) == c.hex);
  }
}

TEST_CASE("sha256 streaming in odd-sized chunks equals one-shot",
          "[output][sha256]") {
  std::mt19937_64 rng(20240611);
  std::string data(100003, '\0');
  for (char& c : data) c = static_cast<char>(rng() & 0xff);
  const std::string one_shot = baroz::sha256_hex(data);
  for (std::size_t chunk : {1u, 3u, 7u, 55u, 63u, 64u, 65u, 127u, 1000u, 4099u}) {
    INFO("chunk " << chunk);
    CHECK(hash_in_chunks(data, chunk) == one_shot);
  }
  // Random chunk sizes, including empty updates.
  baroz::Sha256 hasher;
  std::size_t pos = 0;
  while (pos < data.size()) {
    const std::size_t n = std::min<std::size_t>(rng() % 200, data.size() - pos);
    hasher.update(data.data() + pos, n);
    pos += n;
  }
  CHECK(baroz::Sha256::to_hex(hasher.finish()) == one_shot);
  // The million-'a' vector streamed (Source: NIST CSRC, as above).
  CHECK(hash_in_chunks(std::string(1000000, 'a'), 997) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST_CASE("sha256 finish resets the hasher for a new message",
          "[output][sha256]") {
  baroz::Sha256 hasher;
  hasher.update("garbage", 7);
  (void)hasher.finish();
  hasher.update("abc", 3);
  // Source: FIPS 180-4 / NIST CSRC example value of "abc".
  CHECK(baroz::Sha256::to_hex(hasher.finish()) ==
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
}
