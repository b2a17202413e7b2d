// The profile model through the command line: model choice, profile
// tables, extrapolation flags, humidity, gravity at a latitude, streams.
// Expected heights come from published tables (reference-values.md
// sections 1.4, 1.5, 3.5, 4.2, 5), not from baroz.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "baroz/models/standard_atmosphere.hpp"
#include "cli_harness.hpp"

using namespace baroz::test;

namespace {


/// A profile table of the 1976 standard atmosphere, a node every 50 m'
/// from `bottom_m` to `top_m` (the layer bases 11, 20, 32 and 47 km' are
/// nodes, so the piecewise-linear profile has the standard's kinks).
/// Source: U.S. Standard Atmosphere 1976, Table 4 and eqs. 33a/33b, as
/// implemented by baroz::ussa76 and checked against Table I in
/// test_standard_atmosphere.cpp.
std::string standard_profile_table(double bottom_m, double top_m) {
  std::string t = "pressure_pa,temp_k\n";
  for (double h = bottom_m; h <= top_m + 1e-9; h += 50.0)
    t += fmt::format("{:.6f},{:.6f}\n", baroz::ussa76::pressure_at(h),
                     baroz::ussa76::temperature_at(h));
  return t;
}

// A log without temperature: sea level, then the §1.5 pressures.
const std::string kPressureOnlyLog =
    "time_s,pressure_hpa\n"
    "0,1013.25\n"
    "1,900\n"
    "2,500\n"
    "3,200\n"
    "4,50\n"
    "5,10\n";

}  // namespace

TEST_CASE("auto picks profile with an air-temperature column and says so", "[profile][cli]") {
  TempDir d;
  auto with_t = d.file("t.csv", "time_s,pressure_hpa,temp_c\n0,1013.25,15\n1,1013.2,15\n");
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "--manifest", d / "m.json", with_t});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("model profile (auto: the log has an air-temperature column 'temp_c')") !=
        std::string::npos);
  CHECK(read_file(d / "m.json").find("\"chosen\": \"profile\"") != std::string::npos);

  auto without = d.file("p.csv", kPressureOnlyLog);
  r = run_cli({"height", "--ref-pressure", "1013.25", without});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("model standard (auto: no air-temperature column)") != std::string::npos);
}

TEST_CASE("profile model without temperature or a profile file is an input error",
          "[profile][cli]") {
  TempDir d;
  auto r = run_cli({"height", "--model", "profile", "--ref-pressure", "1013.25",
                    d.file("p.csv", kPressureOnlyLog)});
  CHECK(r.status == 2);
  CHECK(r.err.find("the profile model needs an air-temperature column or --profile FILE") !=
        std::string::npos);
}

TEST_CASE("a profile table of the 1976 standard gives the standard heights", "[profile][cli]") {
  // Source: reference-values.md §1.5 (pressure -> standard altitude, Z in m,
  // printed to 0.01 m): 900 hPa 988.65, 500 hPa 5579.33, 200 hPa 11805.93,
  // 50 hPa 20642.98, 10 hPa 31207.09.
  TempDir d;
  auto profile = d.file("std.csv", standard_profile_table(-500.0, 40000.0));
  auto log = d.file("p.csv", kPressureOnlyLog);
  auto r = run_cli({"height", "--profile", profile, "--ref-pressure", "1013.25", log});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("model profile (auto: a temperature profile was given with --profile)") !=
        std::string::npos);
  const auto h = numbers(column(r.out, "height_m"));
  REQUIRE(h.size() == 6);
  CHECK(h[0] == Approx(0.0).margin(0.001));
  CHECK(h[1] == Approx(988.65).margin(0.02));
  CHECK(h[2] == Approx(5579.33).margin(0.02));
  CHECK(h[3] == Approx(11805.93).margin(0.02));
  CHECK(h[4] == Approx(20642.98).margin(0.02));
  CHECK(h[5] == Approx(31207.09).margin(0.03));
  for (const auto& f : column(r.out, "flags")) CHECK(f.find("extrapolated") == std::string::npos);
}

TEST_CASE("rows beyond the profile are flagged extrapolated and extended by the standard lapse",
          "[profile][cli]") {
  // A profile only up to 10 km'. Above it the model continues with the
  // standard lapse rates, which for this (standard) profile is exact, so
  // the heights still match reference-values.md §1.5; the rows are flagged.
  TempDir d;
  auto profile = d.file("low.csv", standard_profile_table(0.0, 10000.0));
  auto r = run_cli({"height", "--profile", profile, "--ref-pressure", "1013.25",
                    d.file("p.csv", kPressureOnlyLog)});
  REQUIRE(r.status == 0);
  const auto h = numbers(column(r.out, "height_m"));
  const auto flags = column(r.out, "flags");
  REQUIRE(h.size() == 6);
  CHECK(flags[1].find("extrapolated") == std::string::npos);  // 900 hPa: inside
  CHECK(flags[2].find("extrapolated") == std::string::npos);  // 500 hPa: inside
  for (std::size_t i = 3; i < 6; ++i) CHECK(flags[i].find("extrapolated") != std::string::npos);
  CHECK(h[3] == Approx(11805.93).margin(0.05));
  CHECK(h[5] == Approx(31207.09).margin(0.05));
}

TEST_CASE("virtual temperature from humidity thickens the layer by 20.29 m per kelvin",
          "[profile][cli][humidity]") {
  // Source: reference-values.md §4.2 (W&H 2006 §3.1 form with WMO-No. 8
  // Magnus and f(p)): 20 C, 50 % at 1000 hPa -> T_v = 294.454 K; §5: the
  // 1000-500 hPa thickness changes by (R_d/g0) ln 2 = 20.289 m per kelvin of
  // mean virtual temperature. With T_v linear in ln p between the two nodes
  // the mean rises by (294.454 - 293.15)/2 K.
  TempDir d;
  auto dry = d.file("dry.csv", "pressure_hpa,temp_c,rh_pct\n1000,20,\n500,20,\n");
  auto moist = d.file("moist.csv", "pressure_hpa,temp_c,rh_pct\n1000,20,50\n500,20,\n");
  auto log = d.file("log.csv", "time_s,pressure_hpa\n0,1000\n1,500\n");
  auto a = run_cli({"height", "--profile", dry, "--ref-pressure", "1000", "--geopotential",
                    "--manifest", d / "dry.json", log});
  auto b = run_cli({"height", "--profile", moist, "--ref-pressure", "1000", "--geopotential",
                    "--manifest", d / "moist.json", log});
  REQUIRE(a.status == 0);
  REQUIRE(b.status == 0);
  const double dry_thickness = numbers(column(a.out, "geopotential_height_m"))[1];
  const double moist_thickness = numbers(column(b.out, "geopotential_height_m"))[1];
  // Source: reference-values.md §5, 20.289 m/K x 293.15 K (isothermal 20 C).
  CHECK(dry_thickness == Approx(20.289 * 293.15).margin(0.3));
  CHECK(moist_thickness - dry_thickness == Approx(20.289 * (294.454 - 293.15) / 2).margin(0.02));
  CHECK(read_file(d / "dry.json").find("none: dry air") != std::string::npos);
  CHECK(read_file(d / "moist.json").find("virtual temperature from relative humidity") !=
        std::string::npos);
}

TEST_CASE("the latitude option converts geopotential to geometric height with WGS 84 gravity",
          "[profile][cli][gravity]") {
  // The standard pressure at Z = 10 000 m is 26 499.90 Pa (reference-values
  // §1.4, recomputed), geopotential 9984.29 m'. §3.5 (WGS 84 column): Z =
  // 10 000 m is H = 9957.44 m' at 0 deg and 10 010.34 m' at 90 deg, so the
  // same geopotential lies (9984.29 - H)/(dH/dZ) higher (lower), with dH/dZ
  // = (g/g0)(R/(R+Z))^2 = 0.99418 at 0 deg and 0.99946 at 90 deg (§3.2, §3.4
  // values of g and R).
  TempDir d;
  auto profile = d.file("std.csv", standard_profile_table(-500.0, 15000.0));
  auto log = d.file("p.csv", "time_s,pressure_pa\n0,101325\n1,26499.90\n");
  auto run = [&](const std::string& lat) {
    std::vector<std::string> args = {"height", "--profile", profile, "--ref-pressure",
                                     "1013.25", "--geopotential", log};
    if (!lat.empty()) {
      args.push_back("--latitude");
      args.push_back(lat);
    }
    auto r = run_cli(args);
    REQUIRE(r.status == 0);
    return r;
  };
  auto standard = run("");
  auto equator = run("0");
  auto pole = run("90");
  CHECK(numbers(column(standard.out, "height_m"))[1] == Approx(10000.0).margin(0.02));
  for (const auto* r : {&standard, &equator, &pole})
    CHECK(numbers(column(r->out, "geopotential_height_m"))[1] == Approx(9984.29).margin(0.02));
  CHECK(numbers(column(equator.out, "height_m"))[1] ==
        Approx(10000.0 + (9984.29 - 9957.44) / 0.99418).margin(0.05));
  CHECK(numbers(column(pole.out, "height_m"))[1] ==
        Approx(10000.0 - (10010.34 - 9984.29) / 0.99946).margin(0.05));
  CHECK(equator.err.find("WGS 84 normal gravity at 0.0000 deg (--latitude)") != std::string::npos);
}

TEST_CASE("a profile from the log's ascent is used for the descent too", "[profile][cli]") {
  // Height is a function of pressure through the profile (product spec,
  // "Height models"): the same pressure on the way up and down gives the
  // same height, whatever temperature the descent logs.
  TempDir d;
  std::string log = "time_s,pressure_hpa,temp_c\n";
  for (int i = 0; i <= 60; ++i) log += fmt::format("{},{:.2f},{:.2f}\n", i, 1000.0, 20.0);
  for (int i = 1; i <= 100; ++i)  // ascent 1000 -> 500 hPa, 20 C -> -12 C
    log += fmt::format("{},{:.2f},{:.2f}\n", 60 + i, 1000.0 - 5.0 * i, 20.0 - 0.32 * i);
  for (int i = 1; i <= 100; ++i)  // descent, a sensor reading 5 K warm
    log += fmt::format("{},{:.2f},{:.2f}\n", 160 + i, 500.0 + 5.0 * i, -7.0 + 0.32 * i);
  auto path = d.file("updown.csv", log);
  auto r = run_cli({"height", path});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("profile from log ascent") != std::string::npos);
  const auto p = numbers(column(r.out, "pressure_hpa"));
  const auto h = numbers(column(r.out, "height_m"));
  REQUIRE(h.size() == 261);
  for (int i = 1; i < 100; ++i) {
    const std::size_t up = static_cast<std::size_t>(60 + i);
    const std::size_t down = static_cast<std::size_t>(260 - i);
    REQUIRE(p[up] == Approx(p[down]));
    CHECK(h[up] == Approx(h[down]).margin(0.002));
  }
}

TEST_CASE("a stream builds the profile causally and says so", "[profile][cli]") {
  const std::string log =
      "time_s,pressure_hpa,temp_c\n0,1000,15\n1,1000,15\n2,990,14.5\n3,980,14\n";
  auto r = run_cli({"height", "--ref-pressure", "1000", "-"}, log);
  REQUIRE(r.status == 0);
  CHECK(r.err.find("the temperature profile is built causally") != std::string::npos);
  CHECK(split_lines(r.out).size() == 5);
}

TEST_CASE("profile errors name the file and conflicting options are refused", "[profile][cli]") {
  TempDir d;
  // A log that only climbs has no descent after its top.
  auto flat = d.file("up.csv", "time_s,pressure_hpa,temp_c\n0,1002,15\n1,1001,15\n2,1000,15\n");
  auto r = run_cli({"height", "--profile-leg", "descent", "--ref-pressure", "1000", flat});
  CHECK(r.status == 2);
  CHECK(r.err.find(flat + ": profile leg 'descent' has no usable temperature sample") !=
        std::string::npos);
  // --qnh is the standard atmosphere's altimeter relation (product spec).
  auto table = d.file("t.csv", "pressure_hpa,temp_c\n1000,15\n500,-20\n");
  r = run_cli({"height", "--profile", table, "--qnh", "1013.25", flat});
  CHECK(r.status == 1);
  CHECK(r.err.find("--qnh uses the standard atmosphere's altimeter relation") !=
        std::string::npos);
}

TEST_CASE("isothermal with the mean of ground and sample temperature", "[cli][isothermal]") {
  // Product spec, "Height models": --temperature-model mean uses
  // (T_ground + T_sample)/2 in h = (R* T / (g0 M0)) ln(p_ref / p).
  // Source: hypsometric equation (Wallace & Hobbs 2006, eq. 3.29; numbering
  // from memory) with the USSA76 constants R* = 8.31432, M0 = 28.9644e-3,
  // g0 = 9.80665 (reference-values.md §1.1); geometric via USSA76 eq. 18.
  TempDir d;
  auto log = d.file("m.csv", "time_s,pressure_hpa,temp_c\n0,1013.25,15\n1,1013.25,15\n2,900,-5\n");
  auto r = run_cli({"height", "--model", "isothermal", "--temperature-model", "mean",
                    "--ref-pressure", "1013.25", "--ref-temperature", "15C", log});
  REQUIRE(r.status == 0);
  const double t_mean = (288.15 + 268.15) / 2.0;
  const double dh = 8.31432 / (9.80665 * 28.9644e-3) * t_mean * std::log(1013.25 / 900.0);
  const double r0 = 6356766.0;
  const double z = r0 * dh / (r0 - dh);
  CHECK(numbers(column(r.out, "height_m"))[2] == Approx(z).margin(0.002));
}
