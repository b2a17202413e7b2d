// Unit names and conversions to SI (see units.hpp).
#include "baroz/core/units.hpp"

#include "baroz/core/ascii.hpp"

#include "baroz/core/constants.hpp"

namespace baroz {

namespace {


template <typename Unit>
struct UnitName {
  std::string_view name;  // lower case
  Unit unit;
};

template <typename Unit, std::size_t N>
std::optional<Unit> find_unit(std::string_view name, const UnitName<Unit> (&table)[N]) {
  for (const UnitName<Unit>& entry : table) {
    if (iequals(name, entry.name)) return entry.unit;
  }
  return std::nullopt;
}

constexpr UnitName<PressureUnit> kPressureNames[] = {
    {"pa", PressureUnit::kPa},       {"pascal", PressureUnit::kPa},
    {"hpa", PressureUnit::kHPa},     {"hectopascal", PressureUnit::kHPa},
    {"kpa", PressureUnit::kKPa},     {"mbar", PressureUnit::kMbar},
    {"mb", PressureUnit::kMbar},     {"millibar", PressureUnit::kMbar},
    {"bar", PressureUnit::kBar},     {"inhg", PressureUnit::kInHg},
    {"mmhg", PressureUnit::kMmHg},
    // 1 Torr = 101325/760 Pa = 133.322368 Pa differs from the conventional
    // mmHg (133.322387 Pa) by 1.4e-7 relative; read as mmHg on purpose.
    {"torr", PressureUnit::kMmHg},
    {"psi", PressureUnit::kPsi},     {"atm", PressureUnit::kAtm},
};

// "\xC2\xB0" is U+00B0 DEGREE SIGN; "\xE2\x84\x83" U+2103 DEGREE CELSIUS;
// "\xE2\x84\x89" U+2109 DEGREE FAHRENHEIT.
constexpr UnitName<TemperatureUnit> kTemperatureNames[] = {
    {"c", TemperatureUnit::kCelsius},          {"degc", TemperatureUnit::kCelsius},
    {"deg_c", TemperatureUnit::kCelsius},      {"celsius", TemperatureUnit::kCelsius},
    {"\xC2\xB0" "c", TemperatureUnit::kCelsius}, {"\xE2\x84\x83", TemperatureUnit::kCelsius},
    {"k", TemperatureUnit::kKelvin},           {"kelvin", TemperatureUnit::kKelvin},
    {"f", TemperatureUnit::kFahrenheit},       {"degf", TemperatureUnit::kFahrenheit},
    {"deg_f", TemperatureUnit::kFahrenheit},   {"fahrenheit", TemperatureUnit::kFahrenheit},
    {"\xC2\xB0" "f", TemperatureUnit::kFahrenheit}, {"\xE2\x84\x89", TemperatureUnit::kFahrenheit},
};

constexpr UnitName<LengthUnit> kLengthNames[] = {
    {"m", LengthUnit::kMetre},      {"metre", LengthUnit::kMetre},
    {"meter", LengthUnit::kMetre},  {"metres", LengthUnit::kMetre},
    {"meters", LengthUnit::kMetre}, {"ft", LengthUnit::kFoot},
    {"feet", LengthUnit::kFoot},    {"foot", LengthUnit::kFoot},
    {"km", LengthUnit::kKilometre}, {"kilometre", LengthUnit::kKilometre},
    {"kilometer", LengthUnit::kKilometre},
};

}  // namespace

std::optional<PressureUnit> parse_pressure_unit(std::string_view name) {
  return find_unit(name, kPressureNames);
}

std::optional<TemperatureUnit> parse_temperature_unit(std::string_view name) {
  return find_unit(name, kTemperatureNames);
}

std::optional<LengthUnit> parse_length_unit(std::string_view name) {
  return find_unit(name, kLengthNames);
}

std::string_view unit_name(PressureUnit unit) {
  switch (unit) {
    case PressureUnit::kPa: return "Pa";
    case PressureUnit::kHPa: return "hPa";
    case PressureUnit::kKPa: return "kPa";
    case PressureUnit::kMbar: return "mbar";
    case PressureUnit::kBar: return "bar";
    case PressureUnit::kInHg: return "inHg";
    case PressureUnit::kMmHg: return "mmHg";
    case PressureUnit::kPsi: return "psi";
    case PressureUnit::kAtm: return "atm";
  }
  return "Pa";
}

std::string_view unit_name(TemperatureUnit unit) {
  switch (unit) {
    case TemperatureUnit::kCelsius: return "C";
    case TemperatureUnit::kKelvin: return "K";
    case TemperatureUnit::kFahrenheit: return "F";
  }
  return "K";
}

std::string_view unit_name(LengthUnit unit) {
  switch (unit) {
    case LengthUnit::kMetre: return "m";
    case LengthUnit::kFoot: return "ft";
    case LengthUnit::kKilometre: return "km";
  }
  return "m";
}

double pascal_per(PressureUnit unit) {
  switch (unit) {
    case PressureUnit::kPa: return 1.0;
    case PressureUnit::kHPa: return 100.0;   // SI prefix hecto
    case PressureUnit::kKPa: return 1000.0;  // SI prefix kilo
    case PressureUnit::kMbar: return constants::kBar / 1000.0;  // = 100 Pa
    case PressureUnit::kBar: return constants::kBar;
    case PressureUnit::kInHg: return constants::kInHg;
    case PressureUnit::kMmHg: return constants::kMmHg;
    case PressureUnit::kPsi: return constants::kPsi;
    case PressureUnit::kAtm: return constants::kAtm;
  }
  return 1.0;
}

double to_kelvin(double value, TemperatureUnit unit) {
  switch (unit) {
    case TemperatureUnit::kCelsius:
      return value + constants::kZeroCelsius;  // ITS-90: T/K = t/degC + 273.15
    case TemperatureUnit::kKelvin:
      return value;
    case TemperatureUnit::kFahrenheit:
      // NIST SP 811, B.9: t/degC = (t/degF - 32) / 1.8
      return (value - constants::kZeroCelsiusInFahrenheit) * constants::kKelvinPerFahrenheit +
             constants::kZeroCelsius;
  }
  return value;
}

double kelvin_per_degree(TemperatureUnit unit) {
  return unit == TemperatureUnit::kFahrenheit ? constants::kKelvinPerFahrenheit : 1.0;
}

double metres_per(LengthUnit unit) {
  switch (unit) {
    case LengthUnit::kMetre: return 1.0;
    case LengthUnit::kFoot: return constants::kFoot;
    case LengthUnit::kKilometre: return 1000.0;  // SI prefix kilo
  }
  return 1.0;
}

}  // namespace baroz
