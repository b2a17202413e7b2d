// Fast fixed-point writers; see fixed_format.hpp for the contract.
#include "baroz/output/fixed_format.hpp"

#include <array>
#include <bit>
#include <cassert>
#include <charconv>
#include <cmath>
#include <cstring>

namespace baroz {
namespace {

// "00" "01" ... "99": two digits per table lookup.
constexpr std::array<char, 200> kDigitPairs = [] {
  std::array<char, 200> table{};
  for (int i = 0; i < 100; ++i) {
    table[2 * i] = static_cast<char>('0' + i / 10);
    table[2 * i + 1] = static_cast<char>('0' + i % 10);
  }
  return table;
}();

constexpr std::uint64_t kPow10U[20] = {1ULL,
                                       10ULL,
                                       100ULL,
                                       1000ULL,
                                       10000ULL,
                                       100000ULL,
                                       1000000ULL,
                                       10000000ULL,
                                       100000000ULL,
                                       1000000000ULL,
                                       10000000000ULL,
                                       100000000000ULL,
                                       1000000000000ULL,
                                       10000000000000ULL,
                                       100000000000000ULL,
                                       1000000000000000ULL,
                                       10000000000000000ULL,
                                       100000000000000000ULL,
                                       1000000000000000000ULL,
                                       10000000000000000000ULL};

// 10^d for d = 0..9; every entry is exactly representable (10^d < 2^53).
constexpr double kPow10D[kMaxFixedDecimals + 1] = {1e0, 1e1, 1e2, 1e3, 1e4,
                                                   1e5, 1e6, 1e7, 1e8, 1e9};

/// Number of decimal digits of q (1 for q = 0).
int digit_count(std::uint64_t q) {
  q |= 1;  // same digit count (powers of ten are even), and 0 -> 1
  // 1233 / 4096 ~ log10(2): t is floor(log10(q)) or one less.
  const int t = (static_cast<int>(std::bit_width(q)) * 1233) >> 12;
  return t + 1 - (q < kPow10U[t] ? 1 : 0);
}

/// Writes q backwards so that its last digit is at end[-1]; returns the
/// position of its first digit.
char* write_digits_backwards(char* end, std::uint64_t q) {
  char* p = end;
  while (q > 0xffffffffULL) {
    const auto pair = static_cast<unsigned>(q % 100);
    q /= 100;
    p -= 2;
    std::memcpy(p, kDigitPairs.data() + 2 * pair, 2);
  }
  auto q32 = static_cast<std::uint32_t>(q);
  while (q32 >= 100) {
    const std::uint32_t pair = q32 % 100;
    q32 /= 100;
    p -= 2;
    std::memcpy(p, kDigitPairs.data() + 2 * pair, 2);
  }
  if (q32 >= 10) {
    p -= 2;
    std::memcpy(p, kDigitPairs.data() + 2 * q32, 2);
  } else {
    *--p = static_cast<char>('0' + q32);
  }
  return p;
}

/// Writes n / 10^D with D decimals: [-]integer[.fraction]. The constant D
/// lets the compiler turn the divisions into multiplications.
template <int D>
char* write_scaled(char* out, std::uint64_t n, bool negative) {
  constexpr std::uint64_t kDivisor = kPow10U[D];
  std::uint64_t integer = n / kDivisor;
  std::uint64_t fraction = n % kDivisor;
  char* const end = out + (negative ? 1 : 0) + digit_count(integer) +
                    (D > 0 ? D + 1 : 0);
  char* p = end;
  if constexpr (D > 0) {
    auto f = static_cast<std::uint32_t>(fraction);  // < 10^9 < 2^32
    for (int k = D; k >= 2; k -= 2) {
      p -= 2;
      std::memcpy(p, kDigitPairs.data() + 2 * (f % 100), 2);
      f /= 100;
    }
    if constexpr (D % 2 == 1) *--p = static_cast<char>('0' + f);
    *--p = '.';
  }
  p = write_digits_backwards(p, integer);
  if (negative) *--p = '-';
  assert(p == out);
  return end;
}

char* write_scaled_dispatch(char* out, std::uint64_t n, int decimals,
                            bool negative) {
  switch (decimals) {
    case 0: return write_scaled<0>(out, n, negative);
    case 1: return write_scaled<1>(out, n, negative);
    case 2: return write_scaled<2>(out, n, negative);
    case 3: return write_scaled<3>(out, n, negative);
    case 4: return write_scaled<4>(out, n, negative);
    case 5: return write_scaled<5>(out, n, negative);
    case 6: return write_scaled<6>(out, n, negative);
    case 7: return write_scaled<7>(out, n, negative);
    case 8: return write_scaled<8>(out, n, negative);
    default: return write_scaled<9>(out, n, negative);
  }
}

/// The reference path: std::to_chars (exact), then the negative-zero rule.
char* write_fixed_slow(char* out, double value, int decimals) {
  char* const end =
      std::to_chars(out, out + kMaxFixedChars, value, std::chars_format::fixed,
                    decimals)
          .ptr;
  if (out[0] == '-') {
    bool all_zero = true;
    for (const char* p = out + 1; p < end; ++p) {
      if (*p != '0' && *p != '.') {
        all_zero = false;
        break;
      }
    }
    if (all_zero) {
      std::memmove(out, out + 1, static_cast<std::size_t>(end - out - 1));
      return end - 1;
    }
  }
  return end;
}

}  // namespace

bool is_writable(double value) noexcept { return std::isfinite(value); }

char* write_fixed(char* out, double value, int decimals) noexcept {
  assert(std::isfinite(value));
  assert(decimals >= 0 && decimals <= kMaxFixedDecimals);
  // Why the fast path is exact.
  //
  // Let s = 10^d (exact in binary for d <= 9), x = |value| * s the exact real
  // product, and a = fl(x) the product rounded to nearest (IEEE 754 binary64,
  // round-to-nearest; no -ffast-math, no excess precision on x86-64/SSE2).
  // The wanted output is R(x), x rounded to an integer half to even, written
  // with d decimals.
  //
  // Suppose a < 2^52. Let u be the spacing of doubles in the binade of a
  // (u = 2^(E-52) for 2^E <= a < 2^(E+1), or 2^-1074 below the normal range),
  // so u <= 1/2 and a is an integer multiple of u. Rounding to nearest gives
  // |x - a| <= u/2 (if x lies in the binade below, or a = 2^E was reached by
  // rounding up from it, the bound is even u/4).
  // Every half-integer h = k + 1/2 is a multiple of u as well (u is a power
  // of two <= 1/2), so |a - h| is a multiple of u: it is 0 or >= u.
  // Hence if a is not itself a half-integer, |a - h| >= u > u/2 >= |x - a|
  // for every h: x lies strictly on the same side of every half-integer as
  // a, so x is not a tie and the integer nearest to x is the integer nearest
  // to a. That integer is computed exactly below: t = trunc(a) is exact, and
  // a - t is exact (Sterbenz lemma for a >= 1; a - 0 otherwise).
  //
  // So the fast path needs only "a < 2^52 and frac(a) != 1/2"; every other
  // case (a tie or near-tie that the product rounded onto a half-integer, or
  // |value| * 10^d >= 2^52) takes std::to_chars. A wider margin around 1/2
  // (e.g. 1e-3) would also be correct but only sends more values to the
  // slow path.
  const double a = std::fabs(value) * kPow10D[decimals];
  if (a < 0x1p52) {
    // Signed conversions: one instruction each on x86-64 (unsigned ones
    // are not), and exact since 0 <= a < 2^52.
    const auto t = static_cast<std::int64_t>(a);
    const double frac = a - static_cast<double>(t);
    if (frac != 0.5) {
      const auto n = static_cast<std::uint64_t>(t + (frac > 0.5 ? 1 : 0));
      return write_scaled_dispatch(out, n, decimals,
                                   std::signbit(value) && n != 0);
    }
  }
  return write_fixed_slow(out, value, decimals);
}

char* write_int(char* out, long long value) noexcept {
  const bool negative = value < 0;
  // Two's complement negation in unsigned arithmetic also handles LLONG_MIN.
  const std::uint64_t magnitude =
      negative ? 0 - static_cast<std::uint64_t>(value)
               : static_cast<std::uint64_t>(value);
  char* const end = out + (negative ? 1 : 0) + digit_count(magnitude);
  char* p = write_digits_backwards(end, magnitude);
  if (negative) *--p = '-';
  return end;
}

char* write_elapsed_ns(char* out, std::int64_t ns, int decimals) noexcept {
  assert(decimals >= 0 && decimals <= kMaxFixedDecimals);
  const bool negative = ns < 0;
  const std::uint64_t magnitude = negative
                                      ? 0 - static_cast<std::uint64_t>(ns)
                                      : static_cast<std::uint64_t>(ns);
  // magnitude ns = q * divisor + r, in units of 10^-decimals s.
  const std::uint64_t divisor = kPow10U[kMaxFixedDecimals - decimals];
  std::uint64_t q = magnitude / divisor;
  if (divisor > 1) {
    const std::uint64_t r = magnitude % divisor;
    const std::uint64_t half = divisor / 2;  // divisor is even here
    if (r > half || (r == half && (q & 1) != 0)) ++q;  // half to even
  }
  return write_scaled_dispatch(out, q, decimals, negative && q != 0);
}

}  // namespace baroz
