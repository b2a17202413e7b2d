// Time parsing and formatting in integer nanoseconds (see time.hpp).
#include "baroz/core/time.hpp"

#include "baroz/core/ascii.hpp"

#include <cstdint>
#include <limits>

namespace baroz {

namespace {

constexpr std::int64_t kNsPerSecond = 1'000'000'000;
constexpr std::int64_t kSecondsPerDay = 86'400;

constexpr bool is_digit(char c) noexcept { return c >= '0' && c <= '9'; }
constexpr int digit(char c) noexcept { return c - '0'; }


/// Reads exactly `count` decimal digits at `pos`; false if any is not a digit.
bool read_digits(std::string_view text, std::size_t pos, std::size_t count, int& out) noexcept {
  if (pos + count > text.size()) return false;
  int value = 0;
  for (std::size_t i = pos; i < pos + count; ++i) {
    if (!is_digit(text[i])) return false;
    value = value * 10 + digit(text[i]);
  }
  out = value;
  return true;
}

/// Parses a numeric zone offset "+hh:mm", "-hh:mm", "+hhmm" or "+hh" that
/// makes up all of `text`. Returns seconds east of UTC.
std::optional<int> parse_numeric_offset(std::string_view text) noexcept {
  if (text.empty() || (text[0] != '+' && text[0] != '-')) return std::nullopt;
  const int sign = text[0] == '-' ? -1 : 1;
  int hours = 0;
  int minutes = 0;
  if (!read_digits(text, 1, 2, hours)) return std::nullopt;
  if (text.size() == 3) {
    // "+hh"
  } else if (text.size() == 6 && text[3] == ':') {
    if (!read_digits(text, 4, 2, minutes)) return std::nullopt;  // "+hh:mm"
  } else if (text.size() == 5) {
    if (!read_digits(text, 3, 2, minutes)) return std::nullopt;  // "+hhmm"
  } else {
    return std::nullopt;
  }
  if (hours > 23 || minutes > 59) return std::nullopt;
  return sign * (hours * 3600 + minutes * 60);
}

/// Floor division for a positive divisor.
constexpr std::int64_t floor_div(std::int64_t a, std::int64_t b) noexcept {
  const std::int64_t q = a / b;
  return (a % b != 0 && a < 0) ? q - 1 : q;
}

/// Writes `value` (>= 0) as exactly `width` decimal digits ending before `end`.
void put_digits(char* end, int width, long long value) noexcept {
  for (int i = 0; i < width; ++i) {
    *--end = static_cast<char>('0' + value % 10);
    value /= 10;
  }
}

}  // namespace

std::optional<TimeUnit> parse_time_unit(std::string_view text) {
  if (iequals(text, "s") || iequals(text, "sec") || iequals(text, "seconds")) {
    return TimeUnit::kSeconds;
  }
  if (iequals(text, "ms") || iequals(text, "msec") || iequals(text, "millis") ||
      iequals(text, "milliseconds")) {
    return TimeUnit::kMilliseconds;
  }
  // "\xC2\xB5s" is "µs" with U+00B5 MICRO SIGN, "\xCE\xBCs" with U+03BC
  // GREEK SMALL LETTER MU.
  if (iequals(text, "us") || iequals(text, "usec") || iequals(text, "micros") ||
      iequals(text, "microseconds") || iequals(text, "\xC2\xB5s") ||
      iequals(text, "\xCE\xBCs")) {
    return TimeUnit::kMicroseconds;
  }
  if (iequals(text, "ns") || iequals(text, "nsec") || iequals(text, "nanos") ||
      iequals(text, "nanoseconds")) {
    return TimeUnit::kNanoseconds;
  }
  return std::nullopt;
}

std::string_view time_unit_name(TimeUnit unit) {
  switch (unit) {
    case TimeUnit::kSeconds: return "s";
    case TimeUnit::kMilliseconds: return "ms";
    case TimeUnit::kMicroseconds: return "us";
    case TimeUnit::kNanoseconds: return "ns";
  }
  return "s";
}

namespace {
std::optional<TimeNs> parse_plain_decimal_time(std::string_view text, TimeUnit unit) {
  // Nanoseconds per unit, and how many fractional digits of the unit are
  // whole nanoseconds (the next digit decides the rounding).
  std::uint64_t ns_per_unit = 1;
  int exact_digits = 0;
  switch (unit) {
    case TimeUnit::kSeconds: ns_per_unit = 1'000'000'000; exact_digits = 9; break;
    case TimeUnit::kMilliseconds: ns_per_unit = 1'000'000; exact_digits = 6; break;
    case TimeUnit::kMicroseconds: ns_per_unit = 1'000; exact_digits = 3; break;
    case TimeUnit::kNanoseconds: ns_per_unit = 1; exact_digits = 0; break;
  }

  std::size_t i = 0;
  const std::size_t n = text.size();
  bool negative = false;
  if (i < n && (text[i] == '+' || text[i] == '-')) {
    negative = text[i] == '-';
    ++i;
  }
  // Largest magnitude that fits: 2^63 - 1, or 2^63 for a negative result.
  const std::uint64_t limit =
      static_cast<std::uint64_t>(std::numeric_limits<std::int64_t>::max()) + (negative ? 1u : 0u);
  const std::uint64_t max_whole = limit / ns_per_unit;

  bool any_digit = false;
  std::uint64_t whole = 0;
  for (; i < n && is_digit(text[i]); ++i) {
    // whole <= max_whole/10 keeps whole*10+9 below 2^64 (max_whole < 2^63).
    if (whole > max_whole / 10) return std::nullopt;
    whole = whole * 10 + static_cast<std::uint64_t>(digit(text[i]));
    if (whole > max_whole) return std::nullopt;
    any_digit = true;
  }

  std::uint64_t fraction_ns = 0;  // < ns_per_unit
  std::uint64_t round_up = 0;     // 0 or 1: half away from zero on the magnitude
  if (i < n && text[i] == '.') {
    ++i;
    std::uint64_t place = ns_per_unit;
    int count = 0;
    for (; i < n && is_digit(text[i]); ++i, ++count) {
      const auto d = static_cast<std::uint64_t>(digit(text[i]));
      if (count < exact_digits) {
        place /= 10;
        fraction_ns += d * place;
      } else if (count == exact_digits) {
        // The first dropped digit is >= 5 exactly when the dropped part is
        // at least half a nanosecond.
        round_up = d >= 5 ? 1 : 0;
      }
      any_digit = true;
    }
  }
  if (i != n || !any_digit) return std::nullopt;

  std::uint64_t magnitude = whole * ns_per_unit;  // <= limit by max_whole
  const std::uint64_t rest = fraction_ns + round_up;
  if (magnitude > limit - rest) return std::nullopt;
  magnitude += rest;
  if (!negative) return static_cast<TimeNs>(magnitude);
  if (magnitude > static_cast<std::uint64_t>(std::numeric_limits<TimeNs>::max())) {
    return std::numeric_limits<TimeNs>::min();  // exactly -2^63
  }
  return -static_cast<TimeNs>(magnitude);
}

}  // namespace

std::optional<TimeNs> parse_decimal_time(std::string_view text, TimeUnit unit) {
  const std::size_t e = text.find_first_of("eE");
  if (e == std::string_view::npos) return parse_plain_decimal_time(text, unit);
  // An exponent (JSON writers use it: "1.7e9", "4.0e0"): move the decimal
  // point in a small buffer and read the plain decimal exactly.
  std::string_view mantissa = text.substr(0, e);
  std::string_view exponent = text.substr(e + 1);
  int shift = 0;
  bool exp_negative = false;
  std::size_t k = 0;
  if (k < exponent.size() && (exponent[k] == '+' || exponent[k] == '-')) {
    exp_negative = exponent[k] == '-';
    ++k;
  }
  if (k == exponent.size()) return std::nullopt;
  for (; k < exponent.size(); ++k) {
    if (!is_digit(exponent[k])) return std::nullopt;
    shift = shift * 10 + digit(exponent[k]);
    if (shift > 40) return std::nullopt;
  }
  if (exp_negative) shift = -shift;
  // Rewrite as a plain decimal in a fixed buffer: sign, digits, point.
  char sign = 0;
  if (!mantissa.empty() && (mantissa[0] == '+' || mantissa[0] == '-')) {
    sign = mantissa[0];
    mantissa.remove_prefix(1);
  }
  if (mantissa.size() > 40) return std::nullopt;
  char digits[48];
  int count = 0;
  int point = -1;
  for (char c : mantissa) {
    if (c == '.') {
      if (point >= 0) return std::nullopt;
      point = count;
    } else if (is_digit(c)) {
      digits[count++] = c;
    } else {
      return std::nullopt;
    }
  }
  if (count == 0) return std::nullopt;
  if (point < 0) point = count;
  point += shift;  // digits before the point; may be <= 0 or > count
  char plain[160];
  int n = 0;
  if (sign) plain[n++] = sign;
  if (point <= 0) {
    plain[n++] = '0';
    plain[n++] = '.';
    for (int z = 0; z < -point; ++z) plain[n++] = '0';
    for (int d = 0; d < count; ++d) plain[n++] = digits[d];
  } else {
    for (int d = 0; d < point; ++d) plain[n++] = d < count ? digits[d] : '0';
    if (point < count) {
      plain[n++] = '.';
      for (int d = point; d < count; ++d) plain[n++] = digits[d];
    }
  }
  return parse_plain_decimal_time(std::string_view(plain, static_cast<std::size_t>(n)), unit);
}

std::optional<TimeNs> parse_rfc3339(std::string_view text, int default_offset_s) {
  // RFC 3339 section 5.6: full-date "T" partial-time time-offset.
  // 0123456789012345678
  // YYYY-MM-DDThh:mm:ss
  if (text.size() < 19) return std::nullopt;
  int year = 0, month = 0, day = 0, hour = 0, minute = 0, second = 0;
  if (!read_digits(text, 0, 4, year) || text[4] != '-' || !read_digits(text, 5, 2, month) ||
      text[7] != '-' || !read_digits(text, 8, 2, day)) {
    return std::nullopt;
  }
  if (text[10] != 'T' && text[10] != 't' && text[10] != ' ') return std::nullopt;
  if (!read_digits(text, 11, 2, hour) || text[13] != ':' || !read_digits(text, 14, 2, minute) ||
      text[16] != ':' || !read_digits(text, 17, 2, second)) {
    return std::nullopt;
  }
  // RFC 3339 section 5.7: day within the month (leap years per the
  // Gregorian rule), hour 00-23, minute 00-59, second 00-60 (leap second).
  if (month < 1 || month > 12) return std::nullopt;
  if (day < 1 || static_cast<unsigned>(day) > days_in_month(year, static_cast<unsigned>(month))) {
    return std::nullopt;
  }
  if (hour > 23 || minute > 59 || second > 60) return std::nullopt;

  std::size_t pos = 19;
  std::int64_t fraction_ns = 0;
  if (pos < text.size() && text[pos] == '.') {
    ++pos;
    std::int64_t place = kNsPerSecond;
    int count = 0;
    for (; pos < text.size() && is_digit(text[pos]); ++pos, ++count) {
      if (count == 9) return std::nullopt;  // more than nanoseconds: rejected
      place /= 10;
      fraction_ns += digit(text[pos]) * place;
    }
    if (count == 0) return std::nullopt;
  }

  int offset_s = default_offset_s;
  const std::string_view zone = text.substr(pos);
  if (zone.empty()) {
    // No zone: the caller's default (UTC unless --tz says otherwise).
  } else if (zone == "Z" || zone == "z") {
    offset_s = 0;
  } else if (const std::optional<int> offset = parse_numeric_offset(zone)) {
    offset_s = *offset;
  } else {
    return std::nullopt;
  }

  // Second 60 simply counts on: 23:59:60 becomes 00:00:00 of the next day.
  std::int64_t seconds =
      days_from_civil(year, static_cast<unsigned>(month), static_cast<unsigned>(day)) *
          kSecondsPerDay +
      hour * 3600 + minute * 60 + second - offset_s;
  // Borrow a second so that the fraction has the sign of `seconds`, which
  // lets the product reach the lowest TimeNs without a false overflow.
  if (seconds < 0 && fraction_ns > 0) {
    seconds += 1;
    fraction_ns -= kNsPerSecond;
  }
  std::int64_t ns = 0;
  if (__builtin_mul_overflow(seconds, kNsPerSecond, &ns)) return std::nullopt;
  if (__builtin_add_overflow(ns, fraction_ns, &ns)) return std::nullopt;
  return ns;
}

std::optional<int> parse_utc_offset(std::string_view text) {
  if (iequals(text, "utc") || iequals(text, "z")) return 0;
  return parse_numeric_offset(text);
}

std::string format_rfc3339_utc(TimeNs t) {
  const std::int64_t ms = floor_div(t, 1'000'000);
  const std::int64_t seconds = floor_div(ms, 1000);
  const std::int64_t millis = ms - seconds * 1000;
  const std::int64_t days = floor_div(seconds, kSecondsPerDay);
  const std::int64_t second_of_day = seconds - days * kSecondsPerDay;
  const CivilDate date = civil_from_days(days);

  // TimeNs spans 1677..2262, so the year always has four digits.
  char buffer[] = "YYYY-MM-DDThh:mm:ss.sssZ";
  put_digits(buffer + 4, 4, date.year);
  put_digits(buffer + 7, 2, date.month);
  put_digits(buffer + 10, 2, date.day);
  put_digits(buffer + 13, 2, second_of_day / 3600);
  put_digits(buffer + 16, 2, second_of_day / 60 % 60);
  put_digits(buffer + 19, 2, second_of_day % 60);
  put_digits(buffer + 23, 3, millis);
  return std::string(buffer, sizeof(buffer) - 1);
}

long long days_from_civil(long long year, unsigned month, unsigned day) {
  // Hinnant, "chrono-Compatible Low-Level Date Algorithms", days_from_civil:
  // count years from March so that the leap day is the last day of the year,
  // then split into 400-year eras of 146097 days.
  year -= month <= 2 ? 1 : 0;
  const long long era = (year >= 0 ? year : year - 399) / 400;
  const long long year_of_era = year - era * 400;                               // [0, 399]
  const long long month_from_march = month > 2 ? month - 3 : month + 9;         // [0, 11]
  const long long day_of_year = (153 * month_from_march + 2) / 5 + day - 1;     // [0, 365]
  const long long day_of_era =
      year_of_era * 365 + year_of_era / 4 - year_of_era / 100 + day_of_year;    // [0, 146096]
  return era * 146097 + day_of_era - 719468;  // 719468 days from 0000-03-01 to 1970-01-01
}

CivilDate civil_from_days(long long days) {
  // Hinnant, "chrono-Compatible Low-Level Date Algorithms", civil_from_days.
  days += 719468;
  const long long era = (days >= 0 ? days : days - 146096) / 146097;
  const long long day_of_era = days - era * 146097;                              // [0, 146096]
  const long long year_of_era =
      (day_of_era - day_of_era / 1460 + day_of_era / 36524 - day_of_era / 146096) / 365;  // [0, 399]
  const long long day_of_year =
      day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);     // [0, 365]
  const long long month_from_march = (5 * day_of_year + 2) / 153;                 // [0, 11]
  CivilDate date;
  date.day = static_cast<unsigned>(day_of_year - (153 * month_from_march + 2) / 5 + 1);
  date.month = static_cast<unsigned>(month_from_march < 10 ? month_from_march + 3 : month_from_march - 9);
  date.year = year_of_era + era * 400 + (date.month <= 2 ? 1 : 0);
  return date;
}

}  // namespace baroz
