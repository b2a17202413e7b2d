// Option values with optional unit suffixes (core/quantity.hpp).
#include <catch2/catch.hpp>

#include <string>

#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"

namespace {

/// The message of the usage error that `f` throws; fails the test if `f`
/// throws nothing or another kind of error.
template <typename F>
std::string usage_message(F&& f) {
  try {
    f();
  } catch (const baroz::Error& e) {
    CHECK(e.code() == baroz::ExitCode::kUsage);
    return e.what();
  }
  FAIL("no baroz::Error thrown");
  return {};
}

const std::string kPressureExpected =
    "(a number with an optional unit Pa, hPa, kPa, mbar, bar, inHg, mmHg, psi, atm; "
    "bare numbers are hPa)";

}  // namespace

TEST_CASE("pressure options take hPa bare and any pressure unit", "[core][quantity]") {
  const auto p = [](std::string_view text) { return baroz::parse_pressure_option(text, "--qnh"); };
  // Source: SI prefixes (1 hPa = 1 mbar = 100 Pa) and CGPM 1954 (1 atm = 101325 Pa).
  CHECK(p("1013.25") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1013.25hPa") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1013.25 hPa") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("  1013.25\thPa  ") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1013.25HPA") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("101325Pa") == 101325.0);
  CHECK(p("1e5Pa") == 100000.0);
  CHECK(p("1.01325e3hPa") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("101.325kPa") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1013.25mbar") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1013.25 mb") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1.01325bar") == Approx(101325.0).epsilon(1e-15));
  CHECK(p("1atm") == 101325.0);
  CHECK(p("+1013") == 101300.0);
  // Source: common practice: 29.92 inHg is 1013.2 hPa.
  CHECK(p("29.92inHg") == Approx(101320.0).margin(5.0));
  // Source: definition of the conventional mmHg: 760 mmHg = 101325 Pa.
  CHECK(p("760mmHg") == Approx(101325.0).epsilon(1e-6));
  CHECK(p("760 torr") == Approx(101325.0).epsilon(2e-7));
  // Source: common practice: 14.696 psi is one atmosphere.
  CHECK(p("14.696psi") == Approx(101325.0).epsilon(1e-5));
  // Signs are the caller's business.
  CHECK(p("-5") == -500.0);
}

TEST_CASE("pressure options reject other text with a precise message", "[core][quantity]") {
  CHECK(usage_message([] { baroz::parse_pressure_option("1013x", "--ref-pressure"); }) ==
        "--ref-pressure: \"1013x\" is not a pressure " + kPressureExpected);
  CHECK(usage_message([] { baroz::parse_pressure_option(" 1013 x ", "--qnh"); }) ==
        "--qnh: \" 1013 x \" is not a pressure " + kPressureExpected);
  CHECK(usage_message([] { baroz::parse_pressure_option("", "--qnh"); }) ==
        "--qnh: \"\" is not a pressure " + kPressureExpected);
  CHECK(usage_message([] { baroz::parse_pressure_option("1013x", ""); }) ==
        "\"1013x\" is not a pressure " + kPressureExpected);
  for (const char* text :
       {"hPa", "1013 h Pa", "1,013.25", "1013,25", "1013.25.1", "nan", "inf", "-inf", "1e999",
        "1e999hPa", "1e306bar", "nanhPa", "infhPa", "0x10", "10O3.2", "1013hPa hPa", "1013 hPa/h",
        "1013 K", "--1013", "+-1013", "1013e", "1013ehPa", "hPa1013", ".", "-", "1013°"}) {
    INFO(text);
    CHECK_THROWS_AS(baroz::parse_pressure_option(text, "--qnh"), baroz::Error);
  }
}

TEST_CASE("length options take metres bare, ft and km", "[core][quantity]") {
  const auto l = [](std::string_view text) { return baroz::parse_length_option(text, "--elevation"); };
  CHECK(l("412") == 412.0);
  CHECK(l("412m") == 412.0);
  CHECK(l("412 m") == 412.0);
  CHECK(l("-12.5m") == -12.5);
  // Source: international foot, 0.3048 m exactly (1959 agreement).
  CHECK(l("1350ft") == Approx(411.48).epsilon(1e-15));
  CHECK(l("1350 feet") == Approx(411.48).epsilon(1e-15));
  CHECK(l("1.5km") == 1500.0);
  CHECK(usage_message([] { baroz::parse_length_option("412mi", "--elevation"); }) ==
        "--elevation: \"412mi\" is not a length (a number with an optional unit m, ft, km; "
        "bare numbers are m)");
  for (const char* text : {"", "ft", "412 m m", "412hPa", "nan m", "1e400m", "412'"}) {
    INFO(text);
    CHECK_THROWS_AS(l(text), baroz::Error);
  }
}

TEST_CASE("temperature options take kelvin bare and convert C and F", "[core][quantity]") {
  const auto t = [](std::string_view text) {
    return baroz::parse_temperature_option(text, "--ref-temperature");
  };
  // Source: ITS-90 (T/K = t/degC + 273.15); NIST SP 811 B.9 (59 F = 15 degC).
  CHECK(t("15C") == Approx(288.15).epsilon(1e-15));
  CHECK(t("15 C") == Approx(288.15).epsilon(1e-15));
  CHECK(t("15degC") == Approx(288.15).epsilon(1e-15));
  CHECK(t("15\xC2\xB0" "C") == Approx(288.15).epsilon(1e-15));
  CHECK(t("15 \xC2\xB0" "C") == Approx(288.15).epsilon(1e-15));
  CHECK(t("59F") == Approx(288.15).epsilon(1e-15));
  CHECK(t("288.15") == 288.15);
  CHECK(t("288.15K") == 288.15);
  CHECK(t("288.15 kelvin") == 288.15);
  // Source: common practice: -40 degC = -40 degF.
  CHECK(t("-40C") == Approx(t("-40F")).epsilon(1e-15));
  CHECK(usage_message([] { baroz::parse_temperature_option("15X", "--ref-temperature"); }) ==
        "--ref-temperature: \"15X\" is not a temperature (a number with an optional unit K, C, F; "
        "bare numbers are K)");
  CHECK(usage_message([] { baroz::parse_temperature_option("-300C", "--ref-temperature"); }) ==
        "--ref-temperature: \"-300C\" is not a temperature above absolute zero");
  for (const char* text : {"0", "0K", "-1", "-273.15C", "-460F", "", "C", "nanC", "15 C C"}) {
    INFO(text);
    CHECK_THROWS_AS(t(text), baroz::Error);
  }
}

TEST_CASE("temperature difference options scale without offsets", "[core][quantity]") {
  const auto d = [](std::string_view text) {
    return baroz::parse_temperature_difference_option(text, "--sigma-temperature");
  };
  CHECK(d("0.5") == 0.5);
  CHECK(d("0.5K") == 0.5);
  CHECK(d("0.5C") == 0.5);
  CHECK(d("0.5 degC") == 0.5);
  // Source: NIST SP 811 B.9: 1 degF = 5/9 K, so 0.9 degF = 0.5 K.
  CHECK(d("0.9F") == Approx(0.5).epsilon(1e-15));
  CHECK(d("1.8 \xC2\xB0" "F") == Approx(1.0).epsilon(1e-15));
  CHECK(usage_message([] { baroz::parse_temperature_difference_option("1x", "--sigma-t"); }) ==
        "--sigma-t: \"1x\" is not a temperature difference (a number with an optional unit K, C, "
        "F; bare numbers are K)");
  for (const char* text : {"", "K", "inf", "0.5 hPa", "0.5CC"}) {
    INFO(text);
    CHECK_THROWS_AS(d(text), baroz::Error);
  }
}

TEST_CASE("duration options take seconds bare, ms, min and h", "[core][quantity]") {
  const auto s = [](std::string_view text) { return baroz::parse_duration_option(text, "--window"); };
  // Source: SI Brochure, 9th ed., Table 8: 1 min = 60 s, 1 h = 3600 s.
  CHECK(s("90") == 90.0);
  CHECK(s("90s") == 90.0);
  CHECK(s("90 sec") == 90.0);
  CHECK(s("2min") == 120.0);
  CHECK(s("2 MIN") == 120.0);
  CHECK(s("1.5h") == 5400.0);
  CHECK(s("250ms") == Approx(0.25).epsilon(1e-15));
  CHECK(s("1e3us") == Approx(1e-3).epsilon(1e-15));
  CHECK(usage_message([] { baroz::parse_duration_option("2m", "--window"); }) ==
        "--window: \"2m\" is not a duration (a number with an optional unit s, ms, min, h; "
        "bare numbers are s)");
  for (const char* text : {"", "s", "1d", "1 hour s", "1:30", "nan s", "1e400s", "2 m"}) {
    INFO(text);
    CHECK_THROWS_AS(s(text), baroz::Error);
  }
}

TEST_CASE("drift options take hPa per hour bare and return Pa per second", "[core][quantity]") {
  const auto r = [](std::string_view text) { return baroz::parse_drift_option(text, "--drift"); };
  // 1 hPa/h = 100 Pa / 3600 s (SI prefix hecto; SI Brochure Table 8, 1 h = 3600 s).
  CHECK(r("1") == Approx(100.0 / 3600.0).epsilon(1e-15));
  CHECK(r("1hPa/h") == Approx(100.0 / 3600.0).epsilon(1e-15));
  CHECK(r("1 hPa/h") == Approx(100.0 / 3600.0).epsilon(1e-15));
  CHECK(r("-0.5hPa/h") == Approx(-50.0 / 3600.0).epsilon(1e-15));
  CHECK(r("3600Pa/h") == Approx(1.0).epsilon(1e-15));
  CHECK(r("2Pa/s") == 2.0);
  CHECK(r("0.6mbar/min") == Approx(1.0).epsilon(1e-15));
  CHECK(r("1 hPa / h") == Approx(100.0 / 3600.0).epsilon(1e-15));
  CHECK(usage_message([] { baroz::parse_drift_option("1hPa", "--drift"); }) ==
        "--drift: \"1hPa\" is not a pressure drift rate (a number with an optional unit hPa/h, "
        "Pa/h, Pa/s; bare numbers are hPa/h)");
  for (const char* text : {"", "hPa/h", "1/h", "1hPa/", "1hPa/d", "1 hPa per h", "1hPa/h/h",
                           "1K/h", "nan", "1e400"}) {
    INFO(text);
    CHECK_THROWS_AS(r(text), baroz::Error);
  }
}

TEST_CASE("number options take a plain finite number", "[core][quantity]") {
  CHECK(baroz::parse_number_option("3.5", "--k") == 3.5);
  CHECK(baroz::parse_number_option(" 2 ", "--k") == 2.0);
  CHECK(baroz::parse_number_option("1e-3", "--k") == 1e-3);
  CHECK(usage_message([] { baroz::parse_number_option("3.5x", "--k"); }) ==
        "--k: \"3.5x\" is not a number");
  for (const char* text : {"", "nan", "inf", "1e400", "3,5", "3.5 m", "0x1"}) {
    INFO(text);
    CHECK_THROWS_AS(baroz::parse_number_option(text, "--k"), baroz::Error);
  }
}
