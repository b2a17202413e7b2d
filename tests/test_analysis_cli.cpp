// The analysis stage through the command line: `baroz summary`, `baroz
// plot`, and `baroz height --vspeed/--despike/--summary/--plot`, on a
// synthetic flight whose truth is known by construction: pressures are the
// 1976 standard atmosphere's at exactly known geometric heights, and the
// log has no temperature column, so the standard model's heights are the
// construction's heights (to the 1 Pa rounding, < 0.1 m near the ground).
#include <catch2/catch.hpp>

#include <simdjson.h>

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "baroz/models/geopotential.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "cli_harness.hpp"

using namespace baroz::test;

namespace {

// The flight: rest 120 s at the site, climb at 5 m/s to 3000 m (600 s),
// fall at 10 m/s (300 s), rest 120 s; one sample a second.
constexpr double kRest = 120.0, kClimb = 5.0, kTop = 3000.0, kFall = 10.0;
constexpr double kLaunch = kRest;
constexpr double kApogee = kLaunch + kTop / kClimb;    // 720 s
constexpr double kLanding = kApogee + kTop / kFall;    // 1020 s
constexpr double kEnd = kLanding + kRest;              // 1140 s

double true_height(double t) {
  if (t <= kLaunch) return 0.0;
  if (t <= kApogee) return kClimb * (t - kLaunch);
  if (t <= kLanding) return kTop - kFall * (t - kApogee);
  return 0.0;
}

/// The log, RFC 3339 times from 2026-06-01T06:00:00Z, pressure in Pa
/// (rounded to 0.1 Pa) of the 1976 standard atmosphere at the site's
/// altitude (300 m) plus the height. Source: U.S. Standard Atmosphere 1976,
/// eqs. 18 and 33a (baroz::ussa76, checked against Table I elsewhere).
std::string flight_log() {
  std::string log = "utc,pressure_pa\n";
  for (int i = 0; i <= static_cast<int>(kEnd); ++i) {
    const double z = 300.0 + true_height(i);
    const double p = baroz::ussa76::pressure_at(baroz::geopotential_from_geometric(z));
    log += fmt::format("2026-06-01T06:{:02d}:{:02d}Z,{:.1f}\n", i / 60, i % 60, p);
  }
  return log;
}

double number(simdjson::dom::element doc, const char* key) {
  return doc[key].get_double().value();
}

}  // namespace

TEST_CASE("summary finds launch, burst and landing of a synthetic flight", "[analysis][cli]") {
  TempDir d;
  auto log = d.file("flight.csv", flight_log());
  auto r = run_cli({"summary", "--above", "1000m", log});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("1141 rows read, 1141 written, 0 rejected") != std::string::npos);
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.parse(r.out);
  // Tolerances: two sample intervals for times, 1 m for heights (noise-free
  // log; the detectors work on 1 s samples).
  CHECK(number(doc, "launch_elapsed_s") == Approx(kLaunch).margin(2.0));
  CHECK(number(doc, "burst_elapsed_s") == Approx(kApogee).margin(2.0));
  CHECK(number(doc, "apogee_elapsed_s") == Approx(kApogee).margin(2.0));
  CHECK(number(doc, "landing_elapsed_s") == Approx(kLanding).margin(2.0));
  CHECK(number(doc, "max_height_m") == Approx(kTop).margin(1.0));
  CHECK(number(doc, "max_height_low_m") < number(doc, "max_height_m"));
  CHECK(number(doc, "max_height_high_m") > number(doc, "max_height_m"));
  CHECK(number(doc, "mean_ascent_rate_mps") == Approx(kClimb).margin(0.05));
  CHECK(number(doc, "mean_descent_rate_mps") == Approx(kFall).margin(0.1));
  CHECK(number(doc, "duration_s") == Approx(kEnd).margin(0.001));
  CHECK(std::string(doc["launch_time"].get_string().value()) == "2026-06-01T06:02:00.000Z");
  // Time above 1000 m: climbing 1000 -> 3000 m at 5 m/s (400 s) and
  // falling back at 10 m/s (200 s).
  auto above = doc["time_above"].get_array().value();
  REQUIRE(above.size() == 1);
  CHECK(number(above.at(0).value(), "height_m") == Approx(1000.0));
  CHECK(number(above.at(0).value(), "duration_s") == Approx(600.0).margin(2.0));
  CHECK(std::string(doc["units"]["max_height_m"].get_string().value()) == "m");
}

TEST_CASE("summary --text prints a table with the events", "[analysis][cli]") {
  TempDir d;
  auto r = run_cli({"summary", "--text", d.file("flight.csv", flight_log())});
  REQUIRE(r.status == 0);
  CHECK(r.out.find("launch") != std::string::npos);
  CHECK(r.out.find("burst") != std::string::npos);
  CHECK(r.out.find("landing") != std::string::npos);
  CHECK(r.out.find('{') == std::string::npos);  // not JSON
}

TEST_CASE("summary of a log that ends in flight says so and leaves landing null",
          "[analysis][cli]") {
  TempDir d;
  std::string log = flight_log();
  // Cut the log at 900 s (falling through 1200 m).
  const auto lines = split_lines(log);
  std::string cut;
  for (std::size_t i = 0; i <= 901; ++i) cut += lines[i] + "\n";
  auto r = run_cli({"summary", d.file("cut.csv", cut)});
  REQUIRE(r.status == 0);
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.parse(r.out);
  CHECK(doc["landing_time"].is_null());
  CHECK(doc["landing_elapsed_s"].is_null());
  CHECK(doc["ends_in_flight"].get_bool().value());
  CHECK(doc["notes"].get_array().size() > 0);
}

TEST_CASE("plot writes an SVG with title, desc, viewBox and the caution", "[analysis][cli][plot]") {
  TempDir d;
  auto out = d / "flight.svg";
  auto r = run_cli({"plot", d.file("flight.csv", flight_log()), "-o", out});
  REQUIRE(r.status == 0);
  const std::string svg = read_file(out);
  // Source: W3C SVG 1.1 (namespace, viewBox, title and desc elements);
  // product specification, "Cautions".
  CHECK(svg.find("xmlns=\"http://www.w3.org/2000/svg\"") != std::string::npos);
  CHECK(svg.find("viewBox=") != std::string::npos);
  CHECK(svg.find("<title>") != std::string::npos);
  CHECK(svg.find("<desc>") != std::string::npos);
  CHECK(svg.find("not certified for navigation") != std::string::npos);
  CHECK(svg.find("burst") != std::string::npos);
}

TEST_CASE("height --vspeed adds vspeed_mps and --summary/--plot write their files",
          "[analysis][cli]") {
  TempDir d;
  auto log = d.file("flight.csv", flight_log());
  auto r = run_cli({"height", "--vspeed", "--despike", "--summary", d / "s.json", "--plot",
                    d / "p.svg", log});
  REQUIRE(r.status == 0);
  const auto lines = split_lines(r.out);
  REQUIRE(lines.size() == 1142);
  const auto header = split(lines[0], ',');
  std::size_t v = header.size();
  for (std::size_t i = 0; i < header.size(); ++i)
    if (header[i] == "vspeed_mps") v = i;
  REQUIRE(v < header.size());
  // Mid-climb and mid-fall the fitted speed is the construction's.
  CHECK(std::stod(split(lines[1 + 400], ',')[v]) == Approx(kClimb).margin(0.05));
  CHECK(std::stod(split(lines[1 + 870], ',')[v]) == Approx(-kFall).margin(0.05));
  CHECK(r.out.find("spike") == std::string::npos);  // a clean log has no spikes
  CHECK(read_file(d / "s.json").find("\"burst_elapsed_s\"") != std::string::npos);
  CHECK(read_file(d / "p.svg").find("<svg") != std::string::npos);
}

TEST_CASE("height --despike flags a pressure spike and keeps the row", "[analysis][cli]") {
  TempDir d;
  auto lines = split_lines(flight_log());
  // Row at 400 s (mid-climb, 1700 m): a glitch of -20 hPa (~ +190 m).
  auto fields = split(lines[1 + 400], ',');
  fields[1] = fmt::format("{:.1f}", std::stod(fields[1]) - 2000.0);
  lines[1 + 400] = fields[0] + "," + fields[1];
  std::string log;
  for (const auto& l : lines) log += l + "\n";
  auto r = run_cli({"height", "--despike", d.file("spiky.csv", log)});
  REQUIRE(r.status == 0);
  const auto out = split_lines(r.out);
  REQUIRE(out.size() == 1142);  // nothing dropped
  CHECK(out[1 + 400].find("spike") != std::string::npos);
  std::size_t spikes = 0;
  for (const auto& l : out) spikes += l.find("spike") != std::string::npos;
  CHECK(spikes == 1);
}
