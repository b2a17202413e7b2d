// Flight events (launch, burst or apogee, landing, floats) on synthetic
// flights built here, with the truth known from the construction. The
// series go through the real smoothing stage (smooth_series: spike flags and
// vertical speed) before detect_events, as in the program.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <random>
#include <string>
#include <vector>

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_smoother.hpp"
#include "baroz/core/error.hpp"

using namespace baroz;

namespace {

/// A balloon flight: rest, steady climb, burst, a fall whose speed decays
/// exponentially from fall0 to fall_end (v(s) = fall_end + (fall0 -
/// fall_end) exp(-s / tau), s the time since burst), rest at land_m.
struct Balloon {
  double dt = 2.0;           // sampling interval [s]
  double noise_m = 1.0;      // height noise, 1 sigma [m]
  double rest_s = 600.0;     // pre-launch rest [s]
  double climb_mps = 5.0;
  double top_m = 30000.0;
  double fall0_mps = 40.0;
  double fall_end_mps = 5.0;
  double tau_s = 600.0;
  double land_m = -40.0;
  double post_rest_s = 300.0;
  double float_s = 0.0;        // float at the top before the burst [s]
  double wave_m = 0.0;         // amplitude of a gravity-wave oscillation during the float [m]
  double wave_period_s = 600.0;
  unsigned seed = 1;

  double launch_t() const { return rest_s; }
  double top_t() const { return rest_s + top_m / climb_mps; }
  double burst_t() const { return top_t() + float_s; }
  /// Height fallen s seconds after burst [m] (integral of v).
  double fallen(double s) const {
    return fall_end_mps * s + (fall0_mps - fall_end_mps) * tau_s * (1.0 - std::exp(-s / tau_s));
  }
  /// Seconds after burst to fall to height H (bisection on the monotonic fall).
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
    if (t <= top_t()) return climb_mps * (t - launch_t());
    if (t <= burst_t()) return top_m + wave_m * std::sin(2.0 * std::numbers::pi * (t - top_t()) / wave_period_s);
    if (t <= landing_t()) return top_m - fallen(t - burst_t());
    return land_m;
  }
};

FlightPoint point(double t, double h) {
  FlightPoint p;
  p.time_s = t;
  p.height_m = static_cast<float>(h);
  // A band of +-(2 m + 0.1 % of the height), only so that the band is carried.
  const double half = 2.0 + 0.001 * std::fabs(h);
  p.low_m = static_cast<float>(h - half);
  p.high_m = static_cast<float>(h + half);
  return p;
}

/// Samples the balloon on [t0, t1) at its interval, leaving out [gap0, gap1).
FlightSeries sample(const Balloon& b, double t0, double t1, double gap0 = 0, double gap1 = 0) {
  std::mt19937 rng(b.seed);
  std::normal_distribution<double> noise(0.0, b.noise_m);
  FlightSeries s;
  s.source = "balloon.csv";
  s.model = "profile";
  const auto n = static_cast<long>(std::floor((t1 - t0) / b.dt));
  for (long i = 0; i <= n; ++i) {
    const double t = t0 + static_cast<double>(i) * b.dt;
    const double e = noise(rng);
    if (t >= gap0 && t < gap1) continue;
    s.points.push_back(point(t - t0, b.height(t) + e));
  }
  return s;
}

void smooth(FlightSeries& s) { smooth_series(s, SmoothingOptions{}); }

/// The drone: rest, three climbs with a hover after each, descent, rest.
struct Drone {
  struct Leg {
    double duration_s, rate_mps;
  };
  std::vector<Leg> legs = {{60, 0},  {15, 2}, {150, 0}, {15, 2}, {150, 0},
                           {20, 3},  {150, 0}, {60, -2}, {60, 0}};
  double dt = 0.1, noise_m = 0.2;
  double height(double t) const {
    double h = 0, t0 = 0;
    for (const Leg& l : legs) {
      const double d = std::min(l.duration_s, std::max(0.0, t - t0));
      h += l.rate_mps * d;
      t0 += l.duration_s;
    }
    return h;
  }
  double leg_start(std::size_t i) const {
    double t0 = 0;
    for (std::size_t k = 0; k < i; ++k) t0 += legs[k].duration_s;
    return t0;
  }
  double end_t() const { return leg_start(legs.size()); }
};

FlightSeries sample(const Drone& d) {
  std::mt19937 rng(5);
  std::normal_distribution<double> noise(0.0, d.noise_m);
  FlightSeries s;
  s.source = "drone.ndjson";
  const auto n = static_cast<long>(std::llround(d.end_t() / d.dt));
  for (long i = 0; i <= n; ++i) {
    const double t = static_cast<double>(i) * d.dt;
    s.points.push_back(point(t, d.height(t) + noise(rng)));
  }
  return s;
}

bool has_note(const FlightEvents& ev, const std::string& part) {
  return std::any_of(ev.notes.begin(), ev.notes.end(),
                     [&](const std::string& n) { return n.find(part) != std::string::npos; });
}

}  // namespace

TEST_CASE("balloon with a sharp burst: launch, burst and landing at the constructed times",
          "[analysis]") {
  const Balloon b;
  FlightSeries s = sample(b, 0.0, b.end_t());
  // A payload lifted by hand for 3 s during the rest (+8 m on two rows):
  // a transient, not a launch.
  for (FlightPoint& p : s.points)
    if (p.time_s >= 300.0 && p.time_s < 303.0) p.height_m += 8.0f;
  // A wild row during the ascent, flagged as a spike: it must not be the maximum.
  FlightPoint& wild = s.points[2000];
  smooth(s);
  wild.height_m = 45000.0f;
  wild.flags |= kFlagSpike;
  const FlightEvents ev = detect_events(s, EventOptions{});
  for (auto& n : ev.notes) UNSCOPED_INFO(n);

  REQUIRE(ev.launch);
  REQUIRE(ev.apogee);
  REQUIRE(ev.landing);
  CHECK_FALSE(ev.starts_in_flight);
  CHECK_FALSE(ev.ends_in_flight);
  // tolerance: two sample intervals (4 s): the climb starts between rows
  // and the hinge fit can put the break one row either side.
  CHECK(ev.launch->time_s == Approx(b.launch_t()).margin(2 * b.dt));
  // tolerance: two sample intervals (4 s) in time; 5 m in height, the top
  // row's noise (1 m, at most ~4 sigma for a maximum) plus one row of the
  // climb (5 m/s x 2 s = 10 m, only if the top row were lost).
  CHECK(ev.apogee_kind == ApogeeKind::kBurst);
  CHECK(ev.apogee->time_s == Approx(b.burst_t()).margin(2 * b.dt));
  CHECK(ev.apogee->height_m == Approx(b.top_m).margin(5.0));
  CHECK(ev.apogee->index != 2000);
  // The band of the apogee is the band of its row.
  CHECK(ev.apogee->low_m == s.points[ev.apogee->index].low_m);
  CHECK(ev.apogee->high_m == s.points[ev.apogee->index].high_m);
  // The fall just after burst is 40 m/s by construction, far above the 8 m/s
  // criterion; tolerance 10 %: the 40 s vspeed window at 2 s sampling
  // (21 rows) averages over the decaying fall.
  CHECK(ev.fall_rate_mps == Approx(b.fall0_mps).epsilon(0.10));
  // tolerance: five sample intervals (10 s): touchdown at 5 m/s, the break
  // is found within a few rows.
  CHECK(ev.landing->time_s == Approx(b.landing_t()).margin(5 * b.dt));
  // Rest levels: means of ~30 rows of 1 m noise: within 1 m (about 5 sigma
  // of the mean).
  CHECK(ev.launch_rest_height_m == Approx(0.0).margin(1.0));
  CHECK(ev.landing_rest_height_m == Approx(b.land_m).margin(1.0));
  // The estimated noise: 1 m by construction; tolerance 20 % (MAD of ~4800
  // second differences, the burst corner and the spike row included).
  CHECK(ev.noise_sigma_m == Approx(b.noise_m).epsilon(0.20));
  CHECK(ev.floats.empty());
  CHECK(ev.gap_count == 0);
  CHECK(ev.spike_rows >= 1);
}

TEST_CASE("drone with three climbs and hovers: the global maximum and a float at each hover",
          "[analysis]") {
  const Drone d;
  FlightSeries s = sample(d);
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  for (auto& n : ev.notes) UNSCOPED_INFO(n);
  REQUIRE(ev.launch);
  REQUIRE(ev.landing);
  REQUIRE(ev.apogee);
  // tolerance: 1 s (ten rows): a 2 m/s climb leaves the 0.2 m noise within
  // a fraction of a second, the hinge fit finds the break within a few rows.
  CHECK(ev.launch->time_s == Approx(d.leg_start(1)).margin(1.0));
  CHECK(ev.landing->time_s == Approx(d.leg_start(8)).margin(1.0));
  // The maximum is in the 120 m hover (legs 6), not at an earlier top.
  CHECK(ev.apogee->time_s >= d.leg_start(6));
  CHECK(ev.apogee->time_s <= d.leg_start(7) + 0.5);
  // tolerance: 1 m = 5 sigma of the noise (the maximum of ~1500 noisy rows
  // lies ~3.2 sigma above the level).
  CHECK(ev.apogee->height_m == Approx(120.0).margin(1.0));
  // A 2 m/s descent is no burst.
  CHECK(ev.apogee_kind == ApogeeKind::kApogee);
  REQUIRE(ev.floats.size() == 3);
  const double levels[3] = {30.0, 60.0, 120.0};
  const std::size_t hover_leg[3] = {2, 4, 6};
  for (int i = 0; i < 3; ++i) {
    const FlightSegment& f = ev.floats[static_cast<std::size_t>(i)];
    // tolerance: 0.1 m, the mean of ~1500 rows of 0.2 m noise (sigma of the
    // mean 0.005 m) plus the few climb rows at the ends of the segment.
    CHECK(f.mean_height_m == Approx(levels[i]).margin(0.1));
    // tolerance: 2 s at each end: the 2 s vspeed window (21 rows at 10 Hz)
    // blurs a sharp change of rate over +-1 s.
    CHECK(f.start.time_s == Approx(d.leg_start(hover_leg[i])).margin(2.0));
    CHECK(f.end.time_s == Approx(d.leg_start(hover_leg[i] + 1)).margin(2.0));
  }
}

TEST_CASE("a 120 s gap in a balloon ascent creates no launch, landing or float", "[analysis]") {
  Balloon b;
  b.seed = 2;
  const double gap0 = 2000.0, gap1 = 2120.0;
  FlightSeries s = sample(b, 0.0, b.end_t(), gap0, gap1);
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  for (auto& n : ev.notes) UNSCOPED_INFO(n);
  REQUIRE(ev.launch);
  REQUIRE(ev.landing);
  // Tolerances as for the balloon without a gap (the gap is far from both).
  CHECK(ev.launch->time_s == Approx(b.launch_t()).margin(2 * b.dt));
  CHECK(ev.landing->time_s == Approx(b.landing_t()).margin(5 * b.dt));
  CHECK(ev.apogee->time_s == Approx(b.burst_t()).margin(2 * b.dt));
  CHECK(ev.apogee_kind == ApogeeKind::kBurst);
  CHECK(ev.floats.empty());
  CHECK(ev.gap_count == 1);
  // The interval across the gap: from the last row before it (1998 s) to
  // the first after it (2120 s), exactly by construction.
  CHECK(ev.gap_total_s == Approx(gap1 - (gap0 - b.dt)).margin(1e-9));
  CHECK(has_note(ev, "gap"));
}

TEST_CASE("a log that starts in flight has no launch and says so", "[analysis]") {
  const Balloon b;
  FlightSeries s = sample(b, 1000.0, b.end_t());  // 400 s into the ascent
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  CHECK_FALSE(ev.launch);
  CHECK(ev.starts_in_flight);
  CHECK(has_note(ev, "starts in flight"));
  // The rest of the flight is still found (tolerances as above).
  REQUIRE(ev.apogee);
  CHECK(ev.apogee->time_s + 1000.0 == Approx(b.burst_t()).margin(2 * b.dt));
  REQUIRE(ev.landing);
  CHECK(ev.landing->time_s + 1000.0 == Approx(b.landing_t()).margin(5 * b.dt));
}

TEST_CASE("a log that ends before landing has no landing and says so", "[analysis]") {
  const Balloon b;
  FlightSeries s = sample(b, 0.0, b.burst_t() + 900.0);  // 15 min into the fall
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  CHECK_FALSE(ev.landing);
  CHECK(ev.ends_in_flight);
  CHECK(has_note(ev, "ends in flight"));
  REQUIRE(ev.launch);
  CHECK(ev.launch->time_s == Approx(b.launch_t()).margin(2 * b.dt));
  REQUIRE(ev.apogee);
  CHECK(ev.apogee_kind == ApogeeKind::kBurst);
  CHECK(ev.apogee->time_s == Approx(b.burst_t()).margin(2 * b.dt));
}

TEST_CASE("a float balloon cut down after 30 min at its ceiling: a float ending in a burst",
          "[analysis]") {
  Balloon b;
  b.top_m = 20000.0;
  b.float_s = 1800.0;
  b.wave_m = 20.0;  // +-20 m over 600 s: |vspeed| <= 0.21 m/s, below the 0.5 m/s float speed
  b.fall0_mps = 30.0;
  b.land_m = 0.0;
  FlightSeries s = sample(b, 0.0, b.end_t());
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  for (auto& n : ev.notes) UNSCOPED_INFO(n);
  REQUIRE(ev.apogee);
  CHECK(ev.apogee_kind == ApogeeKind::kBurst);
  REQUIRE(ev.burst);
  // The cut-down is at the end of the float; tolerance: two sample
  // intervals (the hinge fit at the float's end, as for the launch).
  CHECK(ev.burst->time_s == Approx(b.burst_t()).margin(2 * b.dt));
  // The highest row is a crest of the wave, inside the float.
  CHECK(ev.apogee->time_s > b.top_t());
  CHECK(ev.apogee->time_s < b.burst_t());
  // tolerance: 5 m, the row noise at a crest (the wave is flat there).
  CHECK(ev.apogee->height_m == Approx(b.top_m + b.wave_m).margin(5.0));
  REQUIRE(ev.floats.size() == 1);
  // The float found spans the 1800 s float; tolerance 20 s at each end
  // (half the vspeed window: the corners of the climb and the fall).
  CHECK(ev.floats[0].start.time_s == Approx(b.top_t()).margin(20.0));
  CHECK(ev.floats[0].end.time_s == Approx(b.burst_t()).margin(20.0));
  CHECK(ev.floats[0].mean_height_m == Approx(b.top_m).margin(b.wave_m));
  REQUIRE(ev.landing);
  CHECK(ev.landing->time_s == Approx(b.landing_t()).margin(5 * b.dt));
}

TEST_CASE("a slow balloon descent is an apogee, not a burst", "[analysis]") {
  Balloon b;
  b.top_m = 3000.0;
  b.fall0_mps = 4.0;  // a parachute-like descent from the top
  b.fall_end_mps = 4.0;
  b.land_m = 0.0;
  FlightSeries s = sample(b, 0.0, b.end_t());
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  REQUIRE(ev.apogee);
  CHECK(ev.apogee_kind == ApogeeKind::kApogee);
  // The fastest fall near the top is the 4 m/s of the construction;
  // tolerance 1 m/s: vspeed noise of the 40 s fit is ~0.02 m/s, but the
  // mean fall since the top over the first rows carries the top row's
  // noise (<= 4 m over >= 6 s).
  CHECK(ev.fall_rate_mps == Approx(4.0).margin(1.0));
  CHECK(ev.apogee->time_s == Approx(b.burst_t()).margin(2 * b.dt));
}

TEST_CASE("a log at rest throughout has no flight", "[analysis]") {
  Balloon b;
  b.rest_s = 1e9;  // never launches
  FlightSeries s = sample(b, 0.0, 900.0);
  smooth(s);
  const FlightEvents ev = detect_events(s, EventOptions{});
  CHECK_FALSE(ev.launch);
  CHECK_FALSE(ev.landing);
  CHECK_FALSE(ev.starts_in_flight);
  CHECK_FALSE(ev.ends_in_flight);
  CHECK(ev.floats.empty());
  CHECK(has_note(ev, "no flight"));
}

TEST_CASE("rows with NaN heights or repeated times are skipped with a note", "[analysis]") {
  const Balloon b;
  FlightSeries s = sample(b, 0.0, b.end_t());
  smooth(s);
  const FlightEvents clean = detect_events(s, EventOptions{});
  // A NaN height and a repeated time in the ascent.
  FlightPoint nan_row = s.points[1500];
  nan_row.height_m = std::numeric_limits<float>::quiet_NaN();
  FlightPoint repeat = s.points[1600];
  repeat.height_m += 500.0f;
  s.points.insert(s.points.begin() + 1601, repeat);
  s.points.insert(s.points.begin() + 1501, nan_row);
  const FlightEvents ev = detect_events(s, EventOptions{});
  CHECK(ev.usable_rows == clean.usable_rows);
  CHECK(has_note(ev, "2 row(s)"));
  REQUIRE(ev.launch);
  REQUIRE(ev.landing);
  // The same rows are used, so the same events (exactly).
  CHECK(ev.launch->time_s == clean.launch->time_s);
  CHECK(ev.apogee->time_s == clean.apogee->time_s);
  CHECK(ev.landing->time_s == clean.landing->time_s);
}

TEST_CASE("event options outside their range are usage errors", "[analysis]") {
  FlightSeries s;
  EventOptions o;
  o.launch_climb_m = 0.0;
  CHECK_THROWS_AS(detect_events(s, o), Error);
  o = EventOptions{};
  o.gap_s = -1.0;
  CHECK_THROWS_AS(detect_events(s, o), Error);
  // An empty series is not an error: no events, a note.
  const FlightEvents ev = detect_events(s, EventOptions{});
  CHECK_FALSE(ev.apogee);
  CHECK_FALSE(ev.notes.empty());
}
