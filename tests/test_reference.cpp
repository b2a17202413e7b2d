// The reference manager's first part: the stationary pre-launch segment and
// the reference it gives. Synthetic series built in the test.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "baroz/core/error.hpp"
#include "baroz/reference/reference.hpp"

using namespace baroz;

namespace {

constexpr TimeNs kSecond = 1'000'000'000;

// Pressure near the ground of a climb at `rate` m/s, with the rule of thumb
// dp/dz ~ -1/8.3 hPa per m near sea level (common practice, reference-values
// §6: 8.324 m/hPa).
double pressure_at(double t, double launch_t, double rate, double p0) {
  const double z = t > launch_t ? rate * (t - launch_t) : 0.0;
  return p0 - z / 8.324 * 100.0;
}

Sample make(double t, double p) {
  Sample s;
  s.time_ns = static_cast<TimeNs>(std::llround(t * 1e9));
  s.pressure_pa = p;
  s.temperature_k = 288.15;
  return s;
}

}  // namespace

TEST_CASE("auto window: a drone resting 30 s then climbing at 3 m/s", "[reference]") {
  std::mt19937 rng(7);
  std::normal_distribution<double> noise(0.0, 4.0);  // 0.04 hPa, a noisy drone baro
  ReferenceOptions o;
  ReferenceResolver r(o, false, true);
  REQUIRE(r.needs_window());
  bool done = false;
  double t = 0;
  for (; t < 120 && !done; t += 0.1) done = r.feed(make(t, pressure_at(t, 30.0, 3.0, 100240) + noise(rng)));
  REQUIRE(done);
  Reference ref = r.resolve(false, "drone.ndjson");
  REQUIRE(ref.window);
  CHECK(ref.window->launch_found);
  // The window ends at the launch within a second (the climb needs about
  // 0.7 s to leave the 0.25 hPa threshold).
  CHECK(static_cast<double>(ref.window->end_ns) / 1e9 == Approx(30.0).margin(1.0));
  CHECK(static_cast<double>(ref.window->launch_ns) / 1e9 == Approx(30.0).margin(1.0));
  // The mean of ~300 samples of sigma 4 Pa: within 1 Pa of the resting value.
  CHECK(ref.point.pressure_pa == Approx(100240).margin(1.0));
  CHECK(ref.window->noise_sigma_pa == Approx(4.0).margin(1.0));
}

TEST_CASE("auto window: a payload lifted by hand is a transient, not a launch", "[reference]") {
  ReferenceOptions o;
  ReferenceResolver r(o, false, false);
  bool done = false;
  for (double t = 0; t < 200 && !done; t += 1.0) {
    double p = 98800;
    if (t >= 40 && t < 43) p -= 40;                       // lifted 3 m for 3 s
    if (t >= 100) p -= (t - 100) * 5.0 / 8.324 * 100.0;   // launch at 5 m/s
    done = r.feed(make(t, p));
  }
  REQUIRE(done);
  Reference ref = r.resolve(false, "balloon.csv");
  CHECK(static_cast<double>(ref.window->launch_ns) / 1e9 == Approx(101.0).margin(1.01));
  CHECK(ref.window->used == ref.window->samples - 3);  // the lift is left out of the mean
  CHECK(ref.point.pressure_pa == Approx(98800).margin(1e-9));
}

TEST_CASE("auto window: a log that starts in flight is refused", "[reference]") {
  ReferenceOptions o;
  ReferenceResolver r(o, false, false);
  bool done = false;
  for (double t = 0; t < 60 && !done; t += 1.0) done = r.feed(make(t, 90000 - 60.0 * t));
  REQUIRE(done);
  try {
    r.resolve(false, "late.csv");
    FAIL("expected an error");
  } catch (const Error& e) {
    CHECK(e.code() == ExitCode::kInput);
    CHECK(std::string(e.what()).find("seems to start in flight") != std::string::npos);
  }
}

TEST_CASE("auto window: a log at rest throughout is all window", "[reference]") {
  ReferenceOptions o;
  ReferenceResolver r(o, false, false);
  for (double t = 0; t < 50; t += 1.0) REQUIRE_FALSE(r.feed(make(t, 101000 + (t == 25 ? 3 : 0))));
  Reference ref = r.resolve(true, "rest.csv");
  CHECK_FALSE(ref.window->launch_found);
  CHECK(ref.window->samples == 50);
  CHECK(ref.notes.size() == 1);
}

TEST_CASE("a fixed reference window DUR averages the first DUR", "[reference]") {
  ReferenceOptions o;
  o.window_s = 10.0;
  ReferenceResolver r(o, true, true);
  bool done = false;
  std::size_t fed = 0;
  for (double t = 0; !done; t += 1.0, ++fed) {
    Sample s = make(t, 100000 + t);
    s.temperature_k = 280.0 + t;
    done = r.feed(s);
  }
  Reference ref = r.resolve(false, "x.csv");
  CHECK(ref.window->samples == 11);  // t = 0 .. 10 s
  CHECK(ref.point.pressure_pa == Approx(100005.0));
  CHECK(ref.point.temperature_k == Approx(285.0));
  CHECK(ref.temperature_source == "window");
  CHECK(fed == 12);
}

TEST_CASE("reference temperature falls back to 288.15 K with a note", "[reference]") {
  ReferenceOptions o;
  o.kind = ReferenceKind::kPressure;
  o.pressure_pa = 101325;
  ReferenceResolver r(o, true, false);
  CHECK_FALSE(r.needs_window());
  Reference ref = r.resolve(false, "x.csv");
  // Source: USSA76 sea-level temperature T0 = 288.15 K (reference-values §1.1).
  CHECK(ref.point.temperature_k == 288.15);
  CHECK(ref.notes.size() == 1);
}
