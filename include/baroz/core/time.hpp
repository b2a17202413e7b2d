// Time parsing: decimal seconds / milliseconds / epoch numbers and RFC 3339,
// all to integer nanoseconds without passing through a double.
//
// Nothing here consults the host's time zone or locale.
#pragma once

#include <optional>
#include <string>
#include <string_view>

#include "baroz/core/sample.hpp"

namespace baroz {

/// Unit of a numeric time field.
enum class TimeUnit { kSeconds, kMilliseconds, kMicroseconds, kNanoseconds };

/// Parses "s", "ms", "us", "ns" (also "sec", "msec", "usec", "nsec",
/// "seconds", "millis", "micros", "nanos", "milliseconds", "microseconds",
/// "nanoseconds", and "µs" with U+00B5 or U+03BC), ASCII case-insensitively;
/// nullopt otherwise.
std::optional<TimeUnit> parse_time_unit(std::string_view text);
/// Canonical name: "s", "ms", "us" or "ns".
std::string_view time_unit_name(TimeUnit unit);

/// Parses a decimal number of `unit` ("12", "-3.25", "1733097600.123456789")
/// exactly into nanoseconds, rounding half away from zero below 1 ns
/// (only integer arithmetic: "0.0000000015" s is 2 ns, "1.5" ms 1500000 ns).
/// Accepts an optional sign ('+' or '-') and one decimal point with at least
/// one digit on either side of it (".5" and "5." are accepted); any number
/// of fractional digits, an optional exponent ("4.0e0", as JSON writers
/// produce; read exactly, not through a double). No spaces.
/// nullopt when the text is not such a number or the result does not fit a
/// TimeNs (about +-292 years of nanoseconds around the epoch).
std::optional<TimeNs> parse_decimal_time(std::string_view text, TimeUnit unit);

/// Parses an RFC 3339 / ISO 8601 date-time: "YYYY-MM-DDThh:mm:ss[.frac]ZONE"
/// with 'T', 't' or a single space between date and time, fraction up to 9
/// digits (more digits are rejected), ZONE one of 'Z', 'z', "+hh:mm", "-hh:mm",
/// "+hhmm", "+hh". A time without zone takes `default_offset_s` (seconds east
/// of UTC). Leap second 60 is accepted and folded onto the next second.
/// Fields have exactly the digits shown; month 01-12, day valid for the month
/// (proleptic Gregorian, leap years included), hour 00-23, minute 00-59,
/// second 00-60, zone hours 00-23 and minutes 00-59 ("-00:00" is UTC).
/// Returns nanoseconds since the Unix epoch (UTC); nullopt if invalid
/// (including impossible dates such as 2026-02-30) or outside the TimeNs
/// range (1677-09-21 to 2262-04-11).
std::optional<TimeNs> parse_rfc3339(std::string_view text, int default_offset_s);

/// Parses a fixed zone for --tz: "UTC", "Z" (any case), "+hh:mm", "-hh:mm",
/// "+hhmm", "+hh" (hours 00-23, minutes 00-59). Returns seconds east of UTC;
/// nullopt for anything else (named
/// zones such as "Europe/Berlin" are not supported: the host's zone database
/// is never consulted).
std::optional<int> parse_utc_offset(std::string_view text);

/// Formats nanoseconds since the epoch as RFC 3339 UTC with millisecond
/// precision, e.g. "2026-06-14T09:00:00.000Z". Sub-millisecond digits are
/// truncated toward the past (floor), so the formatted instant never lies
/// after `t`. Valid for every TimeNs.
std::string format_rfc3339_utc(TimeNs t);

/// Days since 1970-01-01 of a proleptic Gregorian civil date.
/// (Algorithm: H. Hinnant, "chrono-Compatible Low-Level Date Algorithms".)
/// `month` 1-12, `day` 1-31 (not checked against the month); any year that
/// keeps the result within +-2^62 days.
long long days_from_civil(long long year, unsigned month, unsigned day);

/// A proleptic Gregorian calendar date.
struct CivilDate {
  long long year = 1970;
  unsigned month = 1;  ///< 1-12
  unsigned day = 1;    ///< 1-31
};

/// Inverse of days_from_civil: the civil date `days` days after 1970-01-01
/// (negative before). (Algorithm: H. Hinnant, as above.)
CivilDate civil_from_days(long long days);

/// True for a leap year of the proleptic Gregorian calendar (divisible by 4,
/// except centuries not divisible by 400).
constexpr bool is_leap_year(long long year) noexcept {
  return year % 4 == 0 && (year % 100 != 0 || year % 400 == 0);
}

/// Number of days of `month` (1-12) in `year`; 0 for a month outside 1-12.
constexpr unsigned days_in_month(long long year, unsigned month) noexcept {
  constexpr unsigned kDays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  if (month < 1 || month > 12) return 0;
  return month == 2 && is_leap_year(year) ? 29u : kDays[month - 1];
}

}  // namespace baroz

// References
// - G. Klyne, C. Newman, "Date and Time on the Internet: Timestamps",
//   RFC 3339, IETF, 2002, section 5.6 (syntax) and 5.7 (restrictions).
// - H. Hinnant, "chrono-Compatible Low-Level Date Algorithms",
//   https://howardhinnant.github.io/date_algorithms.html (public domain):
//   days_from_civil and civil_from_days.
