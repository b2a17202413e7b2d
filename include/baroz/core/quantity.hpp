// Option values with an optional unit suffix: "1013.25hPa", "1013.25 hPa",
// "29.92inHg", "15C", "412m", "1350ft", "90s", "2min". A bare number takes the
// default unit of its kind (pressure hPa, length m, temperature K,
// temperature difference K, duration s, drift hPa per hour).
//
// The text is "<number>[blanks]<unit>", surrounded by optional blanks
// (spaces or tabs). The number is read strictly with parse_number (a '.'
// decimal point, optional sign and exponent, never the locale); the unit by
// the names of units.hpp, case-insensitively.
#pragma once

#include <string_view>

namespace baroz {

/// Each function returns the value in SI (Pa, m, K, s; Pa/s for a drift) and
/// throws baroz::Error (usage, via usage_error) naming `option` when the text
/// is not a finite number with an accepted unit, e.g.
/// `--ref-pressure: "1013x" is not a pressure (a number with an optional unit
/// Pa, hPa, kPa, mbar, bar, inHg, mmHg, psi, atm; bare numbers are hPa)`.
/// An empty `option` leaves out the "OPTION: " prefix. Signs and ranges are
/// not checked (except absolute temperatures, which must be above 0 K): that
/// is the caller's business.
///
/// Pressure: any unit of parse_pressure_unit; bare hPa.
double parse_pressure_option(std::string_view text, std::string_view option);
/// Length: m (bare), ft, km and the aliases of parse_length_unit.
double parse_length_option(std::string_view text, std::string_view option);
/// Absolute temperature: bare K; C and F are converted with their offsets
/// ("15C" and "59F" are 288.15 K). Throws unless the result is above 0 K.
double parse_temperature_option(std::string_view text, std::string_view option);
/// Temperature difference (a sigma): bare K; "0.5C" = 0.5 K; "0.9F" = 0.5 K.
double parse_temperature_difference_option(std::string_view text, std::string_view option);
/// Duration: s (bare), ms, min, h; also "sec", "us", "ns" and the other
/// names of parse_time_unit.
double parse_duration_option(std::string_view text, std::string_view option);
/// Pressure drift rate in Pa per second: bare hPa/h; also "hPa/h", "Pa/h",
/// "Pa/s", and generally "<pressure unit>/<s|min|h>" (e.g. "mbar/min").
double parse_drift_option(std::string_view text, std::string_view option);
/// A plain number (no unit), fully consumed, finite.
double parse_number_option(std::string_view text, std::string_view option);

}  // namespace baroz
