// The flight summary and its writers: values against the construction of
// synthetic flights, the pinned JSON keys, units, null + notes for missing
// values, time_above against analytic values, and the text table.
#include <catch2/catch.hpp>

#include <simdjson.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <sstream>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_smoother.hpp"
#include "baroz/analysis/flight_summary.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/output/summary_writer.hpp"

using namespace baroz;

namespace {

/// Balloon: rest, 5 m/s climb to the top, burst, a fall whose speed decays
/// from 40 m/s to 5 m/s (v(s) = 5 + 35 exp(-s / 600 s)), rest at -40 m.
struct Balloon {
  double dt = 2.0, noise_m = 1.0, rest_s = 600.0, climb_mps = 5.0, top_m = 30000.0;
  double fall0_mps = 40.0, fall_end_mps = 5.0, tau_s = 600.0, land_m = -40.0, post_rest_s = 300.0;

  double launch_t() const { return rest_s; }
  double burst_t() const { return rest_s + top_m / climb_mps; }
  double fallen(double s) const {
    return fall_end_mps * s + (fall0_mps - fall_end_mps) * tau_s * (1.0 - std::exp(-s / tau_s));
  }
  /// Seconds after burst to fall to H (bisection; the fall is monotonic).
  double fall_time_to(double H) const {
    double lo = 0.0, hi = 1e6;
    for (int i = 0; i < 200; ++i) {
      const double mid = 0.5 * (lo + hi);
      (top_m - fallen(mid) > H ? lo : hi) = mid;
    }
    return 0.5 * (lo + hi);
  }
  double landing_t() const { return burst_t() + fall_time_to(land_m); }
  double end_t() const { return landing_t() + post_rest_s; }
  double height(double t) const {
    if (t <= launch_t()) return 0.0;
    if (t <= burst_t()) return climb_mps * (t - launch_t());
    if (t <= landing_t()) return top_m - fallen(t - burst_t());
    return land_m;
  }
  /// Analytic time with height > H, for 0 < H < top_m: from the climb's
  /// crossing to the fall's.
  double time_above(double H) const {
    return (burst_t() + fall_time_to(H)) - (launch_t() + H / climb_mps);
  }
};

constexpr TimeNs kStart = 1781427600LL * 1'000'000'000LL;  // 2026-06-14T09:00:00Z

FlightPoint point(double t, double h) {
  FlightPoint p;
  p.time_s = t;
  p.height_m = static_cast<float>(h);
  p.low_m = static_cast<float>(h - 3.0);
  p.high_m = static_cast<float>(h + 3.0);
  return p;
}

FlightSeries balloon_series(const Balloon& b, double t0, double t1, double gap0 = 0,
                            double gap1 = 0) {
  std::mt19937 rng(11);
  std::normal_distribution<double> noise(0.0, b.noise_m);
  FlightSeries s;
  s.source = "balloon.csv";
  s.model = "profile";
  s.absolute_time = true;
  s.start_time_ns = kStart + static_cast<TimeNs>(std::llround(t0 * 1e9));
  const auto n = static_cast<long>(std::floor((t1 - t0) / b.dt));
  for (long i = 0; i <= n; ++i) {
    const double t = t0 + static_cast<double>(i) * b.dt;
    const double e = noise(rng);
    if (t >= gap0 && t < gap1) continue;
    s.points.push_back(point(t - t0, b.height(t) + e));
  }
  smooth_series(s, SmoothingOptions{});
  return s;
}

/// A drone, noise-free and piecewise linear at 10 Hz: rest 60 s, 2 m/s to
/// 30 m, hover 150 s, 3 m/s to 120 m, hover 150 s, 2 m/s down, rest 60 s.
FlightSeries drone_series() {
  struct Leg {
    double d, v;
  };
  const Leg legs[] = {{60, 0}, {15, 2}, {150, 0}, {30, 3}, {150, 0}, {60, -2}, {60, 0}};
  FlightSeries s;
  s.source = "drone.ndjson";
  s.model = "standard";
  s.start_time_ns = 5'000'000'000LL;  // a relative log clock starting at 5 s
  double t = 0, h = 0;
  for (const Leg& l : legs) {
    for (int i = 0; i < static_cast<int>(std::lround(l.d * 10)); ++i) {
      s.points.push_back(point(t, h));
      t += 0.1;
      h += l.v * 0.1;
    }
  }
  s.points.push_back(point(t, h));
  smooth_series(s, SmoothingOptions{});
  return s;
}

simdjson::dom::element parse(simdjson::dom::parser& parser, const std::string& json) {
  simdjson::dom::element root;
  INFO(json);
  REQUIRE(parser.parse(json).get(root) == simdjson::SUCCESS);
  return root;
}

bool has_key(simdjson::dom::object o, std::string_view k) {
  simdjson::dom::element e;
  return o[k].get(e) == simdjson::SUCCESS;
}

bool is_null(simdjson::dom::object o, std::string_view k) {
  simdjson::dom::element e;
  return o[k].get(e) == simdjson::SUCCESS && e.is_null();
}

double num(simdjson::dom::object o, std::string_view k) {
  double v = 0;
  INFO(k);
  REQUIRE(o[k].get_double().get(v) == simdjson::SUCCESS);
  return v;
}

std::string str(simdjson::dom::object o, std::string_view k) {
  std::string_view v;
  INFO(k);
  REQUIRE(o[k].get_string().get(v) == simdjson::SUCCESS);
  return std::string(v);
}

bool any_note(simdjson::dom::object o, std::string_view part) {
  simdjson::dom::array notes;
  REQUIRE(o["notes"].get_array().get(notes) == simdjson::SUCCESS);
  for (simdjson::dom::element n : notes) {
    std::string_view s;
    REQUIRE(n.get_string().get(s) == simdjson::SUCCESS);
    if (s.find(part) != std::string_view::npos) return true;
  }
  return false;
}

/// Every numeric member of `o` has a unit in `units` (checked by name).
void check_units(simdjson::dom::object o, simdjson::dom::object units) {
  for (auto [key, value] : o) {
    if (value.is_number()) {
      INFO("numeric key without a unit: " << key);
      CHECK(has_key(units, key));
    }
  }
}

/// Seconds between an RFC 3339 string of the summary and kStart.
double since_start(const std::string& text) {
  const auto t = parse_rfc3339(text, 0);
  REQUIRE(t);
  return static_cast<double>(*t - kStart) / 1e9;
}

const char* const kPinnedKeys[] = {
    "launch_time",      "launch_elapsed_s",     "burst_time",           "burst_elapsed_s",
    "apogee_time",      "apogee_elapsed_s",     "landing_time",         "landing_elapsed_s",
    "max_height_m",     "max_height_low_m",     "max_height_high_m",    "mean_ascent_rate_mps",
    "mean_descent_rate_mps", "duration_s",      "notes"};

}  // namespace

TEST_CASE("balloon summary: pinned keys, values against the construction, units", "[analysis]") {
  const Balloon b;
  const FlightSeries s = balloon_series(b, 0.0, b.end_t());
  const FlightEvents ev = detect_events(s, EventOptions{});
  SummaryOptions so;
  so.above_m = {10000.0, 25000.0};
  const FlightSummary sum = summarize_flight(s, ev, so);
  const std::string json = summary_json(s, ev, sum);
  simdjson::dom::parser parser;
  simdjson::dom::object o;
  REQUIRE(parse(parser, json).get_object().get(o) == simdjson::SUCCESS);

  for (const char* k : kPinnedKeys) {
    INFO(k);
    CHECK(has_key(o, k));
  }
  CHECK(str(o, "apogee_kind") == "burst");
  CHECK(str(o, "time_basis") == "utc");
  // Times: RFC 3339 UTC; tolerance two sample intervals (events), plus 1 ms
  // for the millisecond formatting.
  CHECK(since_start(str(o, "launch_time")) == Approx(b.launch_t()).margin(2 * b.dt + 1e-3));
  CHECK(str(o, "burst_time") == str(o, "apogee_time"));
  CHECK(since_start(str(o, "burst_time")) == Approx(b.burst_t()).margin(2 * b.dt + 1e-3));
  CHECK(since_start(str(o, "landing_time")) == Approx(b.landing_t()).margin(5 * b.dt + 1e-3));
  CHECK(str(o, "launch_time").back() == 'Z');
  // The elapsed values are the events' times (rounded to 1 ms).
  CHECK(num(o, "launch_elapsed_s") == Approx(ev.launch->time_s).margin(1e-3));
  CHECK(num(o, "burst_elapsed_s") == num(o, "apogee_elapsed_s"));
  // The log spans its first to its last row, exactly by construction.
  CHECK(num(o, "duration_s") == Approx(s.points.back().time_s).margin(1e-3));
  // Mean ascent: 30000 m in 6000 s; the launch and burst times are each
  // within 4 s, the heights within 5 m: tolerance 0.01 m/s.
  CHECK(num(o, "mean_ascent_rate_mps") == Approx(b.climb_mps).margin(0.01));
  // Mean descent: (30000 + 40) m over the fall time (~1966 s); tolerance
  // from the 10 s landing and 4 s burst tolerances: rate * 14 s / fall time.
  const double fall_s = b.landing_t() - b.burst_t();
  const double descent = (b.top_m - b.land_m) / fall_s;
  CHECK(num(o, "mean_descent_rate_mps") == Approx(descent).margin(descent * 14.0 / fall_s));
  CHECK(num(o, "mean_descent_rate_mps") > 0.0);  // descent rates are positive
  // Maximum rates from vspeed: 5 m/s up; 40 m/s down just after burst.
  // tolerance: 0.2 m/s up (vspeed noise of the 40 s fit at 2 s, 1 m noise,
  // ~0.03 m/s, the maximum of ~3000 rows ~4 sigma); 10 % down (the 40 s
  // window averages the decaying fall, as in test_events).
  CHECK(num(o, "max_ascent_rate_mps") == Approx(b.climb_mps).margin(0.2));
  CHECK(num(o, "max_descent_rate_mps") == Approx(b.fall0_mps).epsilon(0.10));
  // Max height and band: the apogee row's (band +-3 m by construction).
  CHECK(num(o, "max_height_m") == Approx(b.top_m).margin(5.0));
  CHECK(num(o, "max_height_high_m") - num(o, "max_height_m") == Approx(3.0).margin(0.01));
  CHECK(num(o, "max_height_m") - num(o, "max_height_low_m") == Approx(3.0).margin(0.01));
  // Rest levels: 0 and -40 m by construction, tolerance 1 m (means of >= 15
  // rows of 1 m noise).
  CHECK(num(o, "launch_height_m") == Approx(0.0).margin(1.0));
  CHECK(num(o, "landing_height_m") == Approx(b.land_m).margin(1.0));
  CHECK(num(o, "flight_duration_s") == Approx(b.landing_t() - b.launch_t()).margin(7 * b.dt));
  CHECK(is_null(o, "elevation_m"));  // not given for this series

  // time_above against the analytic crossings; tolerance two sample
  // intervals (each crossing is interpolated between two noisy rows).
  simdjson::dom::array above;
  REQUIRE(o["time_above"].get_array().get(above) == simdjson::SUCCESS);
  REQUIRE(above.size() == 2);
  std::size_t i = 0;
  for (simdjson::dom::element e : above) {
    simdjson::dom::object a;
    REQUIRE(e.get_object().get(a) == simdjson::SUCCESS);
    const double H = so.above_m[i++];
    CHECK(num(a, "height_m") == H);
    CHECK(num(a, "duration_s") == Approx(b.time_above(H)).margin(2 * b.dt));
  }

  // Units (UDUNITS strings) for every numeric key, at the top and nested.
  simdjson::dom::object units, names;
  REQUIRE(o["units"].get_object().get(units) == simdjson::SUCCESS);
  REQUIRE(o["standard_names"].get_object().get(names) == simdjson::SUCCESS);
  check_units(o, units);
  for (const char* arr : {"floats", "time_above", "phases"}) {
    simdjson::dom::array a;
    REQUIRE(o[arr].get_array().get(a) == simdjson::SUCCESS);
    for (simdjson::dom::element e : a) check_units(e.get_object().value(), units);
  }
  check_units(o["detection"].get_object().value(), units);
  CHECK(str(units, "max_height_m") == "m");
  CHECK(str(units, "mean_ascent_rate_mps") == "m s-1");
  CHECK(str(units, "duration_s") == "s");
  // CF standard name of a height above the reference (CF Standard Name Table).
  CHECK(str(names, "max_height_m") == "height");
  CHECK(str(names, "launch_height_m") == "height");

  // Phases in order, bounded by the events.
  simdjson::dom::array phases;
  REQUIRE(o["phases"].get_array().get(phases) == simdjson::SUCCESS);
  std::vector<std::string> phase_names;
  for (simdjson::dom::element e : phases) phase_names.push_back(str(e.get_object().value(), "name"));
  CHECK(phase_names == std::vector<std::string>{"pre_launch", "ascent", "descent", "post_landing"});
}

TEST_CASE("summary of a log that ends before landing: nulls with notes", "[analysis]") {
  const Balloon b;
  const FlightSeries s = balloon_series(b, 0.0, b.burst_t() + 900.0);
  const FlightEvents ev = detect_events(s, EventOptions{});
  const FlightSummary sum = summarize_flight(s, ev, SummaryOptions{});
  simdjson::dom::parser parser;
  simdjson::dom::object o;
  REQUIRE(parse(parser, summary_json(s, ev, sum)).get_object().get(o) == simdjson::SUCCESS);
  for (const char* k : {"landing_time", "landing_elapsed_s", "landing_height_m",
                        "mean_descent_rate_mps", "flight_duration_s"}) {
    INFO(k);
    CHECK(is_null(o, k));
  }
  CHECK(any_note(o, "landing_time"));
  CHECK(any_note(o, "ends in flight"));
  bool ends = false;
  REQUIRE(o["ends_in_flight"].get_bool().get(ends) == simdjson::SUCCESS);
  CHECK(ends);
  // What exists is still there.
  CHECK_FALSE(is_null(o, "launch_time"));
  CHECK_FALSE(is_null(o, "burst_time"));
  CHECK(num(o, "mean_ascent_rate_mps") == Approx(b.climb_mps).margin(0.01));
}

TEST_CASE("summary of a log that starts in flight on a relative clock", "[analysis]") {
  const Balloon b;
  FlightSeries s = balloon_series(b, 1000.0, b.end_t());
  s.absolute_time = false;
  s.start_time_ns = 1000'000'000'000LL;  // the log's clock reads 1000 s at its first row
  const FlightEvents ev = detect_events(s, EventOptions{});
  const FlightSummary sum = summarize_flight(s, ev, SummaryOptions{});
  simdjson::dom::parser parser;
  simdjson::dom::object o;
  REQUIRE(parse(parser, summary_json(s, ev, sum)).get_object().get(o) == simdjson::SUCCESS);
  CHECK(is_null(o, "launch_time"));
  CHECK(is_null(o, "launch_elapsed_s"));
  CHECK(is_null(o, "mean_ascent_rate_mps"));
  CHECK(any_note(o, "launch_time"));
  CHECK(any_note(o, "starts in flight"));
  CHECK(str(o, "time_basis") == "log_clock");
  // Times are numbers on the log's clock: start_time_ns / 1e9 + elapsed.
  CHECK(num(o, "burst_time") == Approx(1000.0 + num(o, "burst_elapsed_s")).margin(1e-3));
  CHECK(num(o, "burst_time") == Approx(b.burst_t()).margin(2 * b.dt));
  simdjson::dom::object units;
  REQUIRE(o["units"].get_object().get(units) == simdjson::SUCCESS);
  CHECK(str(units, "burst_time") == "s");
  check_units(o, units);
}

TEST_CASE("drone summary: an apogee, no burst time, floats with durations", "[analysis]") {
  const FlightSeries s = drone_series();
  const FlightEvents ev = detect_events(s, EventOptions{});
  SummaryOptions so;
  so.above_m = {60.0};
  const FlightSummary sum = summarize_flight(s, ev, so);
  simdjson::dom::parser parser;
  simdjson::dom::object o;
  REQUIRE(parse(parser, summary_json(s, ev, sum)).get_object().get(o) == simdjson::SUCCESS);
  CHECK(str(o, "apogee_kind") == "apogee");
  CHECK(is_null(o, "burst_time"));
  CHECK(is_null(o, "burst_elapsed_s"));
  CHECK(any_note(o, "burst_time"));
  // Noise-free: the maximum is exactly the 120 m hover (float rounding of
  // the construction, 1e-3 m).
  CHECK(num(o, "max_height_m") == Approx(120.0).margin(1e-3));
  simdjson::dom::array floats;
  REQUIRE(o["floats"].get_array().get(floats) == simdjson::SUCCESS);
  REQUIRE(floats.size() == 2);
  for (simdjson::dom::element e : floats) {
    simdjson::dom::object f = e.get_object().value();
    // Each hover is 150 s; tolerance 2 s at each end (the 2 s vspeed window).
    CHECK(num(f, "duration_s") == Approx(150.0).margin(4.0));
    CHECK(num(f, "duration_s") == Approx(num(f, "end_elapsed_s") - num(f, "start_elapsed_s")).margin(2e-3));
  }
  // Time above 60 m, exact for a piecewise-linear path sampled at its
  // corners: the 3 m/s climb crosses 60 m 10 s after its start (235 s), the
  // 2 m/s descent 30 s after its start (435 s): 20 + 150 + 30 = 200 s;
  // tolerance 1e-3 s (heights stored as float).
  simdjson::dom::array above;
  REQUIRE(o["time_above"].get_array().get(above) == simdjson::SUCCESS);
  CHECK(num(above.at(0).get_object().value(), "duration_s") == Approx(200.0).margin(1e-3));
  // The apogee is the first row of the exact 120 m hover (255 s; tolerance
  // one row, 0.1 s); launch at 60 s and landing at 465 s (tolerance 1 s as
  // in test_events). Mean rates by their definition: 120 m over launch ->
  // apogee, and over apogee -> landing (the top hover included).
  CHECK(num(o, "apogee_elapsed_s") == Approx(255.0).margin(0.1));
  CHECK(num(o, "launch_elapsed_s") == Approx(60.0).margin(1.0));
  CHECK(num(o, "landing_elapsed_s") == Approx(465.0).margin(1.0));
  CHECK(num(o, "mean_ascent_rate_mps") ==
        Approx(120.0 / (num(o, "apogee_elapsed_s") - num(o, "launch_elapsed_s"))).epsilon(1e-3));
  CHECK(num(o, "mean_descent_rate_mps") ==
        Approx(120.0 / (num(o, "landing_elapsed_s") - num(o, "apogee_elapsed_s"))).epsilon(1e-3));
}

TEST_CASE("time_above: exact on a triangle, gaps not counted", "[analysis]") {
  // 0 -> 100 m in 100 s -> 0 in 100 s, rows every 10 s: the interpolated
  // path is the path, time above 50 m is 100 s, above 90 m 20 s, above
  // -1 m the whole 200 s, above 100 m nothing.
  FlightSeries s;
  for (int i = 0; i <= 20; ++i) {
    const double t = 10.0 * i;
    s.points.push_back(point(t, t <= 100 ? t : 200 - t));
  }
  FlightEvents ev;  // no events needed for time_above
  ev.gap_s = 15.0;
  SummaryOptions so;
  so.above_m = {50.0, 90.0, -1.0, 100.0};
  FlightSummary sum = summarize_flight(s, ev, so);
  REQUIRE(sum.time_above.size() == 4);
  // tolerance: 1e-9 s, exact arithmetic on small integers
  CHECK(sum.time_above[0].duration_s == Approx(100.0).margin(1e-9));
  CHECK(sum.time_above[1].duration_s == Approx(20.0).margin(1e-9));
  CHECK(sum.time_above[2].duration_s == Approx(200.0).margin(1e-9));
  CHECK(sum.time_above[3].duration_s == Approx(0.0).margin(1e-9));
  // Remove the rows at 110 and 120 s: the interval 100 -> 130 s (30 s) is
  // longer than the 15 s gap threshold and not counted: above 50 m, the
  // 30 s from 100 s to 130 s are lost.
  s.points.erase(s.points.begin() + 11, s.points.begin() + 13);
  sum = summarize_flight(s, ev, so);
  CHECK(sum.time_above[0].duration_s == Approx(70.0).margin(1e-9));
  so.above_m = {std::nan("")};
  CHECK_THROWS_AS(summarize_flight(s, ev, so), Error);
}

TEST_CASE("balloon with a 120 s gap in the ascent: time above skips the gap", "[analysis]") {
  const Balloon b;
  const double gap0 = 2000.0, gap1 = 2120.0;  // heights 7000 .. 7600 m
  const FlightSeries s = balloon_series(b, 0.0, b.end_t(), gap0, gap1);
  const FlightEvents ev = detect_events(s, EventOptions{});
  SummaryOptions so;
  so.above_m = {7300.0};
  const FlightSummary sum = summarize_flight(s, ev, so);
  // The climb crosses 7300 m at 2060 s, inside the gap; the counted time
  // starts at the first row after it (2120 s): 60 s less than the truth.
  // tolerance: two sample intervals.
  CHECK(sum.time_above[0].duration_s == Approx(b.time_above(7300.0) - 60.0).margin(2 * b.dt));
  CHECK(std::any_of(sum.notes.begin(), sum.notes.end(), [](const std::string& n) {
    return n.find("time_above") != std::string::npos;
  }));
}

TEST_CASE("summary text: an ASCII table with the events aligned", "[analysis]") {
  const Balloon b;
  FlightSeries s = balloon_series(b, 0.0, b.end_t());
  s.source = "ballon-\xC3\xA9t\xC3\xA9.csv";  // non-ASCII name
  const FlightEvents ev = detect_events(s, EventOptions{});
  SummaryOptions so;
  so.above_m = {10000.0};
  const FlightSummary sum = summarize_flight(s, ev, so);
  const std::string text = summary_text(s, ev, sum);
  INFO(text);
  CHECK(std::all_of(text.begin(), text.end(), [](char c) {
    const auto u = static_cast<unsigned char>(c);
    return u == '\n' || (u >= 0x20 && u < 0x7f);
  }));
  CHECK(text.find("burst") != std::string::npos);
  // The launch time as RFC 3339 (the formatting itself is tested in test_time).
  CHECK(text.find(format_rfc3339_utc(s.start_time_ns + std::llround(ev.launch->time_s * 1e9))) !=
        std::string::npos);
  CHECK(text.find("2026-06-14T09:") != std::string::npos);
  CHECK(text.back() == '\n');
  // The five lines of the events table (header, launch, apogee, burst,
  // landing) have the same length: columns are padded.
  std::istringstream in(text);
  std::string line;
  std::vector<std::size_t> lengths;
  bool in_events = false;
  while (std::getline(in, line)) {
    if (line == "events") {
      in_events = true;
      continue;
    }
    if (in_events && line.rfind("  ", 0) != 0) break;
    if (in_events) lengths.push_back(line.size());
  }
  REQUIRE(lengths.size() == 5);
  CHECK(std::all_of(lengths.begin(), lengths.end(), [&](std::size_t n) { return n == lengths[0]; }));
}

TEST_CASE("summary of an empty series: nulls and a note, valid JSON", "[analysis]") {
  FlightSeries s;
  s.source = "empty.csv";
  const FlightEvents ev = detect_events(s, EventOptions{});
  const FlightSummary sum = summarize_flight(s, ev, SummaryOptions{});
  simdjson::dom::parser parser;
  simdjson::dom::object o;
  REQUIRE(parse(parser, summary_json(s, ev, sum)).get_object().get(o) == simdjson::SUCCESS);
  for (const char* k : kPinnedKeys) {
    INFO(k);
    CHECK(has_key(o, k));
  }
  CHECK(is_null(o, "max_height_m"));
  CHECK(is_null(o, "apogee_time"));
  CHECK(is_null(o, "duration_s"));
  CHECK_FALSE(sum.notes.empty());
  CHECK_FALSE(summary_text(s, ev, sum).empty());
}
