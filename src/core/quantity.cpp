// Option values with an optional unit suffix (see quantity.hpp).
#include "baroz/core/quantity.hpp"

#include "baroz/core/ascii.hpp"

#include <cmath>
#include <optional>
#include <string>

#include "baroz/core/error.hpp"
#include "baroz/core/number_parse.hpp"
#include "baroz/core/time.hpp"
#include "baroz/core/units.hpp"

namespace baroz {

namespace {

constexpr double kSecondsPerMinute = 60.0;
constexpr double kSecondsPerHour = 3600.0;
constexpr double kPascalPerHectopascal = 100.0;

constexpr std::string_view kPressureKind =
    "a pressure (a number with an optional unit Pa, hPa, kPa, mbar, bar, inHg, mmHg, psi, atm; "
    "bare numbers are hPa)";
constexpr std::string_view kLengthKind =
    "a length (a number with an optional unit m, ft, km; bare numbers are m)";
constexpr std::string_view kTemperatureKind =
    "a temperature (a number with an optional unit K, C, F; bare numbers are K)";
constexpr std::string_view kTemperatureDifferenceKind =
    "a temperature difference (a number with an optional unit K, C, F; bare numbers are K)";
constexpr std::string_view kDurationKind =
    "a duration (a number with an optional unit s, ms, min, h; bare numbers are s)";
constexpr std::string_view kDriftKind =
    "a pressure drift rate (a number with an optional unit hPa/h, Pa/h, Pa/s; "
    "bare numbers are hPa/h)";
constexpr std::string_view kNumberKind = "a number";

constexpr bool is_blank(char c) noexcept { return c == ' ' || c == '\t'; }
constexpr bool is_digit(char c) noexcept { return c >= '0' && c <= '9'; }


std::string_view trim(std::string_view text) noexcept {
  while (!text.empty() && is_blank(text.front())) text.remove_prefix(1);
  while (!text.empty() && is_blank(text.back())) text.remove_suffix(1);
  return text;
}

[[noreturn]] void fail(std::string_view text, std::string_view option, std::string_view message) {
  std::string out;
  if (!option.empty()) {
    out.append(option);
    out.append(": ");
  }
  out.push_back('"');
  out.append(text);
  out.append("\" ");
  out.append(message);
  throw usage_error(out);
}

[[noreturn]] void fail_kind(std::string_view text, std::string_view option, std::string_view kind) {
  fail(text, option, std::string("is not ").append(kind));
}

struct Quantity {
  double number = 0.0;
  std::string_view unit;  // empty for a bare number
};

/// Splits "<number>[blanks]<unit>" and parses the number strictly; throws
/// naming `kind` when the number part is not a finite number.
Quantity split_quantity(std::string_view text, std::string_view option, std::string_view kind) {
  const std::string_view body = trim(text);
  // The number part: sign, digits and points, then an exponent only when
  // 'e'/'E' is followed by digits (so that "1e5Pa" is 1e5 Pa). parse_number
  // then decides whether it really is a number ("1.2.3" is not).
  std::size_t i = 0;
  const std::size_t n = body.size();
  if (i < n && (body[i] == '+' || body[i] == '-')) ++i;
  while (i < n && (is_digit(body[i]) || body[i] == '.')) ++i;
  if (i < n && (body[i] == 'e' || body[i] == 'E')) {
    std::size_t j = i + 1;
    if (j < n && (body[j] == '+' || body[j] == '-')) ++j;
    if (j < n && is_digit(body[j])) {
      i = j;
      while (i < n && is_digit(body[i])) ++i;
    }
  }
  const ParsedNumber parsed = parse_number(body.substr(0, i));
  if (parsed.status != NumberStatus::kOk) fail_kind(text, option, kind);
  return {parsed.value, trim(body.substr(i))};
}

/// Seconds per duration unit: the names of parse_time_unit, "min" and "h".
std::optional<double> seconds_per(std::string_view unit) {
  if (const std::optional<TimeUnit> time_unit = parse_time_unit(unit)) {
    switch (*time_unit) {
      case TimeUnit::kSeconds: return 1.0;
      case TimeUnit::kMilliseconds: return 1e-3;
      case TimeUnit::kMicroseconds: return 1e-6;
      case TimeUnit::kNanoseconds: return 1e-9;
    }
  }
  if (iequals(unit, "min")) return kSecondsPerMinute;
  if (iequals(unit, "h")) return kSecondsPerHour;
  return std::nullopt;
}

double finite_or_fail(double value, std::string_view text, std::string_view option,
                      std::string_view kind) {
  if (!std::isfinite(value)) fail_kind(text, option, kind);
  return value;
}

}  // namespace

double parse_pressure_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kPressureKind);
  if (q.unit.empty()) return finite_or_fail(q.number * kPascalPerHectopascal, text, option, kPressureKind);
  const std::optional<PressureUnit> unit = parse_pressure_unit(q.unit);
  if (!unit) fail_kind(text, option, kPressureKind);
  return finite_or_fail(to_pascal(q.number, *unit), text, option, kPressureKind);
}

double parse_length_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kLengthKind);
  if (q.unit.empty()) return q.number;
  const std::optional<LengthUnit> unit = parse_length_unit(q.unit);
  if (!unit) fail_kind(text, option, kLengthKind);
  return finite_or_fail(q.number * metres_per(*unit), text, option, kLengthKind);
}

double parse_temperature_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kTemperatureKind);
  TemperatureUnit unit = TemperatureUnit::kKelvin;
  if (!q.unit.empty()) {
    const std::optional<TemperatureUnit> parsed = parse_temperature_unit(q.unit);
    if (!parsed) fail_kind(text, option, kTemperatureKind);
    unit = *parsed;
  }
  const double kelvin = finite_or_fail(to_kelvin(q.number, unit), text, option, kTemperatureKind);
  if (!(kelvin > 0.0)) fail(text, option, "is not a temperature above absolute zero");
  return kelvin;
}

double parse_temperature_difference_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kTemperatureDifferenceKind);
  if (q.unit.empty()) return q.number;
  const std::optional<TemperatureUnit> unit = parse_temperature_unit(q.unit);
  if (!unit) fail_kind(text, option, kTemperatureDifferenceKind);
  return q.number * kelvin_per_degree(*unit);
}

double parse_duration_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kDurationKind);
  if (q.unit.empty()) return q.number;
  const std::optional<double> factor = seconds_per(q.unit);
  if (!factor) fail_kind(text, option, kDurationKind);
  return finite_or_fail(q.number * *factor, text, option, kDurationKind);
}

double parse_drift_option(std::string_view text, std::string_view option) {
  const Quantity q = split_quantity(text, option, kDriftKind);
  if (q.unit.empty()) return q.number * kPascalPerHectopascal / kSecondsPerHour;
  const std::size_t slash = q.unit.find('/');
  if (slash == std::string_view::npos) fail_kind(text, option, kDriftKind);
  const std::optional<PressureUnit> pressure = parse_pressure_unit(trim(q.unit.substr(0, slash)));
  const std::optional<double> seconds = seconds_per(trim(q.unit.substr(slash + 1)));
  if (!pressure || !seconds) fail_kind(text, option, kDriftKind);
  return finite_or_fail(q.number * pascal_per(*pressure) / *seconds, text, option, kDriftKind);
}

double parse_number_option(std::string_view text, std::string_view option) {
  const ParsedNumber parsed = parse_number(text);
  if (parsed.status != NumberStatus::kOk) fail_kind(text, option, kNumberKind);
  return parsed.value;
}

}  // namespace baroz
