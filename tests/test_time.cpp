// Time parsing and formatting in integer nanoseconds (core/time.hpp).
#include <catch2/catch.hpp>

#include <cstdint>
#include <limits>
#include <optional>
#include <string>

#include "baroz/core/time.hpp"

using baroz::parse_decimal_time;
using baroz::parse_rfc3339;
using baroz::TimeNs;
using baroz::TimeUnit;

namespace {

constexpr TimeNs kNsPerS = 1'000'000'000;
constexpr TimeNs kMax = std::numeric_limits<TimeNs>::max();
constexpr TimeNs kMin = std::numeric_limits<TimeNs>::min();

std::optional<TimeNs> utc(std::string_view text) { return parse_rfc3339(text, 0); }

}  // namespace

// ---------------------------------------------------------------------------
// Time units

TEST_CASE("parse_time_unit reads the unit names in any case", "[core][time]") {
  for (const char* name : {"s", "S", "sec", "SEC", "seconds", "Seconds"}) {
    INFO(name);
    CHECK(baroz::parse_time_unit(name) == TimeUnit::kSeconds);
  }
  for (const char* name : {"ms", "MS", "msec", "millis", "milliseconds"}) {
    INFO(name);
    CHECK(baroz::parse_time_unit(name) == TimeUnit::kMilliseconds);
  }
  for (const char* name : {"us", "US", "usec", "micros", "microseconds", "\xC2\xB5s", "\xCE\xBCs"}) {
    INFO(name);
    CHECK(baroz::parse_time_unit(name) == TimeUnit::kMicroseconds);
  }
  for (const char* name : {"ns", "NS", "nsec", "nanos", "nanoseconds"}) {
    INFO(name);
    CHECK(baroz::parse_time_unit(name) == TimeUnit::kNanoseconds);
  }
  for (const char* name : {"", "m", "min", "h", "sx", " s", "s ", "mss", "ps", "second_s"}) {
    INFO(name);
    CHECK_FALSE(baroz::parse_time_unit(name).has_value());
  }
}

TEST_CASE("time_unit_name gives the canonical names, which parse back", "[core][time]") {
  CHECK(baroz::time_unit_name(TimeUnit::kSeconds) == "s");
  CHECK(baroz::time_unit_name(TimeUnit::kMilliseconds) == "ms");
  CHECK(baroz::time_unit_name(TimeUnit::kMicroseconds) == "us");
  CHECK(baroz::time_unit_name(TimeUnit::kNanoseconds) == "ns");
  for (TimeUnit unit : {TimeUnit::kSeconds, TimeUnit::kMilliseconds, TimeUnit::kMicroseconds,
                        TimeUnit::kNanoseconds}) {
    CHECK(baroz::parse_time_unit(baroz::time_unit_name(unit)) == unit);
  }
}

// ---------------------------------------------------------------------------
// Decimal times. Expected values follow from the SI prefixes (1 s = 10^3 ms
// = 10^6 us = 10^9 ns, exact) and decimal arithmetic done by hand.

TEST_CASE("parse_decimal_time converts exactly to nanoseconds", "[core][time]") {
  CHECK(parse_decimal_time("12", TimeUnit::kSeconds) == 12 * kNsPerS);
  CHECK(parse_decimal_time("-3.25", TimeUnit::kSeconds) == -3'250'000'000);
  CHECK(parse_decimal_time("+7", TimeUnit::kSeconds) == 7 * kNsPerS);
  CHECK(parse_decimal_time("0", TimeUnit::kSeconds) == 0);
  CHECK(parse_decimal_time("-0.0", TimeUnit::kSeconds) == 0);
  CHECK(parse_decimal_time(".5", TimeUnit::kSeconds) == 500'000'000);
  CHECK(parse_decimal_time("5.", TimeUnit::kSeconds) == 5 * kNsPerS);
  CHECK(parse_decimal_time("000000000000000000000000012", TimeUnit::kSeconds) == 12 * kNsPerS);
  // A double would lose the last digits of this epoch time (2024-12-02).
  CHECK(parse_decimal_time("1733097600.123456789", TimeUnit::kSeconds) == 1'733'097'600'123'456'789);
  CHECK(parse_decimal_time("1733097600.1234567890000", TimeUnit::kSeconds) ==
        1'733'097'600'123'456'789);
  CHECK(parse_decimal_time("1.5", TimeUnit::kMilliseconds) == 1'500'000);
  CHECK(parse_decimal_time("1733097600123", TimeUnit::kMilliseconds) == 1'733'097'600'123'000'000);
  CHECK(parse_decimal_time("-0.001", TimeUnit::kMilliseconds) == -1'000);
  CHECK(parse_decimal_time("2.5", TimeUnit::kMicroseconds) == 2'500);
  CHECK(parse_decimal_time("1733097600123456", TimeUnit::kMicroseconds) == 1'733'097'600'123'456'000);
  CHECK(parse_decimal_time("42", TimeUnit::kNanoseconds) == 42);
  CHECK(parse_decimal_time("1733097600123456789", TimeUnit::kNanoseconds) == 1'733'097'600'123'456'789);
}

TEST_CASE("parse_decimal_time rounds half away from zero below one nanosecond", "[core][time]") {
  CHECK(parse_decimal_time("0.0000000015", TimeUnit::kSeconds) == 2);
  CHECK(parse_decimal_time("-0.0000000015", TimeUnit::kSeconds) == -2);
  CHECK(parse_decimal_time("0.0000000025", TimeUnit::kSeconds) == 3);  // away from zero, not to even
  CHECK(parse_decimal_time("0.00000000149999999", TimeUnit::kSeconds) == 1);
  CHECK(parse_decimal_time("0.0000000005", TimeUnit::kSeconds) == 1);
  CHECK(parse_decimal_time("0.00000000049999", TimeUnit::kSeconds) == 0);
  CHECK(parse_decimal_time("-0.00000000049999", TimeUnit::kSeconds) == 0);
  CHECK(parse_decimal_time("0.9999999995", TimeUnit::kSeconds) == kNsPerS);  // carries into the second
  CHECK(parse_decimal_time("1.0000005", TimeUnit::kMilliseconds) == 1'000'001);
  CHECK(parse_decimal_time("1.0005", TimeUnit::kMicroseconds) == 1'001);
  CHECK(parse_decimal_time("1.0004999", TimeUnit::kMicroseconds) == 1'000);
  CHECK(parse_decimal_time("2.5", TimeUnit::kNanoseconds) == 3);
  CHECK(parse_decimal_time("-2.5", TimeUnit::kNanoseconds) == -3);
  CHECK(parse_decimal_time("2.4999", TimeUnit::kNanoseconds) == 2);
  CHECK(parse_decimal_time("-2.4999", TimeUnit::kNanoseconds) == -2);
}

TEST_CASE("parse_decimal_time rejects values outside int64 nanoseconds", "[core][time]") {
  // int64 range: -9223372036854775808 .. 9223372036854775807 (two's complement, 64 bits).
  CHECK(parse_decimal_time("9223372036.854775807", TimeUnit::kSeconds) == kMax);
  CHECK_FALSE(parse_decimal_time("9223372036.854775808", TimeUnit::kSeconds));
  CHECK(parse_decimal_time("-9223372036.854775808", TimeUnit::kSeconds) == kMin);
  CHECK_FALSE(parse_decimal_time("-9223372036.854775809", TimeUnit::kSeconds));
  CHECK_FALSE(parse_decimal_time("9223372036.8547758075", TimeUnit::kSeconds));  // rounds over
  CHECK(parse_decimal_time("9223372036.8547758074", TimeUnit::kSeconds) == kMax);
  CHECK_FALSE(parse_decimal_time("9223372037", TimeUnit::kSeconds));
  CHECK_FALSE(parse_decimal_time("18446744073709551616", TimeUnit::kSeconds));
  CHECK(parse_decimal_time("9223372036854.775807", TimeUnit::kMilliseconds) == kMax);
  CHECK_FALSE(parse_decimal_time("9223372036855", TimeUnit::kMilliseconds));
  CHECK(parse_decimal_time("9223372036854775807", TimeUnit::kNanoseconds) == kMax);
  CHECK_FALSE(parse_decimal_time("9223372036854775808", TimeUnit::kNanoseconds));
  CHECK(parse_decimal_time("-9223372036854775808", TimeUnit::kNanoseconds) == kMin);
  CHECK_FALSE(parse_decimal_time("-9223372036854775809", TimeUnit::kNanoseconds));
  CHECK(parse_decimal_time("9223372036854775807.4", TimeUnit::kNanoseconds) == kMax);
  CHECK_FALSE(parse_decimal_time("9223372036854775807.5", TimeUnit::kNanoseconds));
  CHECK_FALSE(parse_decimal_time("99999999999999999999999999", TimeUnit::kNanoseconds));
}

TEST_CASE("parse_decimal_time reads JSON exponent forms exactly", "[core][time]") {
  // JSON writers may write numbers with an exponent (RFC 8259 §6).
  CHECK(parse_decimal_time("4.0e0", TimeUnit::kSeconds) == 4'000'000'000LL);
  CHECK(parse_decimal_time("1.7330976001e9", TimeUnit::kSeconds) == 1'733'097'600'100'000'000LL);
  CHECK(parse_decimal_time("1E5", TimeUnit::kMilliseconds) == 100'000'000'000LL);
  CHECK(parse_decimal_time("25e-3", TimeUnit::kSeconds) == 25'000'000LL);
  CHECK(parse_decimal_time("-1.5e-9", TimeUnit::kSeconds) == -2LL);  // half away from zero
}

TEST_CASE("parse_decimal_time rejects malformed numbers", "[core][time]") {
  for (const char* text : {"", "+", "-", ".", "+.", "-.", "1e", "e5", "1e+", "1e5.5", " 1", "1 ", "1 2",
                           "1..2", "1.2.3", "0x10", "1,5", "--1", "+-1", "-+1", "abc", "1s", "nan",
                           "inf", "\t1", "1_000", "١"}) {
    INFO(text);
    CHECK_FALSE(parse_decimal_time(text, TimeUnit::kSeconds));
    CHECK_FALSE(parse_decimal_time(text, TimeUnit::kNanoseconds));
  }
}

// ---------------------------------------------------------------------------
// Calendar

TEST_CASE("days_from_civil matches POSIX epoch day numbers", "[core][time]") {
  CHECK(baroz::days_from_civil(1970, 1, 1) == 0);
  CHECK(baroz::days_from_civil(1969, 12, 31) == -1);
  // Source: GNU date (coreutils 9.1): `date -u -d 2000-01-01T00:00:00Z +%s`
  // prints 946684800 = 10957 days * 86400 s.
  CHECK(baroz::days_from_civil(2000, 1, 1) == 10957);
  // Source: GNU date: `date -u -d @951868800` prints "Wed Mar  1 00:00:00 UTC 2000";
  // 951868800 s / 86400 = 11017 days.
  CHECK(baroz::days_from_civil(2000, 3, 1) == 11017);
  // Source: GNU date: `date -u -d 2024-02-29T00:00:00Z +%s` prints 1709164800 (= 19782 d).
  CHECK(baroz::days_from_civil(2024, 2, 29) == 19782);
  // Source: Hinnant, "chrono-Compatible Low-Level Date Algorithms": 0000-03-01
  // is day -719468 of the 1970 epoch (the constant of days_from_civil).
  CHECK(baroz::days_from_civil(0, 3, 1) == -719468);
  // Source: GNU date: `date -u -d 1937-01-01T11:40:27Z +%s` prints -1041337173
  // = -12053 d * 86400 + 42027 s.
  CHECK(baroz::days_from_civil(1937, 1, 1) == -12053);
}

TEST_CASE("civil_from_days inverts days_from_civil day by day over 4000 years", "[core][time]") {
  // Walk from -0400-01-01 (proleptic, astronomical year numbering) to
  // 3600-01-01 one day at a time: every day must be the calendar successor of
  // the previous one, and both functions must agree.
  const long long first = baroz::days_from_civil(-400, 1, 1);
  const long long last = baroz::days_from_civil(3600, 1, 1);
  baroz::CivilDate expected{-400, 1, 1};
  long long mismatches = 0;
  for (long long days = first; days <= last; ++days) {
    const baroz::CivilDate got = baroz::civil_from_days(days);
    if (got.year != expected.year || got.month != expected.month || got.day != expected.day ||
        baroz::days_from_civil(got.year, got.month, got.day) != days) {
      if (mismatches++ < 5) FAIL_CHECK("day " << days << ": " << got.year << "-" << got.month << "-" << got.day);
    }
    if (++expected.day > baroz::days_in_month(expected.year, expected.month)) {
      expected.day = 1;
      if (++expected.month > 12) {
        expected.month = 1;
        ++expected.year;
      }
    }
  }
  CHECK(mismatches == 0);
  // 4000 Gregorian years are 10 cycles of 146097 days (400 years each).
  // Source: Gregorian calendar, 97 leap years per 400 years.
  CHECK(last - first == 10 * 146097);
}

TEST_CASE("leap years follow the Gregorian rule", "[core][time]") {
  // Source: Gregorian calendar rule (papal bull Inter gravissimas, 1582):
  // every 4th year, except centuries not divisible by 400.
  CHECK(baroz::is_leap_year(2024));
  CHECK_FALSE(baroz::is_leap_year(2023));
  CHECK_FALSE(baroz::is_leap_year(2100));
  CHECK_FALSE(baroz::is_leap_year(1900));
  CHECK(baroz::is_leap_year(2000));
  CHECK(baroz::is_leap_year(1600));
  CHECK(baroz::is_leap_year(0));    // 1 BC in astronomical numbering (ISO 8601 year 0000)
  CHECK(baroz::is_leap_year(-4));
  CHECK_FALSE(baroz::is_leap_year(-1));
  CHECK_FALSE(baroz::is_leap_year(-100));
  CHECK(baroz::days_in_month(2024, 2) == 29);
  CHECK(baroz::days_in_month(2023, 2) == 28);
  CHECK(baroz::days_in_month(2023, 4) == 30);
  CHECK(baroz::days_in_month(2023, 12) == 31);
  CHECK(baroz::days_in_month(2023, 0) == 0);
  CHECK(baroz::days_in_month(2023, 13) == 0);
}

// ---------------------------------------------------------------------------
// RFC 3339

TEST_CASE("parse_rfc3339 reads UTC times", "[core][time]") {
  // Source: POSIX epoch definition (1970-01-01T00:00:00Z is 0).
  CHECK(utc("1970-01-01T00:00:00Z") == 0);
  // Source: GNU date: `date -u -d @951868800` prints "Wed Mar  1 00:00:00 UTC 2000".
  CHECK(utc("2000-03-01T00:00:00Z") == 951'868'800 * kNsPerS);
  CHECK(utc("2000-03-01t00:00:00z") == 951'868'800 * kNsPerS);
  CHECK(utc("2000-03-01 00:00:00Z") == 951'868'800 * kNsPerS);
  CHECK(utc("1969-12-31T23:59:59Z") == -kNsPerS);
}

TEST_CASE("parse_rfc3339 applies zone offsets", "[core][time]") {
  const TimeNs march_first = 951'868'800 * kNsPerS;  // 2000-03-01T00:00:00Z (GNU date, above)
  CHECK(utc("2000-03-01T02:00:00+02:00") == march_first);
  CHECK(utc("2000-03-01T02:00:00+0200") == march_first);
  CHECK(utc("2000-03-01T02:00:00+02") == march_first);
  CHECK(utc("2000-02-29T18:30:00-05:30") == march_first);  // 18:30 + 5:30 crosses midnight
  CHECK(utc("2000-03-01T05:30:00+0530") == march_first);
  CHECK(utc("2000-02-29T18:30:00-0530") == march_first);
  CHECK(utc("2000-03-01T00:00:00+00:00") == march_first);
  CHECK(utc("2000-03-01T00:00:00-00:00") == march_first);  // RFC 3339 4.3: unknown local offset, UTC
  CHECK(utc("2000-03-01T23:59:00+23:59") == march_first);
}

TEST_CASE("parse_rfc3339 uses the default offset only without a zone", "[core][time]") {
  const TimeNs march_first = 951'868'800 * kNsPerS;
  CHECK(parse_rfc3339("2000-03-01T00:00:00", 0) == march_first);
  CHECK(parse_rfc3339("2000-03-01T01:00:00", 3600) == march_first);
  CHECK(parse_rfc3339("2000-02-29T19:00:00", -5 * 3600) == march_first);
  CHECK(parse_rfc3339("2000-03-01T00:00:00Z", 3600) == march_first);
  CHECK(parse_rfc3339("2000-03-01T02:00:00+02:00", -3600) == march_first);
  CHECK(parse_rfc3339("2000-03-01 00:00:00.25", 0) == march_first + 250'000'000);
}

TEST_CASE("parse_rfc3339 reads fractions of a second up to nanoseconds", "[core][time]") {
  CHECK(utc("1970-01-01T00:00:00.5Z") == 500'000'000);
  CHECK(utc("1970-01-01T00:00:00.123456789Z") == 123'456'789);
  CHECK(utc("1970-01-01T00:00:00.000000001Z") == 1);
  CHECK(utc("1970-01-01T00:00:00.100Z") == 100'000'000);
  CHECK(utc("1969-12-31T23:59:59.5Z") == -500'000'000);
  CHECK(utc("1970-01-01T01:00:00.75+01:00") == 750'000'000);
  CHECK_FALSE(utc("1970-01-01T00:00:00.1234567891Z"));  // more than 9 digits
  CHECK_FALSE(utc("1970-01-01T00:00:00.Z"));
  CHECK_FALSE(utc("1970-01-01T00:00:00."));
  CHECK_FALSE(utc("1970-01-01T00:00:00,5Z"));
  CHECK_FALSE(utc("1970-01-01T00:00:00.5.5Z"));
}

TEST_CASE("parse_rfc3339 reads the examples of RFC 3339 section 5.8", "[core][time]") {
  // Source: RFC 3339 section 5.8. Seconds since the epoch from GNU date
  // (coreutils 9.1), `date -u -d <time> +%s`.
  // "1985-04-12T23:20:50.52Z": date prints 482196050 for 1985-04-12T23:20:50Z.
  CHECK(utc("1985-04-12T23:20:50.52Z") == 482'196'050 * kNsPerS + 520'000'000);
  // "1996-12-19T16:39:57-08:00" is 1996-12-20T00:39:57Z (date: 851042397).
  CHECK(utc("1996-12-19T16:39:57-08:00") == utc("1996-12-20T00:39:57Z"));
  CHECK(utc("1996-12-19T16:39:57-08:00") == 851'042'397 * kNsPerS);
  // "1990-12-31T23:59:60Z": the leap second, folded onto the next second,
  // 1991-01-01T00:00:00Z (date: 662688000).
  CHECK(utc("1990-12-31T23:59:60Z") == 662'688'000 * kNsPerS);
  CHECK(utc("1990-12-31T23:59:60Z") == utc("1991-01-01T00:00:00Z"));
  // "1990-12-31T15:59:60-08:00": the same leap second in Pacific time.
  CHECK(utc("1990-12-31T15:59:60-08:00") == 662'688'000 * kNsPerS);
  // "1937-01-01T12:00:27.87+00:20": Amsterdam time then; 11:40:27.87Z
  // (date: -1041337173 for 1937-01-01T11:40:27Z).
  CHECK(utc("1937-01-01T12:00:27.87+00:20") == -1'041'337'173 * kNsPerS + 870'000'000);
}

TEST_CASE("parse_rfc3339 validates the calendar", "[core][time]") {
  // Source: Gregorian rule (see "leap years follow the Gregorian rule").
  // GNU date: `date -u -d 2024-02-29T00:00:00Z +%s` = 1709164800,
  // `date -u -d 2000-02-29T00:00:00Z +%s` = 951782400.
  CHECK(utc("2024-02-29T00:00:00Z") == 1'709'164'800 * kNsPerS);
  CHECK(utc("2000-02-29T00:00:00Z") == 951'782'400 * kNsPerS);
  CHECK_FALSE(utc("2023-02-29T00:00:00Z"));
  CHECK_FALSE(utc("2100-02-29T00:00:00Z"));
  CHECK_FALSE(utc("2026-02-30T00:00:00Z"));
  CHECK_FALSE(utc("2026-04-31T00:00:00Z"));
  CHECK(utc("2026-04-30T00:00:00Z").has_value());
  CHECK(utc("2026-12-31T23:59:59Z").has_value());
  CHECK_FALSE(utc("2026-13-01T00:00:00Z"));
  CHECK_FALSE(utc("2026-00-10T00:00:00Z"));
  CHECK_FALSE(utc("2026-01-00T00:00:00Z"));
  CHECK_FALSE(utc("2026-01-32T00:00:00Z"));
  CHECK_FALSE(utc("2026-01-01T24:00:00Z"));
  CHECK_FALSE(utc("2026-01-01T23:60:00Z"));
  CHECK_FALSE(utc("2026-01-01T23:59:61Z"));
  CHECK_FALSE(utc("2026-01-01T00:00:00+24:00"));
  CHECK_FALSE(utc("2026-01-01T00:00:00+05:60"));
  CHECK_FALSE(utc("2026-01-01T00:00:00-99"));
}

TEST_CASE("parse_rfc3339 rejects malformed text", "[core][time]") {
  for (const char* text :
       {"", "2024-01-01", "2024-01-01T00:00Z", "2024-01-01T00:00", "2024-1-01T00:00:00Z",
        "2024-01-1T00:00:00Z", "24-01-01T00:00:00Z", "+2024-01-01T00:00:00Z",
        "2024/01/01T00:00:00Z", "2024-01-01X00:00:00Z", "2024-01-01_00:00:00Z",
        "2024-01-01  00:00:00Z", "2024-01-01T00:00:00 Z", "2024-01-01T00:00:00+2",
        "2024-01-01T00:00:00+02:0", "2024-01-01T00:00:00+02:00:00", "2024-01-01T00:00:00+020",
        "2024-01-01T00:00:00ZZ", "2024-01-01T00:00:00UTC", "2024-01-01T00:00:00GMT",
        "2024-01-01T00.00.00Z", "2024-01-01T0a:00:00Z", " 2024-01-01T00:00:00Z",
        "2024-01-01T00:00:00Z ", "2024-01-01T00:00:00+02:00Z", "2024-01-01T00:00:00-",
        "2024-01-01T00:00:00+", "1733097600", "2024-01-01T00:00:00.5+02:00x"}) {
    INFO(text);
    CHECK_FALSE(utc(text));
  }
}

TEST_CASE("parse_rfc3339 covers exactly the int64 nanosecond range", "[core][time]") {
  // int64 nanoseconds: -9223372036.854775808 s .. 9223372036.854775807 s.
  // Source: GNU date: `date -u -d @-9223372037` is 1677-09-21T00:12:43 and
  // `date -u -d @9223372036` is 2262-04-11T23:47:16.
  CHECK(utc("1677-09-21T00:12:43.145224192Z") == kMin);
  CHECK_FALSE(utc("1677-09-21T00:12:43.145224191Z"));
  CHECK_FALSE(utc("1677-09-21T00:12:43Z"));
  CHECK(utc("2262-04-11T23:47:16.854775807Z") == kMax);
  CHECK_FALSE(utc("2262-04-11T23:47:16.854775808Z"));
  CHECK_FALSE(utc("2262-04-11T23:47:17Z"));
  CHECK(utc("2262-04-12T00:47:16.854775807+01:00") == kMax);
  CHECK_FALSE(utc("0000-01-01T00:00:00Z"));
  CHECK_FALSE(utc("9999-12-31T23:59:59Z"));
}

// ---------------------------------------------------------------------------
// --tz offsets

TEST_CASE("parse_utc_offset reads fixed zones only", "[core][time]") {
  CHECK(baroz::parse_utc_offset("UTC") == 0);
  CHECK(baroz::parse_utc_offset("utc") == 0);
  CHECK(baroz::parse_utc_offset("Z") == 0);
  CHECK(baroz::parse_utc_offset("z") == 0);
  CHECK(baroz::parse_utc_offset("+02:00") == 7200);
  CHECK(baroz::parse_utc_offset("-05:30") == -19800);
  CHECK(baroz::parse_utc_offset("+0530") == 19800);
  CHECK(baroz::parse_utc_offset("+05") == 18000);
  CHECK(baroz::parse_utc_offset("-00:00") == 0);
  CHECK(baroz::parse_utc_offset("+23:59") == 23 * 3600 + 59 * 60);
  for (const char* text : {"", "Europe/Berlin", "CET", "GMT", "+5", "+24:00", "+05:60", "02:00",
                           "UTC+2", "UTC+02:00", "+05:30 ", " +05:30", "+5:30", "+05:3", "+053",
                           "+05:30:00", "++05", "local"}) {
    INFO(text);
    CHECK_FALSE(baroz::parse_utc_offset(text));
  }
}

// ---------------------------------------------------------------------------
// Formatting

TEST_CASE("format_rfc3339_utc writes UTC with milliseconds", "[core][time]") {
  CHECK(baroz::format_rfc3339_utc(0) == "1970-01-01T00:00:00.000Z");
  // Source: GNU date: `date -u -d @951868800` is 2000-03-01 00:00:00 UTC.
  CHECK(baroz::format_rfc3339_utc(951'868'800 * kNsPerS) == "2000-03-01T00:00:00.000Z");
  // Source: RFC 3339 section 5.8 example and GNU date (482196050 s).
  CHECK(baroz::format_rfc3339_utc(482'196'050 * kNsPerS + 520'000'000) == "1985-04-12T23:20:50.520Z");
  // Truncation toward the past below one millisecond.
  CHECK(baroz::format_rfc3339_utc(1'999'999) == "1970-01-01T00:00:00.001Z");
  CHECK(baroz::format_rfc3339_utc(-1) == "1969-12-31T23:59:59.999Z");
  CHECK(baroz::format_rfc3339_utc(-kNsPerS) == "1969-12-31T23:59:59.000Z");
  // Source: GNU date, see "parse_rfc3339 covers exactly the int64 nanosecond range".
  CHECK(baroz::format_rfc3339_utc(kMin) == "1677-09-21T00:12:43.145Z");
  CHECK(baroz::format_rfc3339_utc(kMax) == "2262-04-11T23:47:16.854Z");
}

TEST_CASE("format_rfc3339_utc and parse_rfc3339 round-trip", "[core][time]") {
  for (const char* text : {"1970-01-01T00:00:00.000Z", "2000-02-29T23:59:59.999Z",
                           "2024-12-02T00:00:00.123Z", "1937-01-01T11:40:27.870Z",
                           "2100-03-01T12:34:56.789Z", "1700-01-01T00:00:00.000Z"}) {
    INFO(text);
    const std::optional<TimeNs> t = utc(text);
    REQUIRE(t.has_value());
    CHECK(baroz::format_rfc3339_utc(*t) == text);
  }
}
