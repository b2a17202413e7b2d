// Unit names and conversions (core/units.hpp).
#include <catch2/catch.hpp>

#include "baroz/core/units.hpp"

using baroz::LengthUnit;
using baroz::PressureUnit;
using baroz::TemperatureUnit;

TEST_CASE("parse_pressure_unit reads names and aliases in any case", "[core][units]") {
  struct Case {
    const char* name;
    PressureUnit unit;
  };
  const Case cases[] = {
      {"Pa", PressureUnit::kPa},          {"pa", PressureUnit::kPa},
      {"PA", PressureUnit::kPa},          {"pascal", PressureUnit::kPa},
      {"hPa", PressureUnit::kHPa},        {"HPA", PressureUnit::kHPa},
      {"hpa", PressureUnit::kHPa},        {"hectopascal", PressureUnit::kHPa},
      {"kPa", PressureUnit::kKPa},        {"KPA", PressureUnit::kKPa},
      {"mbar", PressureUnit::kMbar},      {"mb", PressureUnit::kMbar},
      {"MB", PressureUnit::kMbar},        {"millibar", PressureUnit::kMbar},
      {"bar", PressureUnit::kBar},        {"Bar", PressureUnit::kBar},
      {"inHg", PressureUnit::kInHg},      {"INHG", PressureUnit::kInHg},
      {"inhg", PressureUnit::kInHg},      {"mmHg", PressureUnit::kMmHg},
      {"MMHG", PressureUnit::kMmHg},      {"torr", PressureUnit::kMmHg},
      {"Torr", PressureUnit::kMmHg},      {"psi", PressureUnit::kPsi},
      {"PSI", PressureUnit::kPsi},        {"atm", PressureUnit::kAtm},
      {"ATM", PressureUnit::kAtm},
  };
  for (const Case& c : cases) {
    INFO(c.name);
    CHECK(baroz::parse_pressure_unit(c.name) == c.unit);
  }
  for (const char* name : {"", "p", "hp", "h Pa", " hPa", "hPa ", "hPa/h", "in", "inch", "mm",
                           "mbars", "pas", "kpas", "Pa.", "psia", "at", "K", "m"}) {
    INFO(name);
    CHECK_FALSE(baroz::parse_pressure_unit(name).has_value());
  }
}

TEST_CASE("parse_temperature_unit reads names, aliases and degree signs", "[core][units]") {
  for (const char* name : {"C", "c", "degC", "DEGC", "deg_c", "deg_C", "celsius", "Celsius",
                           "\xC2\xB0" "C", "\xC2\xB0" "c", "\xE2\x84\x83"}) {
    INFO(name);
    CHECK(baroz::parse_temperature_unit(name) == TemperatureUnit::kCelsius);
  }
  for (const char* name : {"K", "k", "kelvin", "Kelvin"}) {
    INFO(name);
    CHECK(baroz::parse_temperature_unit(name) == TemperatureUnit::kKelvin);
  }
  for (const char* name : {"F", "f", "degF", "deg_f", "fahrenheit", "Fahrenheit",
                           "\xC2\xB0" "F", "\xE2\x84\x89"}) {
    INFO(name);
    CHECK(baroz::parse_temperature_unit(name) == TemperatureUnit::kFahrenheit);
  }
  for (const char* name : {"", "deg", "\xC2\xB0", "\xC2\xB0" "K", "cc", "kelvins", "Pa", " C"}) {
    INFO(name);
    CHECK_FALSE(baroz::parse_temperature_unit(name).has_value());
  }
}

TEST_CASE("parse_length_unit reads names and aliases", "[core][units]") {
  for (const char* name : {"m", "M", "metre", "meter", "metres", "meters"}) {
    INFO(name);
    CHECK(baroz::parse_length_unit(name) == LengthUnit::kMetre);
  }
  for (const char* name : {"ft", "FT", "feet", "foot"}) {
    INFO(name);
    CHECK(baroz::parse_length_unit(name) == LengthUnit::kFoot);
  }
  for (const char* name : {"km", "KM", "kilometre", "kilometer"}) {
    INFO(name);
    CHECK(baroz::parse_length_unit(name) == LengthUnit::kKilometre);
  }
  for (const char* name : {"", "mi", "nm", "f", "'", "yd", "mm", "cm", "gpm"}) {
    INFO(name);
    CHECK_FALSE(baroz::parse_length_unit(name).has_value());
  }
}

TEST_CASE("unit_name gives canonical names that parse back", "[core][units]") {
  CHECK(baroz::unit_name(PressureUnit::kHPa) == "hPa");
  CHECK(baroz::unit_name(PressureUnit::kInHg) == "inHg");
  CHECK(baroz::unit_name(PressureUnit::kMbar) == "mbar");
  CHECK(baroz::unit_name(TemperatureUnit::kCelsius) == "C");
  CHECK(baroz::unit_name(TemperatureUnit::kKelvin) == "K");
  CHECK(baroz::unit_name(TemperatureUnit::kFahrenheit) == "F");
  CHECK(baroz::unit_name(LengthUnit::kMetre) == "m");
  CHECK(baroz::unit_name(LengthUnit::kFoot) == "ft");
  CHECK(baroz::unit_name(LengthUnit::kKilometre) == "km");
  for (PressureUnit u : {PressureUnit::kPa, PressureUnit::kHPa, PressureUnit::kKPa,
                         PressureUnit::kMbar, PressureUnit::kBar, PressureUnit::kInHg,
                         PressureUnit::kMmHg, PressureUnit::kPsi, PressureUnit::kAtm}) {
    INFO(baroz::unit_name(u));
    CHECK(baroz::parse_pressure_unit(baroz::unit_name(u)) == u);
  }
  for (TemperatureUnit u :
       {TemperatureUnit::kCelsius, TemperatureUnit::kKelvin, TemperatureUnit::kFahrenheit}) {
    CHECK(baroz::parse_temperature_unit(baroz::unit_name(u)) == u);
  }
  for (LengthUnit u : {LengthUnit::kMetre, LengthUnit::kFoot, LengthUnit::kKilometre}) {
    CHECK(baroz::parse_length_unit(baroz::unit_name(u)) == u);
  }
}

TEST_CASE("pressure units convert to pascal", "[core][units]") {
  using baroz::to_pascal;
  // Source: SI Brochure, 9th ed. (SI prefixes; 1 mbar = 1 hPa); NIST SP 811 B.8 (1 bar = 1e5 Pa).
  CHECK(to_pascal(1.0, PressureUnit::kPa) == 1.0);
  CHECK(to_pascal(1013.25, PressureUnit::kHPa) == Approx(101325.0).epsilon(1e-15));
  CHECK(to_pascal(1013.25, PressureUnit::kMbar) == Approx(101325.0).epsilon(1e-15));
  CHECK(to_pascal(101.325, PressureUnit::kKPa) == Approx(101325.0).epsilon(1e-15));
  CHECK(to_pascal(1.0, PressureUnit::kBar) == 100000.0);
  // Source: NIST SP 811, B.8 / reference-values.md: 1 inHg (conventional) = 3386.389 Pa.
  CHECK(to_pascal(1.0, PressureUnit::kInHg) == Approx(3386.389).epsilon(1e-9));
  // Source: NIST SP 811, B.8: 1 mmHg (conventional) = 133.3224 Pa (printed digits).
  CHECK(to_pascal(1.0, PressureUnit::kMmHg) == Approx(133.3224).margin(5e-5));
  // Source: NIST SP 811, B.8: 1 psi = 6.894 757 E+03 Pa (printed digits).
  CHECK(to_pascal(1.0, PressureUnit::kPsi) == Approx(6894.757).margin(5e-4));
  // Source: CGPM 1954 (10th CGPM, Resolution 4): 1 atm = 101325 Pa exactly.
  CHECK(to_pascal(1.0, PressureUnit::kAtm) == 101325.0);
  // Source: common practice: a standard altimeter setting of 29.92 inHg is 1013.2 hPa.
  CHECK(to_pascal(29.92, PressureUnit::kInHg) / 100.0 == Approx(1013.2).margin(0.05));
  // Source: common practice: 14.696 psi is one standard atmosphere.
  CHECK(to_pascal(14.696, PressureUnit::kPsi) == Approx(101325.0).epsilon(1e-5));
  // Source: definition of the conventional millimetre of mercury: 760 mmHg = 1 atm = 1013.25 hPa.
  CHECK(to_pascal(760.0, PressureUnit::kMmHg) == Approx(101325.0).epsilon(1e-6));
  // 1 Torr = 101325/760 Pa exactly (definition of the torr); reading it as mmHg
  // is off by 1.4e-7 relative only.
  CHECK(to_pascal(760.0, *baroz::parse_pressure_unit("torr")) == Approx(101325.0).epsilon(2e-7));
  CHECK(baroz::pascal_per(PressureUnit::kHPa) == 100.0);
}

TEST_CASE("temperature units convert to kelvin", "[core][units]") {
  using baroz::to_kelvin;
  // Source: ITS-90 / SI Brochure: T/K = t/degC + 273.15.
  CHECK(to_kelvin(0.0, TemperatureUnit::kCelsius) == Approx(273.15).epsilon(1e-15));
  CHECK(to_kelvin(15.0, TemperatureUnit::kCelsius) == Approx(288.15).epsilon(1e-15));
  CHECK(to_kelvin(288.15, TemperatureUnit::kKelvin) == 288.15);
  // Source: NIST SP 811, B.9: t/degF = 1.8 t/degC + 32, so 32 F = 0 degC = 273.15 K.
  CHECK(to_kelvin(32.0, TemperatureUnit::kFahrenheit) == Approx(273.15).epsilon(1e-15));
  // Source: NIST SP 811, B.9 (same relation): 212 F = 100 degC, 59 F = 15 degC.
  CHECK(to_kelvin(212.0, TemperatureUnit::kFahrenheit) == Approx(373.15).epsilon(1e-15));
  CHECK(to_kelvin(59.0, TemperatureUnit::kFahrenheit) == Approx(288.15).epsilon(1e-15));
  // Source: common practice: -40 is the same on the Celsius and Fahrenheit scales.
  CHECK(to_kelvin(-40.0, TemperatureUnit::kCelsius) ==
        Approx(to_kelvin(-40.0, TemperatureUnit::kFahrenheit)).epsilon(1e-15));
  CHECK(to_kelvin(-40.0, TemperatureUnit::kCelsius) == Approx(233.15).epsilon(1e-15));
  // Source: NIST SP 811, B.9: a difference of 1 degF is 5/9 K; 1 degC is 1 K.
  CHECK(baroz::kelvin_per_degree(TemperatureUnit::kFahrenheit) * 1.8 == Approx(1.0).epsilon(1e-15));
  CHECK(baroz::kelvin_per_degree(TemperatureUnit::kCelsius) == 1.0);
  CHECK(baroz::kelvin_per_degree(TemperatureUnit::kKelvin) == 1.0);
}

TEST_CASE("length units convert to metres", "[core][units]") {
  // Source: international yard and pound agreement (1959): 1 ft = 0.3048 m exactly.
  CHECK(baroz::metres_per(LengthUnit::kFoot) == 0.3048);
  CHECK(1350.0 * baroz::metres_per(LengthUnit::kFoot) == Approx(411.48).epsilon(1e-15));
  // Source: SI prefix kilo.
  CHECK(baroz::metres_per(LengthUnit::kKilometre) == 1000.0);
  CHECK(baroz::metres_per(LengthUnit::kMetre) == 1.0);
}
