// Units that baroz reads and writes, their names, and conversions to SI.
#pragma once

#include <optional>
#include <string_view>

namespace baroz {

enum class PressureUnit { kPa, kHPa, kKPa, kMbar, kBar, kInHg, kMmHg, kPsi, kAtm };
enum class TemperatureUnit { kCelsius, kKelvin, kFahrenheit };
enum class LengthUnit { kMetre, kFoot, kKilometre };

/// Unit names are matched case-insensitively (ASCII letters). Pressure: "Pa"
/// ("pascal"), "hPa" ("hectopascal"), "kPa", "mbar" (also "mb", "millibar"),
/// "bar", "inHg", "mmHg" (also "torr"), "psi", "atm". Temperature: "C"
/// ("degC", "deg_C", "celsius", "°C", "℃"), "K" ("kelvin"), "F" ("degF",
/// "deg_F", "fahrenheit", "°F", "℉"). Length: "m" ("metre", "meter",
/// "metres", "meters"), "ft" ("feet", "foot"), "km" ("kilometre",
/// "kilometer"). The empty string and anything else give nullopt.
///
/// "torr" is read as the conventional millimetre of mercury. Strictly
/// 1 Torr = 101325/760 Pa = 133.322368 Pa, which differs from 1 mmHg =
/// 133.322387 Pa by 1.4e-7 relative: far below any barometer's resolution.
std::optional<PressureUnit> parse_pressure_unit(std::string_view name);
std::optional<TemperatureUnit> parse_temperature_unit(std::string_view name);
std::optional<LengthUnit> parse_length_unit(std::string_view name);

std::string_view unit_name(PressureUnit unit);     ///< canonical, e.g. "hPa"
std::string_view unit_name(TemperatureUnit unit);  ///< "C", "K" or "F"
std::string_view unit_name(LengthUnit unit);       ///< "m", "ft" or "km"

/// Pascal per one `unit` (e.g. 100 for hPa, 3386.389 for inHg) [Pa].
double pascal_per(PressureUnit unit);
/// Converts a value in `unit` to pascal [Pa].
inline double to_pascal(double value, PressureUnit unit) { return value * pascal_per(unit); }
/// Converts an absolute temperature in `unit` to kelvin [K] (Celsius and
/// Fahrenheit with their zero offsets). No range check.
double to_kelvin(double value, TemperatureUnit unit);
/// Kelvin per one degree of `unit` [K]: 1 for C and K, 5/9 for F. Converts a
/// temperature difference (e.g. a standard deviation) to kelvin.
double kelvin_per_degree(TemperatureUnit unit);
/// Metres per one `unit` [m].
double metres_per(LengthUnit unit);

}  // namespace baroz

// References
// - NIST Special Publication 811 (2008 ed.), Guide for the Use of the
//   International System of Units, Appendix B.8 (pressure, length factors)
//   and B.9 (temperature scales).
