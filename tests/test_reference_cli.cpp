// The reference manager through the command line: base-station logs
// (--ref-base, --base-offset, --base-elevation, --no-tie, --outside-base),
// --drift linear, --checkpoint, --ref-gnss, their usage errors and what the
// manifest records. The logs are synthetic, written by the test from the
// isothermal hypsometric relation, so the true height of every row is known.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <functional>
#include <random>
#include <string>
#include <vector>

#include <fmt/format.h>
#include <simdjson.h>

#include "baroz/output/sha256.hpp"
#include "cli_harness.hpp"

using namespace baroz::test;

namespace {

// Constants written out here. Source: U.S. Standard Atmosphere 1976,
// Table 2 (reference-values.md section 1.1): R* = 8.31432 J/(mol K),
// M0 = 28.9644 g/mol, g0 = 9.80665 m/s^2, r0 = 6356766 m.
constexpr double kR = 8.31432 / 0.0289644;
constexpr double kG0 = 9.80665;
constexpr double kR0 = 6356766.0;
constexpr double kT = 288.15;  // K, the isothermal column of every log here
constexpr double kPi = 3.14159265358979323846;
/// The logs' clock: 2026-10-14T08:00:00Z as Unix seconds (GNU date -u +%s).
constexpr std::int64_t kEpoch = 1791964800;
constexpr int kEnd = 2400;  // s: every flight log lasts 40 min at 1 Hz

/// Geopotential of geometric altitude z [m'] (USSA76 eq. 18).
double geopotential(double z) {
  return kR0 * z / (kR0 + z);
}

/// Pressure at geometric height h above a launch point at altitude
/// `launch_m` whose ground pressure is p_ground, in an isothermal column
/// at kT. Source: hypsometric equation (W&H 2006 eq. 3.29,
/// reference-values.md 4.3): p = p_ground exp(-g0 dH / (R T)).
double pressure_at(double p_ground, double h, double launch_m = 0.0) {
  const double dh = geopotential(launch_m + h) - geopotential(launch_m);
  return p_ground * std::exp(-kG0 * dh / (kR * kT));
}

/// The flight: rest to 120 s, climb 0.5 m/s to 300 m (720 s), hover to
/// 1700 s, descend 0.5 m/s to `land_m` above the launch, rest to 2400 s.
double flight_height(double t, double land_m = 0.0) {
  if (t <= 120.0) return 0.0;
  if (t <= 720.0) return 0.5 * (t - 120.0);
  if (t <= 1700.0) return 300.0;
  const double down_end = 1700.0 + (300.0 - land_m) / 0.5;
  if (t <= down_end) return 300.0 - 0.5 * (t - 1700.0);
  return land_m;
}

/// A ground pressure falling by 1.5 hPa over the 40 min (a plausible synoptic
/// tendency; reference-values.md section 6: ~8.3 m per hPa, so ~12 m).
double drifting_ground(double t) {
  return 101325.0 - 150.0 * t / kEnd;
}

/// The same with micro-barometric waves of 8 and 6 Pa (periods 180 and 97 s).
double wavy_ground(double t) {
  return drifting_ground(t) + 8.0 * std::sin(2.0 * kPi * t / 180.0) +
         6.0 * std::sin(2.0 * kPi * t / 97.0 + 1.0);
}

using Fn = std::function<double(double)>;

/// A flight log "time,pressure_hpa" at 1 Hz from 0 to `end_s`.
std::string flight_log(const Fn& ground, const Fn& height, int end_s = kEnd) {
  std::string s = "time,pressure_hpa\n";
  for (int t = 0; t <= end_s; ++t)
    s += fmt::format("{},{:.6f}\n", kEpoch + t, pressure_at(ground(t), height(t)) / 100.0);
  return s;
}

/// A base log "unix_time,baro_pa,air_temp_k" (other names and units than the
/// flight log) every `step_s` on the flight clock from `from_s` to `to_s`,
/// reading `ground(t) + offset_pa`, its clock `behind_s` behind the flight's
/// (the file holds t - behind_s: --base-offset behind_s puts it right).
std::string base_log(const Fn& ground, double from_s, double to_s, double step_s,
                     double offset_pa = 35.0, double behind_s = 0.0, double above_m = 0.0) {
  std::string s = "unix_time,baro_pa,air_temp_k\n";
  for (double t = from_s; t <= to_s + 1e-9; t += step_s)
    s += fmt::format("{:.3f},{:.4f},{:.2f}\n", static_cast<double>(kEpoch) + t - behind_s,
                     pressure_at(ground(t), above_m) + offset_pa, kT);
  return s;
}


/// Seconds since kEpoch of every row, from the time column as given (so that
/// rejected rows, which move elapsed_s, do not shift them).
std::vector<double> flight_times(const std::string& out) {
  std::vector<double> t;
  for (const auto& x : column(out, "time"))
    t.push_back(static_cast<double>(std::stoll(x) - kEpoch));
  return t;
}

/// Height errors (output minus truth) of every row.
std::vector<double> height_errors(const std::string& out, const Fn& height) {
  const auto h = numbers(column(out, "height_m"));
  const auto t = flight_times(out);
  std::vector<double> e;
  for (std::size_t i = 0; i < h.size(); ++i) e.push_back(h[i] - height(t[i]));
  return e;
}

double max_abs(const std::vector<double>& v) {
  double m = 0.0;
  for (double x : v) m = std::max(m, std::fabs(x));
  return m;
}

/// Normal deviates by Box-Muller on std::mt19937_64 (whose sequence the
/// standard fixes), so the logs are the same with every standard library.
struct Gauss {
  std::mt19937_64 rng;
  explicit Gauss(std::uint64_t seed) : rng(seed) {}
  double operator()() {
    const double u1 = (static_cast<double>(rng() >> 11) + 1.0) * 0x1p-53;
    const double u2 = static_cast<double>(rng() >> 11) * 0x1p-53;
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * kPi * u2);
  }
};

const std::vector<std::string> kIso = {"height", "--model", "isothermal"};

std::vector<std::string> args(std::vector<std::string> extra) {
  std::vector<std::string> a = kIso;
  a.insert(a.end(), extra.begin(), extra.end());
  return a;
}

/// The number after `marker` in `text` (NaN when absent).
double number_after(const std::string& text, const std::string& marker) {
  const auto at = text.find(marker);
  if (at == std::string::npos) return NAN;
  return std::stod(text.substr(at + marker.size()));
}

}  // namespace

TEST_CASE("a base log (--ref-base) follows a drifting ground pressure", "[reference][cli][base]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  // Base sensor 35 Pa high (the tie cancels it), every 10 s, covering the flight.
  const auto base = d.file("base.csv", base_log(drifting_ground, -300, 2700, 10));
  auto r = run_cli(args({"--ref-base", base, log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  // No temperature in the flight log: the reference temperature is the
  // base's mean (the order in reference.cpp: --ref-temperature, the window,
  // the base, else 288.15 K; the label tells which was used).
  CHECK(r.err.find("isothermal reference temperature 288.15 K (base)") != std::string::npos);
  const auto e = height_errors(r.out, h);
  REQUIRE(e.size() == kEnd + 1);
  // Linear interpolation of a linear drift is exact; the log is written to
  // 1e-4 Pa and the geometric conversion's datum (H_std(p_ref), within 12 m
  // of 0) moves a 300 m height by < 2 mm (USSA76 eq. 18): "a few cm".
  CHECK(max_abs(e) < 0.02);

  // Without the base (the default auto window) the drift goes uncorrected:
  // ~1.46 hPa between the window and the end, at 8.3 m/hPa near sea level
  // (reference-values.md section 6) ~12 m.
  auto w = run_cli(args({log}));
  REQUIRE(w.status == 0);
  const auto ew = height_errors(w.out, h);
  CHECK(ew.back() > 10.0);
  CHECK(ew.back() < 14.0);
}

TEST_CASE("base offset: --base-offset S adds S seconds to the base's times",
          "[reference][cli][base]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(wavy_ground, h));
  // The base's clock runs 45 s behind the flight's; a sample every 2 s.
  const std::string base_text = base_log(wavy_ground, -300, 2700, 2, 35.0, 45.0);
  const auto base = d.file("base.csv", base_text);

  auto right =
      run_cli(args({"--ref-base", base, "--base-offset", "45", "--manifest", d / "m.json", log}));
  INFO(right.err);
  REQUIRE(right.status == 0);
  // Interpolating the waves every 2 s errs by |p''| dt^2 / 8 < 0.02 Pa
  // (docs in base_series.hpp; by hand for 8 Pa at 180 s and 6 Pa at 97 s):
  // < 2 mm at 8.3 m/hPa.
  CHECK(max_abs(height_errors(right.out, h)) < 0.02);

  auto zero = run_cli(args({"--ref-base", base, "--base-offset", "0", log}));
  REQUIRE(zero.status == 0);
  // 45 s off, the waves no longer cancel: 8 Pa at 180 s period a quarter
  // period apart differ by up to 8 sqrt(2) ~ 11 Pa (by hand) ~ 0.9 m.
  CHECK(max_abs(height_errors(zero.out, h)) > 0.5);

  // Wrong sign: -45 s puts the base 90 s off.
  auto wrong = run_cli(args({"--ref-base", base, "--base-offset", "-45", log}));
  REQUIRE(wrong.status == 0);
  CHECK(max_abs(height_errors(wrong.out, h)) > 0.5);

  // The manifest records the base and the offset as given.
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto b = doc["inputs"].at(0)["reference"]["base"];
  CHECK(std::string(b["path"].get_string().value()) == base);
  CHECK(std::string(b["sha256"].get_string().value()) == baroz::sha256_hex(base_text));
  CHECK(b["clock_offset_s"].get_double().value() == 45.0);
  CHECK(std::string(b["clock_offset_from"].get_string().value()) == "option");
  CHECK(b["tie"].get_bool().value());
  // The flight sensor reads 35 Pa below the base (by construction): the tie
  // is -0.35 hPa, give or take the interpolation error of the waves
  // (< 0.02 Pa, see above).
  CHECK(b["tie_offset_hpa"].get_double().value() == Approx(-0.35).margin(2e-4));
  CHECK(std::string(doc["inputs"].at(0)["reference"]["kind"].get_string().value()) == "base");
}

TEST_CASE("base offset: auto finds the clock offset from the waves", "[reference][cli][base]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  // Sensor noise (1 Pa) on both logs so that the estimate has a spread.
  Gauss g(1414);
  std::string log_text = "time,pressure_hpa\n";
  for (int t = 0; t <= kEnd; ++t)
    log_text +=
        fmt::format("{},{:.6f}\n", kEpoch + t, (pressure_at(wavy_ground(t), h(t)) + g()) / 100.0);
  const auto log = d.file("flight.csv", log_text);
  std::string base_text = "unix_time,baro_pa,air_temp_k\n";
  for (int t = -300; t <= 2700; t += 2)
    base_text +=
        fmt::format("{},{:.4f},{:.2f}\n", kEpoch + t - 45, wavy_ground(t) + 35.0 + g(), kT);
  const auto base = d.file("base.csv", base_text);
  auto r =
      run_cli(args({"--ref-base", base, "--base-offset", "auto", "--manifest", d / "m.json", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  CHECK(r.err.find("base clock offset (auto)") != std::string::npos);
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto b = doc["inputs"].at(0)["reference"]["base"];
  CHECK(std::string(b["clock_offset_from"].get_string().value()) == "auto");
  const double s = b["clock_offset_s"].get_double().value();
  const double sigma = b["clock_offset_estimate"]["sigma_s"].get_double().value();
  // Within 3 sigma (common practice) and within 2 s of the 45 s put in.
  CHECK(std::fabs(s - 45.0) <= 3.0 * sigma);
  CHECK(std::fabs(s - 45.0) < 2.0);
  CHECK(b["clock_offset_estimate"]["segments"].get_uint64().value() == 2);
}

TEST_CASE("base elevation: the base's pressure is moved hypsometrically",
          "[reference][cli][base]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  // The base 10 m above the launch, no sensor offset, every 10 s.
  const auto base = d.file("base.csv", base_log(drifting_ground, -300, 2700, 10, 0.0, 0.0, 10.0));

  auto r = run_cli(args({"--ref-base", base, "--no-tie", "--base-elevation", "10",
                         "--ref-temperature", "288.15", "--manifest", d / "m.json", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  // The base's pressure moved down by 10 m is the launch's: heights as the
  // truth (same bound as with a base at the launch).
  CHECK(max_abs(height_errors(r.out, h)) < 0.02);
  // The factor: exp(g0 dz / (R T)) with dz = 10 m, T = 288.15 K
  // (hypsometric equation, W&H 2006 eq. 3.29) = 1.0011863 (by hand).
  const double factor = std::exp(kG0 * 10.0 / (kR * kT));
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto b = doc["inputs"].at(0)["reference"]["base"];
  CHECK(b["level_factor"].get_double().value() == Approx(factor).epsilon(1e-12));
  CHECK(b["level_temperature_k"].get_double().value() == Approx(288.15).margin(1e-9));
  CHECK(b["base_elevation_m"].get_double().value() == 10.0);
  CHECK_FALSE(b["tie"].get_bool().value());
  CHECK(b["tie_offset_hpa"].is_null());
  CHECK(r.err.find(fmt::format("factor {:.6f}", factor)) != std::string::npos);

  // Without --base-elevation the heights are measured from the base's level,
  // 10 m up: every row ~10 m low (the same hypsometric relation).
  auto n = run_cli(args({"--ref-base", base, "--no-tie", "--ref-temperature", "288.15", log}));
  REQUIRE(n.status == 0);
  for (double e : height_errors(n.out, h)) CHECK(e == Approx(-10.0).margin(0.05));
}

TEST_CASE("rows outside the base's span are held with a wider band or rejected",
          "[reference][cli][base]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  // The base covers flight times 100-2000 s only.
  const auto base = d.file("base.csv", base_log(drifting_ground, 100, 2000, 10));

  auto r =
      run_cli(args({"--ref-base", base, "--ref-temperature", "288.15", "--drift-sigma", "2", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  const auto flags = column(r.out, "flags");
  const auto t = flight_times(r.out);
  const auto lo = numbers(column(r.out, "height_low_m"));
  const auto hi = numbers(column(r.out, "height_high_m"));
  REQUIRE(flags.size() == kEnd + 1);
  std::size_t outside = 0;
  for (std::size_t i = 0; i < flags.size(); ++i) {
    const bool no_base = flags[i].find("no_base") != std::string::npos;
    // The base's own samples at 100 s and 2000 s are inside (by construction).
    const bool expect = t[i] < 100.0 || t[i] > 2000.0;
    if (no_base != expect) FAIL_CHECK("row at " << t[i] << " s: flags '" << flags[i] << "'");
    outside += no_base;
  }
  CHECK(outside == 500);  // 0-99 s and 2001-2400 s
  CHECK(r.err.find("baroz: 2401 rows read, 2401 written, 0 rejected") != std::string::npos);
  // Band half-widths at the ground: 110 s (inside), 0 s (100 s before the
  // base) and 2400 s (400 s after it). The drift term |dh/dp_ref| x 2 hPa/h
  // (--drift-sigma 2: bare hPa per hour, pinned) x age adds in quadrature (GUM, JCGM
  // 100:2008 eq. 10), dh/dp_ref = R T / (g0 p) (hypsometric equation), with
  // the coverage factor 1.959964 for 95 % (normal quantile, from memory).
  auto half = [&](std::size_t i) { return (hi[i] - lo[i]) / 2.0; };
  REQUIRE(t[110] == 110.0);
  REQUIRE(t[0] == 0.0);
  REQUIRE(t[kEnd] == kEnd);
  CHECK(half(0) > half(110));
  CHECK(half(kEnd) > half(0));
  for (auto [row, age] : {std::pair<std::size_t, double>{0, 100.0}, {kEnd, 400.0}}) {
    const double p = drifting_ground(2000.0);
    const double term = 1.959964 * kR * kT / (kG0 * p) * (200.0 / 3600.0) * age;
    const double extra = std::sqrt(half(row) * half(row) - half(110) * half(110));
    INFO("row " << row << ": extra " << extra << " m, expected " << term << " m");
    // The output's 1 mm rounding of both band edges: < 1 % here (by hand).
    CHECK(extra == Approx(term).epsilon(0.02));
  }

  // --outside-base reject: those rows are rejected, with reason outside_base.
  auto j = run_cli(args({"--ref-base", base, "--ref-temperature", "288.15", "--outside-base",
                         "reject", "--rejects", d / "rej.csv", log}));
  INFO(j.err);
  REQUIRE(j.status == 0);
  // Product spec, "Bad input": rows read = written + rejected.
  CHECK(j.err.find("baroz: 2401 rows read, 1901 written, 500 rejected") != std::string::npos);
  CHECK(split_lines(j.out).size() == 1 + 1901);
  const auto rej = split_lines(read_file(d / "rej.csv"));
  REQUIRE(rej.size() == 1 + 500);
  CHECK(rej[0] == "source,line,reason,raw");
  // The reason field is "CODE: message" (quoted when it holds a comma).
  std::size_t reason_ok = 0;
  for (std::size_t i = 1; i < rej.size(); ++i) {
    const std::string reason = split(rej[i], ',')[2];
    reason_ok += reason.rfind("outside_base: ", 0) == 0 || reason.rfind("\"outside_base: ", 0) == 0;
  }
  CHECK(reason_ok == 500);
  // The first rejected row is line 2 (t = 0 s; the header is line 1).
  CHECK(split(rej[1], ',')[1] == "2");
  // The rows kept are as accurate as with a full base.
  CHECK(max_abs(height_errors(j.out, h)) < 0.02);
}

TEST_CASE("drift linear corrects a drift between launch and landing", "[reference][cli][drift]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  auto r = run_cli(
      args({"--ref-temperature", "288.15", "--drift", "linear", "--manifest", d / "m.json", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  // The line through the two resting means is the true ground pressure (a
  // linear drift, by construction); the samples that had begun to move at
  // the segments' edges bias it by < 1 Pa: < 1 cm at 8.3 m/hPa.
  CHECK(max_abs(height_errors(r.out, h)) < 0.05);
  // The truth: -1.5 hPa in 40 min = -2.25 hPa/h.
  const double rate = number_after(r.err, "): drift ");
  CHECK(rate == Approx(-2.25).epsilon(0.02));
  CHECK(r.err.find("unusually fast") == std::string::npos);
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto dr = doc["inputs"].at(0)["reference"]["drift"];
  CHECK(dr["drift_hpa_per_h"].get_double().value() == Approx(-2.25).epsilon(0.02));
  CHECK(dr["landing_height_m"].get_double().value() == 0.0);
  CHECK(std::string(dr["landing_height_from"].get_string().value()) == "assumed 0");
  // The landing: the descent ends at 2300 s (by construction), within 3 s.
  CHECK(dr["landing_segment_start_elapsed_s"].get_double().value() == Approx(2300.0).margin(3.0));
}

TEST_CASE("drift linear with --landing-height for a flight that lands above the launch",
          "[reference][cli][drift]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t, 20.0); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  auto r = run_cli(
      args({"--ref-temperature", "288.15", "--drift", "linear", "--landing-height", "20", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  // The post-landing pressure moved down 20 m hypsometrically is the
  // launch's (as --base-elevation): heights as the truth.
  CHECK(max_abs(height_errors(r.out, h)) < 0.05);
  CHECK(number_after(r.err, "): drift ") == Approx(-2.25).epsilon(0.02));

  // Taken as landing at the launch level, the 20 m (~240 Pa at 8.3 m/hPa)
  // counts as drift: ~-6 hPa/h, flagged as unusually fast, heights off by
  // up to ~20 m at the landing.
  auto n = run_cli(args({"--ref-temperature", "288.15", "--drift", "linear", log}));
  REQUIRE(n.status == 0);
  CHECK(n.err.find("unusually fast") != std::string::npos);
  CHECK(max_abs(height_errors(n.out, h)) > 10.0);
}

// A log that ends while still climbing has no post-landing rest: the last
// samples read backwards must not pass for one (they once did: a 1-sample
// "landing" and a drift of -1064 hPa/h). Fast and slow climbs alike.
TEST_CASE("drift linear refuses a log that ends in flight", "[reference][cli][drift]") {
  TempDir d;
  // A balloon climbing at 5 m/s whose log stops at 300 m (battery out):
  // rest to 120 s, then climb until the end at 180 s.
  for (double rate : {5.0, 0.5}) {
    const Fn h = [rate](double t) { return t <= 120.0 ? 0.0 : rate * (t - 120.0); };
    const auto log = d.file("cut.csv", flight_log(drifting_ground, h, 180));
    auto r = run_cli(args({"--ref-temperature", "288.15", "--drift", "linear", log}));
    INFO("climb " << rate << " m/s: " << r.err);
    CHECK(r.status == 2);  // product spec, "Bad input": 2 input not usable
    CHECK(r.err.find("--drift linear") != std::string::npos);
    CHECK(r.err.find("post-landing") != std::string::npos);
    CHECK(r.out.empty());
  }
}

TEST_CASE("drift linear on standard input says it needs a file", "[reference][cli][drift]") {
  const Fn h = [](double t) { return flight_height(t); };
  auto s = run_cli(args({"--drift", "linear", "-"}), flight_log(drifting_ground, h));
  INFO(s.err);
  CHECK(s.status != 0);
  CHECK(s.err.find("--drift linear") != std::string::npos);
  CHECK(s.err.find("give a file") != std::string::npos);
  CHECK(s.out.empty());
}

TEST_CASE("a checkpoint makes the height at its time the given one",
          "[reference][cli][checkpoint]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h));
  auto r = run_cli(args({"--ref-temperature", "288.15", "--checkpoint", "1200=300", "--manifest",
                         d / "m.json", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  const auto t = numbers(column(r.out, "elapsed_s"));
  const auto hm = numbers(column(r.out, "height_m"));
  REQUIRE(t[1200] == 1200.0);
  // The fitted reference puts the row at the checkpoint's time on its height
  // (the output carries 1 mm).
  CHECK(hm[1200] == Approx(300.0).margin(0.001));
  CHECK(r.err.find("checkpoints: reference corrected by") != std::string::npos);
  CHECK(r.err.find("residuals 1200=300 (") != std::string::npos);
  CHECK((r.err.find("1200=300 (+0.000 m)") != std::string::npos ||
         r.err.find("1200=300 (-0.000 m)") != std::string::npos));
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto c = doc["inputs"].at(0)["reference"]["checkpoints"];
  CHECK(c["parameters"].get_uint64().value() == 1);
  auto p = c["points"].at(0);
  CHECK(std::fabs(p["residual_m"].get_double().value()) < 1e-3);
  CHECK(p["known_height_m"].get_double().value() == Approx(300.0).margin(1e-9));
  CHECK(p["elapsed_s"].get_double().value() == Approx(1200.0).margin(1e-6));
  // The window's mean is the ground at 60 s; at 1200 s the ground is
  // 150 x 1140 / 2400 = 71.25 Pa lower (by construction): the correction.
  CHECK(c["offset_hpa"].get_double().value() == Approx(-0.7125).margin(0.005));
}

TEST_CASE("GNSS datum (--ref-gnss) fits the launch altitude, heights stay barometric",
          "[reference][cli][gnss]") {
  TempDir d;
  // Launch point 250 m above MSL; GNSS altitude = 250 + true height + 3 m
  // noise (a typical GNSS vertical error; common practice).
  const double launch = 250.0;
  const Fn h = [](double t) { return flight_height(t); };
  Gauss g(250);
  std::string text = "time,pressure_hpa,gnss_alt\n";
  for (int t = 0; t <= kEnd; ++t)
    text += fmt::format("{},{:.6f},{:.2f}\n", kEpoch + t,
                        pressure_at(drifting_ground(0), h(t), launch) / 100.0,
                        launch + h(t) + 3.0 * g());
  const auto log = d.file("gnss.csv", text);
  auto r =
      run_cli(args({"--ref-temperature", "288.15", "--ref-gnss", "--manifest", d / "m.json", log}));
  INFO(r.err);
  REQUIRE(r.status == 0);
  const auto hm = numbers(column(r.out, "height_m"));
  const auto alt = numbers(column(r.out, "altitude_m"));
  REQUIRE(hm.size() == kEnd + 1);
  // The median of 2401 differences of sigma 3 m: standard error 1.2533 x 3 /
  // sqrt(2401) = 0.077 m (from memory); 0.4 m is 5 of them.
  for (std::size_t i = 0; i < hm.size(); i += 100)
    CHECK(alt[i] - hm[i] == Approx(launch).margin(0.4));
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(d / "m.json");
  auto gn = doc["inputs"].at(0)["reference"]["gnss"];
  CHECK(gn["launch_altitude_m"].get_double().value() == Approx(launch).margin(0.4));
  CHECK(gn["pairs"].get_uint64().value() == kEnd + 1);  // all below 1000 m
  // The spread: 1.4826 MAD ~ the 3 m put in (Hampel 1974; from memory).
  CHECK(gn["spread_m"].get_double().value() == Approx(3.0).margin(0.3));

  // The heights stay barometric: as the truth (the datum now places the
  // column at 250 m, as the log was written), and within the gravity
  // placement (2 x 250 m x 300 m / r0 = 2.4 cm, USSA76 eq. 18) of a run
  // without --ref-gnss; the GNSS noise (3 m) is nowhere in them.
  const Fn truth = [](double t) { return flight_height(t); };
  CHECK(max_abs(height_errors(r.out, truth)) < 0.01);
  auto plain = run_cli(args({"--ref-temperature", "288.15", log}));
  REQUIRE(plain.status == 0);
  const auto hp = numbers(column(plain.out, "height_m"));
  REQUIRE(hp.size() == hm.size());
  double worst = 0.0;
  for (std::size_t i = 0; i < hm.size(); ++i) worst = std::max(worst, std::fabs(hm[i] - hp[i]));
  CHECK(worst < 0.03);
  CHECK(split_lines(plain.out)[0].find("altitude_m") == std::string::npos);

  auto e = run_cli(args({"--ref-gnss", "--elevation", "250", log}));
  CHECK(e.status == 1);
  CHECK(e.err.find("--ref-gnss") != std::string::npos);
}

TEST_CASE("reference manager options that do not go together are usage errors",
          "[reference][cli]") {
  TempDir d;
  const Fn h = [](double t) { return flight_height(t); };
  const auto log = d.file("flight.csv", flight_log(drifting_ground, h, 300));
  const auto base = d.file("base.csv", base_log(drifting_ground, 0, 300, 10));
  const std::vector<std::pair<std::vector<std::string>, std::string>> cases = {
      {{"height", "--no-tie", log}, "--no-tie"},
      {{"height", "--base-offset", "10", log}, "--base-offset"},
      {{"height", "--base-elevation", "10", log}, "--base-elevation"},
      {{"height", "--outside-base", "reject", log}, "--outside-base"},
      {{"height", "--landing-height", "20", log}, "--landing-height"},
      {{"height", "--drift", "linear", "--ref-pressure", "1013.25", log}, "--drift linear"},
      {{"height", "--drift", "linear", "--ref-base", base, log}, "--drift linear"},
      {{"height", "--ref-base", base, "--qnh", "1013.25", log}, "--ref-base"},
      {{"height", "--ref-base", base, "--ref-pressure", "1013.25", log}, "--ref-base"},
      {{"height", "--checkpoint", "600", log}, "--checkpoint"},
      {{"height", "--gnss-below", "500", log}, "--gnss-below"},
  };
  for (const auto& [a, word] : cases) {
    auto r = run_cli(a);
    std::string line;
    for (const auto& x : a) line += x + " ";
    INFO(line << "\n" << r.err);
    CHECK(r.status == 1);  // product spec, "Bad input": 1 usage error
    CHECK(r.err.find(word) != std::string::npos);
    CHECK(r.out.empty());
  }
}
