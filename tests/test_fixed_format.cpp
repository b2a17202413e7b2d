// write_fixed / write_int / write_elapsed_ns against std::to_chars, the
// exactly rounded reference formatter of the C++ standard library.
#include <catch2/catch.hpp>

#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <random>
#include <string>

#include "baroz/output/fixed_format.hpp"

namespace {

/// The reference: std::to_chars fixed (C++17 [charconv.to.chars]: the exact
/// value correctly rounded; libstdc++ rounds ties half to even), with the
/// documented negative-zero rule ("-0.000" -> "0.000").
std::string reference_fixed(double value, int decimals) {
  char buf[400];
  char* end = std::to_chars(buf, buf + sizeof buf, value,
                            std::chars_format::fixed, decimals)
                  .ptr;
  std::string s(buf, end);
  if (!s.empty() && s[0] == '-' &&
      s.find_first_not_of("0.", 1) == std::string::npos) {
    s.erase(0, 1);
  }
  return s;
}

std::string ours_fixed(double value, int decimals) {
  char buf[baroz::kMaxFixedChars + 8];
  std::memset(buf, '#', sizeof buf);
  char* end = baroz::write_fixed(buf, value, decimals);
  REQUIRE(end >= buf);
  REQUIRE(static_cast<std::size_t>(end - buf) <= baroz::kMaxFixedChars);
  return std::string(buf, end);
}

/// Compares many values and reports only the first few mismatches, so a
/// broken formatter does not flood the log.
class MismatchCounter {
 public:
  void check(double value, int decimals) {
    ++checked_;
    const std::string expected = reference_fixed(value, decimals);
    const std::string actual = ours_fixed(value, decimals);
    if (expected != actual) {
      if (++mismatches_ <= 10) {
        char hex[64];
        std::to_chars(hex, hex + sizeof hex, value, std::chars_format::hex);
        FAIL_CHECK("value " << hex << " decimals " << decimals << ": expected "
                            << expected << " got " << actual);
      }
    }
  }
  long checked() const { return checked_; }
  long mismatches() const { return mismatches_; }

 private:
  long checked_ = 0;
  long mismatches_ = 0;
};

/// Independent reference for write_elapsed_ns: the exact decimal expansion
/// of ns / 10^9 (9 decimals, by inserting the point into the integer's
/// digits), rounded to `decimals` half to even by looking at the dropped
/// digits as a string.
std::string reference_elapsed(std::int64_t ns, int decimals) {
  const bool negative = ns < 0;
  std::string digits = std::to_string(ns);
  if (negative) digits.erase(0, 1);
  if (digits.size() < 10) digits.insert(0, 10 - digits.size(), '0');
  std::string kept = digits.substr(0, digits.size() - 9 + decimals);
  const std::string dropped = digits.substr(kept.size());
  bool round_up = false;
  if (!dropped.empty()) {
    if (dropped[0] > '5') {
      round_up = true;
    } else if (dropped[0] == '5') {
      const bool exact_half =
          dropped.find_first_not_of('0', 1) == std::string::npos;
      round_up = !exact_half || (kept.back() - '0') % 2 == 1;
    }
  }
  if (round_up) {  // decimal string increment
    int i = static_cast<int>(kept.size()) - 1;
    while (i >= 0 && kept[i] == '9') kept[i--] = '0';
    if (i < 0) {
      kept = "1" + kept;
    } else {
      ++kept[i];
    }
  }
  // Strip leading zeros of the integer part (keep one).
  const std::size_t int_len = kept.size() - static_cast<std::size_t>(decimals);
  std::string integer = kept.substr(0, int_len);
  const std::string fraction = kept.substr(int_len);
  const std::size_t nz = integer.find_first_not_of('0');
  integer = nz == std::string::npos ? "0" : integer.substr(nz);
  std::string s = integer;
  if (decimals > 0) s += "." + fraction;
  const bool is_zero = s.find_first_not_of("0.") == std::string::npos;
  if (negative && !is_zero) s = "-" + s;
  return s;
}

std::string ours_elapsed(std::int64_t ns, int decimals) {
  char buf[baroz::kMaxElapsedChars + 8];
  char* end = baroz::write_elapsed_ns(buf, ns, decimals);
  REQUIRE(static_cast<std::size_t>(end - buf) <= baroz::kMaxElapsedChars);
  return std::string(buf, end);
}

std::string ours_int(long long v) {
  char buf[baroz::kMaxIntChars + 8];
  char* end = baroz::write_int(buf, v);
  REQUIRE(static_cast<std::size_t>(end - buf) <= baroz::kMaxIntChars);
  return std::string(buf, end);
}

}  // namespace

TEST_CASE("write_fixed rounds exact binary values half to even",
          "[output][fixed_format]") {
  // Expected strings follow from the definition (exact binary value, ties to
  // even); each input is exactly representable, so the ties are real.
  CHECK(ours_fixed(123.4567, 3) == "123.457");
  CHECK(ours_fixed(0.125, 2) == "0.12");   // exact tie -> even
  CHECK(ours_fixed(0.375, 2) == "0.38");   // exact tie -> even
  CHECK(ours_fixed(2.5, 0) == "2");
  CHECK(ours_fixed(3.5, 0) == "4");
  CHECK(ours_fixed(-2.5, 0) == "-2");
  CHECK(ours_fixed(1.0, 0) == "1");
  CHECK(ours_fixed(7.0, 3) == "7.000");
  CHECK(ours_fixed(0.0, 4) == "0.0000");
  CHECK(ours_fixed(1e15, 1) == "1000000000000000.0");
  // 2.675 is 2.67499999999999982236431605997495353221893310546875 in binary,
  // so it rounds down although the decimal literal looks like a tie.
  CHECK(ours_fixed(2.675, 2) == "2.67");
  // 0.0005 is slightly above 5e-4 in binary: rounds up.
  CHECK(ours_fixed(0.0005, 3) == "0.001");
  // The reference agrees with these (guards the reference itself).
  CHECK(reference_fixed(0.125, 2) == "0.12");
  CHECK(reference_fixed(2.675, 2) == "2.67");
}

TEST_CASE("write_fixed never writes negative zero", "[output][fixed_format]") {
  CHECK(ours_fixed(-0.0, 3) == "0.000");
  CHECK(ours_fixed(-0.0, 0) == "0");
  CHECK(ours_fixed(-0.0004, 3) == "0.000");
  CHECK(ours_fixed(-0.5, 0) == "0");  // tie to even 0, slow path
  CHECK(ours_fixed(-1e-300, 6) == "0.000000");
  CHECK(ours_fixed(-0.0006, 3) == "-0.001");
}

TEST_CASE("write_fixed matches std::to_chars on random values",
          "[output][fixed_format]") {
  std::mt19937_64 rng(0xba502);
  std::uniform_real_distribution<double> log_magnitude(-4.0, 9.0);
  std::uniform_int_distribution<int> decimals_dist(0, 6);
  MismatchCounter counter;
  for (int i = 0; i < 2'000'000; ++i) {
    double v = std::pow(10.0, log_magnitude(rng));
    if (rng() & 1) v = -v;
    counter.check(v, decimals_dist(rng));
  }
  // Values as a sensor logs them: few decimal digits, e.g. 1013.25 hPa.
  std::uniform_int_distribution<long long> counts(-10'000'000, 10'000'000);
  for (int i = 0; i < 300'000; ++i) {
    const int input_decimals = static_cast<int>(rng() % 5);
    const double v =
        static_cast<double>(counts(rng)) / std::pow(10.0, input_decimals);
    counter.check(v, decimals_dist(rng));
  }
  // Any finite bit pattern (all magnitudes, slow path included), decimals
  // 0..9.
  for (int i = 0; i < 200'000; ++i) {
    double v;
    const std::uint64_t bits = rng();
    std::memcpy(&v, &bits, sizeof v);
    if (!baroz::is_writable(v)) continue;
    counter.check(v, static_cast<int>(rng() % 10));
  }
  CHECK(counter.checked() > 2'400'000);
  CHECK(counter.mismatches() == 0);
}

TEST_CASE("write_fixed matches std::to_chars on near-ties",
          "[output][fixed_format]") {
  // v = (k + 1/2) / 10^d rounded to double lies within an ulp of a decimal
  // tie; its neighbours one and two ulps away fall on both sides of it.
  std::mt19937_64 rng(0x71e5);
  MismatchCounter counter;
  for (int d = 0; d <= 9; ++d) {
    const double scale = std::pow(10.0, d);
    for (int i = 0; i < 40'000; ++i) {
      // k small (dense digits) half of the time, up to ~1e12 otherwise.
      const std::uint64_t k =
          (i % 2 == 0) ? static_cast<std::uint64_t>(i / 2)
                       : rng() % 1'000'000'000'000ULL;
      const double tie = (static_cast<double>(k) + 0.5) / scale;
      for (double sign : {1.0, -1.0}) {
        double v = sign * tie;
        counter.check(v, d);
        double up = v, down = v;
        for (int step = 0; step < 2; ++step) {
          up = std::nextafter(up, std::numeric_limits<double>::infinity());
          down = std::nextafter(down, -std::numeric_limits<double>::infinity());
          counter.check(up, d);
          counter.check(down, d);
        }
      }
    }
  }
  // Exact binary ties at every binade the fast path covers: n + 1/2 for
  // n up to 2^51, scaled back by 10^d only where that stays exact (d = 0).
  for (int e = 0; e < 52; ++e) {
    const double n = std::ldexp(1.0, e);
    for (double v : {n + 0.5, n - 0.5, n + 1.5}) {
      counter.check(v, 0);
      counter.check(std::nextafter(v, 0.0), 0);
      counter.check(std::nextafter(v, 1e300), 0);
    }
  }
  // Around the 2^52 limit of the fast path, all decimals.
  for (int d = 0; d <= 9; ++d) {
    const double limit = std::ldexp(1.0, 52) / std::pow(10.0, d);
    double v = limit;
    for (int step = 0; step < 50; ++step) v = std::nextafter(v, 0.0);
    for (int step = 0; step < 100; ++step) {
      counter.check(v, d);
      counter.check(-v, d);
      v = std::nextafter(v, 1e300);
    }
  }
  CHECK(counter.mismatches() == 0);
}

TEST_CASE("write_fixed handles extreme magnitudes", "[output][fixed_format]") {
  MismatchCounter counter;
  const double extremes[] = {
      std::numeric_limits<double>::max(), std::numeric_limits<double>::min(),
      std::numeric_limits<double>::denorm_min(), 1e300, 4.5e15, 9.007199254740993e15,
      1e22, 123456789012345678.0};
  for (double v : extremes) {
    for (int d = 0; d <= 9; ++d) {
      counter.check(v, d);
      counter.check(-v, d);
    }
  }
  CHECK(counter.mismatches() == 0);
  CHECK(ours_fixed(-std::numeric_limits<double>::max(), 9).size() ==
        baroz::kMaxFixedChars);
}

TEST_CASE("is_writable rejects non-finite values", "[output][fixed_format]") {
  CHECK(baroz::is_writable(0.0));
  CHECK(baroz::is_writable(-1e308));
  CHECK_FALSE(baroz::is_writable(std::numeric_limits<double>::quiet_NaN()));
  CHECK_FALSE(baroz::is_writable(std::numeric_limits<double>::infinity()));
  CHECK_FALSE(baroz::is_writable(-std::numeric_limits<double>::infinity()));
}

TEST_CASE("write_int matches std::to_chars", "[output][fixed_format]") {
  CHECK(ours_int(0) == "0");
  CHECK(ours_int(-42) == "-42");
  CHECK(ours_int(std::numeric_limits<long long>::min()) ==
        "-9223372036854775808");
  CHECK(ours_int(std::numeric_limits<long long>::max()) ==
        "9223372036854775807");
  std::mt19937_64 rng(42);
  long mismatches = 0;
  for (int i = 0; i < 200'000; ++i) {
    // Random bit widths so that every digit count occurs.
    const auto v = static_cast<long long>(rng() >> (rng() % 64));
    for (long long w : {v, -v}) {
      char buf[32];
      char* end = std::to_chars(buf, buf + sizeof buf, w).ptr;
      if (ours_int(w) != std::string(buf, end)) ++mismatches;
    }
  }
  CHECK(mismatches == 0);
}

TEST_CASE("write_elapsed_ns rounds the exact integer half to even",
          "[output][fixed_format]") {
  CHECK(ours_elapsed(1'500'000, 3) == "0.002");   // 0.0015 s, tie -> even
  CHECK(ours_elapsed(2'500'000, 3) == "0.002");   // 0.0025 s, tie -> even
  CHECK(ours_elapsed(3'500'000, 3) == "0.004");
  CHECK(ours_elapsed(2'500'001, 3) == "0.003");
  CHECK(ours_elapsed(-1'500'000, 3) == "-0.002");
  CHECK(ours_elapsed(-400'000, 3) == "0.000");    // no negative zero
  CHECK(ours_elapsed(0, 0) == "0");
  CHECK(ours_elapsed(-1'234'567'890, 2) == "-1.23");
  CHECK(ours_elapsed(1'000'000'000, 9) == "1.000000000");
  CHECK(ours_elapsed(999'999'999, 3) == "1.000");
  CHECK(ours_elapsed(std::numeric_limits<std::int64_t>::min(), 9) ==
        "-9223372036.854775808");
  CHECK(ours_elapsed(std::numeric_limits<std::int64_t>::max(), 0) ==
        "9223372037");
  // The string reference agrees on the same cases (guards the reference).
  CHECK(reference_elapsed(2'500'000, 3) == "0.002");
  CHECK(reference_elapsed(-1'234'567'890, 2) == "-1.23");

  std::mt19937_64 rng(7);
  long mismatches = 0;
  for (int i = 0; i < 300'000; ++i) {
    auto ns = static_cast<std::int64_t>(rng() >> (rng() % 64));
    if (i % 3 == 0) ns -= ns % 500;  // many exact ties at the cut
    if (rng() & 1) ns = -ns;
    const int d = static_cast<int>(rng() % 10);
    if (ours_elapsed(ns, d) != reference_elapsed(ns, d)) {
      if (++mismatches <= 10) {
        FAIL_CHECK("ns " << ns << " decimals " << d << ": expected "
                         << reference_elapsed(ns, d) << " got "
                         << ours_elapsed(ns, d));
      }
    }
  }
  CHECK(mismatches == 0);
}
