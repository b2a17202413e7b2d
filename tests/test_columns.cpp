// Column roles found by name with common variants, units from the name,
// overrides, and the errors when a log cannot be interpreted.
#include <catch2/catch.hpp>

#include "baroz/core/error.hpp"
#include "baroz/io/columns.hpp"

using namespace baroz;

namespace {
ColumnMap map(std::vector<std::string> header, ColumnOptions options = {}) {
  return map_columns(header, options, "log.csv");
}
}  // namespace

TEST_CASE("column names split into words and a unit", "[columns]") {
  auto a = split_column_name("pressure_pa");
  CHECK(a.words == std::vector<std::string>{"pressure"});
  CHECK(a.unit == "pa");
  auto b = split_column_name("Time (s)");
  CHECK(b.words == std::vector<std::string>{"time"});
  CHECK(b.unit == "s");
  auto c = split_column_name("p[Pa]");
  CHECK(c.words == std::vector<std::string>{"p"});
  CHECK(c.unit == "Pa");
  auto d = split_column_name("temp_ext_c");
  CHECK(d.words == std::vector<std::string>{"temp", "ext"});
  CHECK(d.unit == "c");
  auto e = split_column_name("baroPressureHpa");
  CHECK(e.words == std::vector<std::string>{"baro", "pressure"});
  CHECK(e.unit == "hpa");
}

TEST_CASE("roles are found from common logger column names", "[columns]") {
  // Headers in the style of common field loggers (common practice).
  auto m = map({"utc", "pressure_pa", "temp_ext_c", "temp_int_c", "rh_pct", "gps_lat", "gps_lon",
                "gps_alt_m"});
  CHECK(m.name[static_cast<int>(Role::kTime)] == "utc");
  CHECK(m.name[static_cast<int>(Role::kPressure)] == "pressure_pa");
  CHECK(m.pressure_unit == PressureUnit::kPa);
  CHECK(m.name[static_cast<int>(Role::kTemperature)] == "temp_ext_c");  // not the box
  CHECK(m.temperature_unit == TemperatureUnit::kCelsius);
  CHECK(m.name[static_cast<int>(Role::kHumidity)] == "rh_pct");
  CHECK(m.name[static_cast<int>(Role::kLat)] == "gps_lat");
  CHECK(m.name[static_cast<int>(Role::kLon)] == "gps_lon");
  CHECK(m.name[static_cast<int>(Role::kGnssAlt)] == "gps_alt_m");

  auto n = map({"time_ms", "baro_hpa", "air_temp_c", "gnss_alt"});
  CHECK(n.time_unit == TimeUnit::kMilliseconds);
  CHECK(n.pressure_unit == PressureUnit::kHPa);
  CHECK(n.has(Role::kTemperature));
  CHECK(n.has(Role::kGnssAlt));

  auto s = map({"Time (s)", "Pressure (hPa)", "Temperature (°F)"});
  CHECK(s.pressure_unit == PressureUnit::kHPa);
  CHECK(s.temperature_unit == TemperatureUnit::kFahrenheit);

  auto k = map({"t", "p[kPa]", "T[K]"});
  CHECK(k.name[static_cast<int>(Role::kTime)] == "t");
  CHECK(k.pressure_unit == PressureUnit::kKPa);
  CHECK(k.temperature_unit == TemperatureUnit::kKelvin);

  auto i = map({"timestamp", "press_inhg"});
  CHECK(i.pressure_unit == PressureUnit::kInHg);
  CHECK_FALSE(i.has(Role::kTemperature));
}

TEST_CASE("column and unit options override the names", "[columns]") {
  ColumnOptions o;
  o.overrides = {{Role::kPressure, "p2"}, {Role::kTemperature, ""}};
  o.pressure_unit = PressureUnit::kMbar;
  auto m = map({"time", "p1_hpa", "p2", "temp_c"}, o);
  CHECK(m.name[static_cast<int>(Role::kPressure)] == "p2");
  CHECK(m.pressure_unit == PressureUnit::kMbar);
  CHECK(m.unit_source[static_cast<int>(Role::kPressure)] == "option");
  CHECK_FALSE(m.has(Role::kTemperature));  // "--col temperature=" ignores it
}

TEST_CASE("logs that cannot be interpreted are refused with a reason", "[columns]") {
  auto message = [](std::vector<std::string> h, ColumnOptions o = {}) -> std::string {
    try {
      map_columns(h, o, "log.csv");
    } catch (const Error& e) {
      return e.what();
    }
    return "";
  };
  CHECK(message({"time", "altitude"}) ==
        "log.csv: no pressure column found among 'time', 'altitude'; name it with --col "
        "pressure=NAME");
  CHECK(message({"pressure_hpa", "temp_c"}).find("no time column") != std::string::npos);
  CHECK(message({"time", "pressure"}).find("has no pressure unit in its name; give "
                                           "--pressure-unit") != std::string::npos);
  CHECK(message({"time", "p_hpa", "temp1_c", "temp2_c"})
            .find("columns 'temp1_c' and 'temp2_c' could both be the temperature column") !=
        std::string::npos);
  ColumnOptions bad;
  bad.overrides = {{Role::kPressure, "nope"}};
  try {
    map_columns({"time", "p_hpa"}, bad, "log.csv");
    FAIL("expected an error");
  } catch (const Error& e) {
    CHECK(e.code() == ExitCode::kUsage);
  }
}
