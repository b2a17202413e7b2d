// The reference manager's base-station, clock-offset, landing, track,
// checkpoint and GNSS pieces at library level, on synthetic series built in
// the test (fixed seeds, hand-written normal deviates so that the numbers do
// not depend on the standard library's distributions).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <memory>
#include <random>
#include <span>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/models/isothermal_model.hpp"
#include "baroz/reference/base_series.hpp"
#include "baroz/reference/checkpoint_fit.hpp"
#include "baroz/reference/clock_offset.hpp"
#include "baroz/reference/gnss_fit.hpp"
#include "baroz/reference/landing_detector.hpp"
#include "baroz/reference/reference_track.hpp"

using namespace baroz;

namespace {

constexpr TimeNs kSecond = 1'000'000'000;
constexpr double kPi = 3.14159265358979323846;

TimeNs ns(double seconds) {
  return static_cast<TimeNs>(std::llround(seconds * 1e9));
}

// Constants written out here, not taken from baroz. Source: U.S. Standard
// Atmosphere 1976, Table 2 (reference-values.md section 1.1): R* = 8.31432
// J/(mol K), M0 = 28.9644 g/mol, g0 = 9.80665 m/s^2, r0 = 6356766 m.
constexpr double kR = 8.31432 / 0.0289644;  // J/(kg K)
constexpr double kG0 = 9.80665;
constexpr double kR0 = 6356766.0;

/// Standard normal deviates: Box-Muller on 53-bit uniforms from
/// std::mt19937_64 (whose output sequence the C++ standard fixes), so the
/// series are the same with every standard library.
class Gauss {
 public:
  explicit Gauss(std::uint64_t seed) : rng_(seed) {}
  double operator()() {
    if (have_spare_) {
      have_spare_ = false;
      return spare_;
    }
    // u1 in (0, 1], u2 in [0, 1).
    const double u1 = (static_cast<double>(rng_() >> 11) + 1.0) * 0x1p-53;
    const double u2 = static_cast<double>(rng_() >> 11) * 0x1p-53;
    const double r = std::sqrt(-2.0 * std::log(u1));
    spare_ = r * std::sin(2.0 * kPi * u2);
    have_spare_ = true;
    return r * std::cos(2.0 * kPi * u2);
  }

 private:
  std::mt19937_64 rng_;
  double spare_ = 0.0;
  bool have_spare_ = false;
};

}  // namespace

// ---------------------------------------------------------------- BaseSeries

TEST_CASE("base series: linear interpolation is exact for a linear series", "[reference][base]") {
  // p = 100000 Pa + 0.5 Pa/s t, T = 280 K + 0.01 K/s t, a sample every 10 s.
  std::vector<BaseSample> s;
  for (int i = 0; i <= 10; ++i) {
    const double t = 10.0 * i;
    s.push_back({ns(t), 100000.0 + 0.5 * t, 280.0 + 0.01 * t});
  }
  const BaseSeries base(s);
  CHECK(base.interval_s() == Approx(10.0).margin(1e-12));  // by construction
  for (double t : {0.0, 0.001, 3.3, 33.3, 47.25, 99.999, 100.0}) {
    const BaseValue v = base.at(ns(t));
    CHECK(v.inside);
    // Linear interpolation of a straight line is the line (to rounding).
    CHECK(v.pressure_pa == Approx(100000.0 + 0.5 * t).margin(1e-9));
    CHECK(v.temperature_k == Approx(280.0 + 0.01 * t).margin(1e-12));
    CHECK(v.outside_s == 0.0);
  }
  // The mean temperature of the samples: 280 + 0.01 * 50 (by construction).
  CHECK(base.mean_temperature_k() == Approx(280.5).margin(1e-12));
}

TEST_CASE("base series: at a sample time it returns the sample", "[reference][base]") {
  // Values that no straight line joins, so interpolation would show.
  const std::vector<BaseSample> s = {{ns(0), 101000.0, 290.0},
                                     {ns(7), 101013.0, 291.5},
                                     {ns(9), 100990.0, kMissing},
                                     {ns(20), 101002.0, 289.0}};
  const BaseSeries base(s);
  for (const BaseSample& x : s) {
    const BaseValue v = base.at(x.time_ns);
    CHECK(v.inside);
    CHECK(v.pressure_pa == x.pressure_pa);  // exact: the sample itself
  }
  CHECK(base.at(ns(7)).temperature_k == 291.5);
  // The median interval of {7, 2, 11} s is 7 s (by hand).
  CHECK(base.interval_s() == Approx(7.0).margin(1e-12));
}

TEST_CASE("base series: outside the span it holds the nearest end", "[reference][base]") {
  const BaseSeries base(
      {{ns(100), 100500.0, 285.0}, {ns(110), 100510.0, 285.5}, {ns(120), 100530.0, 286.0}});
  const BaseValue before = base.at(ns(95));
  CHECK_FALSE(before.inside);
  CHECK(before.pressure_pa == 100500.0);  // the first sample, held
  CHECK(before.temperature_k == 285.0);
  CHECK(before.outside_s == Approx(5.0).margin(1e-9));  // 100 - 95 s
  const BaseValue after = base.at(ns(127.5));
  CHECK_FALSE(after.inside);
  CHECK(after.pressure_pa == 100530.0);                // the last sample, held
  CHECK(after.outside_s == Approx(7.5).margin(1e-9));  // 127.5 - 120 s
  const BaseValue far = base.at(ns(-3600));
  CHECK_FALSE(far.inside);
  CHECK(far.outside_s == Approx(3700.0).margin(1e-9));  // 100 - (-3600) s
}

TEST_CASE("base series: unsorted input is sorted and fewer than two samples throw",
          "[reference][base]") {
  const BaseSeries base({{ns(30), 100030.0, kMissing},
                         {ns(10), 100010.0, kMissing},
                         {ns(40), 100040.0, kMissing},
                         {ns(0), 100000.0, kMissing},
                         {ns(20), 100020.0, kMissing}});
  const auto s = base.samples();
  REQUIRE(s.size() == 5);
  for (std::size_t i = 0; i < s.size(); ++i) {
    CHECK(s[i].time_ns == ns(10.0 * static_cast<double>(i)));
    CHECK(s[i].pressure_pa == 100000.0 + 10.0 * static_cast<double>(i));
  }
  CHECK(base.first_ns() == 0);
  CHECK(base.last_ns() == 40 * kSecond);
  // p = 100000 + t (by construction): 100025 at 25 s.
  CHECK(base.at(ns(25)).pressure_pa == Approx(100025.0).margin(1e-9));
  CHECK(std::isnan(base.mean_temperature_k()));  // no temperature at all

  try {
    BaseSeries one({{0, 100000.0, kMissing}});
    FAIL("expected an error");
  } catch (const Error& e) {
    CHECK(e.code() == ExitCode::kInput);
  }
}

// -------------------------------------------------------------- clock offset

namespace {

/// Synthetic weather [Pa] at flight time t [s]: a slow fall of 0.02 Pa/s and
/// four micro-barometric waves of 5-8 Pa with periods of 83-297 s (the kind
/// of common fluctuation the estimator aligns; docs/reference.md).
double weather_pa(double t, bool waves = true) {
  double p = 100500.0 - 0.02 * t;
  if (waves)
    p += 8.0 * std::sin(2.0 * kPi * t / 83.0 + 0.3) + 6.0 * std::sin(2.0 * kPi * t / 151.0 + 1.1) +
         5.0 * std::sin(2.0 * kPi * t / 233.0 + 2.0) + 7.0 * std::sin(2.0 * kPi * t / 297.0 + 0.7);
  return p;
}

struct OffsetScene {
  std::vector<RestSample> pre, post;
  std::unique_ptr<BaseSeries> base;
  std::vector<std::span<const RestSample>> segments() const {
    return {std::span<const RestSample>(pre), std::span<const RestSample>(post)};
  }
};

/// A base every 2 s on its own clock (base time = flight time - S, so that
/// adding S to the base's times puts them on the flight clock), sensor offset
/// +20 Pa, noise 1 Pa; a flight sensor at 1 Hz, offset -15 Pa (-11 Pa after
/// the landing), noise 1.5 Pa, resting 0-180 s and 2580-2760 s (40 min later).
OffsetScene offset_scene(double true_offset_s, bool waves, double base_from_s, double base_to_s,
                         std::uint64_t seed) {
  Gauss g(seed);
  OffsetScene sc;
  for (int t = 0; t <= 180; ++t) sc.pre.push_back({ns(t), weather_pa(t, waves) - 15.0 + 1.5 * g()});
  for (int t = 2580; t <= 2760; ++t)
    sc.post.push_back({ns(t), weather_pa(t, waves) - 11.0 + 1.5 * g()});
  std::vector<BaseSample> b;
  for (double tb = base_from_s; tb <= base_to_s; tb += 2.0)
    b.push_back({ns(tb), weather_pa(tb + true_offset_s, waves) + 20.0 + 1.0 * g(), kMissing});
  sc.base = std::make_unique<BaseSeries>(std::move(b));
  return sc;
}

}  // namespace

TEST_CASE("clock offset: recovered from common micro-barometric waves", "[reference][clock]") {
  const double truth = 37.3;  // s, chosen for the test
  const OffsetScene sc = offset_scene(truth, true, -700.0, 3500.0, 20261014);
  const auto segs = sc.segments();
  const ClockOffsetEstimate est = estimate_clock_offset(segs, *sc.base, 1.0);
  INFO("why: " << est.why << "; offset " << est.offset_s << " s, sigma " << est.sigma_s);
  REQUIRE(est.ok);
  CHECK(est.segments == 2);
  CHECK(est.samples == 362);  // 181 + 181 resting samples (by construction)
  // Within 3 sigma of the truth (common practice for a 1-sigma estimate).
  CHECK(std::fabs(est.offset_s - truth) <= 3.0 * est.sigma_s);
  // Expected sigma by hand: noise ~1.8 Pa (1.5 and 1 Pa in quadrature),
  // rms slope of the waves ~0.35 Pa/s, 362 samples: 1.8 / (0.35 sqrt(362))
  // ~ 0.3 s; "below a few seconds" is the brief's bound.
  CHECK(est.sigma_s > 0.0);
  CHECK(est.sigma_s < 2.0);
  CHECK(std::fabs(est.offset_s - truth) < 2.0);
  // Residual rms ~ the noise: sqrt(1.5^2 + ~0.7 (interpolated 1 Pa noise))
  // ~ 1.7 Pa (by hand); well below the 5-8 Pa waves.
  CHECK(est.rms_pa > 1.0);
  CHECK(est.rms_pa < 2.5);
  // The offsets searched: every resting sample inside the base's span
  // (by hand: 2760 - 3500 = -740 s to 0 - (-700) = +700 s).
  CHECK(est.range_low_s == Approx(-740.0).margin(1e-6));
  CHECK(est.range_high_s == Approx(700.0).margin(1e-6));
}

TEST_CASE("clock offset: the sum of squares is smallest near the truth", "[reference][clock]") {
  const double truth = 37.3;
  const OffsetScene sc = offset_scene(truth, true, -700.0, 3500.0, 20261014);
  const auto segs = sc.segments();
  const double at_truth = clock_offset_sse(segs, *sc.base, 1.0, truth);
  REQUIRE(std::isfinite(at_truth));
  // Noise only at the truth: ~362 x 1.7^2 ~ 1000 Pa^2 (by hand); any offset
  // off by 5 s or more misaligns the waves (slope ~0.35 Pa/s -> ~1.8 Pa per
  // sample at 5 s: the sum at least doubles).
  for (double d : {-300.0, -30.0, -10.0, -5.0, 5.0, 10.0, 30.0, 300.0})
    CHECK(clock_offset_sse(segs, *sc.base, 1.0, truth + d) > 1.5 * at_truth);
  CHECK(clock_offset_sse(segs, *sc.base, 1.0, 0.0) > 5.0 * at_truth);
  // Its minimum on a 0.5 s grid over all allowed offsets lies within 2 s.
  double best_s = 0.0, best = INFINITY;
  for (double s = -740.0; s <= 700.0; s += 0.5) {
    const double v = clock_offset_sse(segs, *sc.base, 1.0, s);
    if (v < best) {
      best = v;
      best_s = s;
    }
  }
  CHECK(std::fabs(best_s - truth) <= 2.0);
  // Outside the base for some sample: NaN (documented).
  CHECK(std::isnan(clock_offset_sse(segs, *sc.base, 1.0, 800.0)));
}

TEST_CASE("clock offset: refused without common fluctuations", "[reference][clock]") {
  // A pure linear drift plus noise: the residuals about each segment's mean
  // do not depend on the offset, so there is nothing to align.
  const OffsetScene sc = offset_scene(37.3, false, -700.0, 3500.0, 77);
  const auto segs = sc.segments();
  const ClockOffsetEstimate est = estimate_clock_offset(segs, *sc.base, 1.0);
  INFO("offset " << est.offset_s << " s, sigma " << est.sigma_s);
  CHECK_FALSE(est.ok);
  CHECK_FALSE(est.why.empty());
}

TEST_CASE("clock offset: refused when the base cannot cover the segments", "[reference][clock]") {
  // The base spans 0-1000 s of its own clock; the resting segments span
  // 0-2760 s: no single offset puts both inside it.
  const OffsetScene sc = offset_scene(0.0, true, 0.0, 1000.0, 5);
  const auto segs = sc.segments();
  const ClockOffsetEstimate est = estimate_clock_offset(segs, *sc.base, 1.0);
  CHECK_FALSE(est.ok);
  CHECK(est.why.find("does not cover") != std::string::npos);
}

TEST_CASE("clock offset: refused with too few samples", "[reference][clock]") {
  const OffsetScene sc = offset_scene(37.3, true, -700.0, 3500.0, 9);
  // 10 + 10 samples, below the default 30 (ClockOffsetOptions::min_samples).
  const std::vector<std::span<const RestSample>> segs = {
      std::span<const RestSample>(sc.pre).first(10),
      std::span<const RestSample>(sc.post).first(10)};
  const ClockOffsetEstimate est = estimate_clock_offset(segs, *sc.base, 1.0);
  CHECK_FALSE(est.ok);
  CHECK(est.samples == 20);
  CHECK(est.why.find("resting samples") != std::string::npos);
}

// ----------------------------------------------------------- landing detector

namespace {

/// Isothermal pressure at geometric height h [m] above a ground pressure
/// p0: H = r0 h / (r0 + h) (USSA76 eq. 18), p = p0 exp(-g0 H / (R T)).
/// Source: hypsometric equation, W&H 2006 eq. 3.29 (reference-values.md 4.3).
double isothermal_pressure(double p0, double h, double t_k) {
  const double geopotential = kR0 * h / (kR0 + h);
  return p0 * std::exp(-kG0 * geopotential / (kR * t_k));
}

}  // namespace

TEST_CASE("landing detector: finds the post-landing rest of a flight", "[reference][landing]") {
  // Rest 0-119 s, climb 3 m/s for 200 s, descent 3 m/s for 200 s (landing
  // at 520 s, 0.5 m above the launch), rest to 820 s; noise 2 Pa, 1 Hz.
  Gauss g(4242);
  LandingDetector det(StationaryOptions{}, 10000);
  const double p0 = 100800.0;
  const double landed_pa = isothermal_pressure(p0, 0.5, 288.15);
  for (int t = 0; t <= 820; ++t) {
    double h = 0.0;
    if (t >= 120 && t < 320)
      h = 3.0 * (t - 120);
    else if (t >= 320 && t < 520)
      h = 600.0 - 3.0 * (t - 320) + 0.5 * (t - 320) / 200.0;
    else if (t >= 520)
      h = 0.5;
    det.feed(ns(t), isothermal_pressure(p0, h, 288.15) + 2.0 * g());
  }
  CHECK_FALSE(det.overflowed());
  const RestSegment seg = det.finish();
  REQUIRE(seg.found);
  // The rest starts at 520 s; the detector keeps back the samples that had
  // not yet moved (docs/reference.md): within 3 samples.
  CHECK(std::fabs(static_cast<double>(seg.start_ns - ns(520)) / 1e9) <= 3.0);
  CHECK(seg.end_ns == ns(820));  // the last sample fed
  CHECK(seg.samples >= 298);     // 301 samples from 520 s to 820 s, within 3
  CHECK(seg.used.size() >= 290);
  CHECK(std::is_sorted(
      seg.used.begin(), seg.used.end(),
      [](const RestSample& a, const RestSample& b) { return a.time_ns < b.time_ns; }));
  // Mean of ~300 samples of sigma 2 Pa: standard error 0.12 Pa; 1 Pa is
  // more than 8 standard errors (common practice).
  CHECK(seg.pressure_pa == Approx(landed_pa).margin(1.0));
  CHECK(seg.pressure_sd_pa == Approx(2.0).margin(0.5));  // the noise put in
  // Mean time of the used samples: ~670 s, the middle of 520-820 s.
  CHECK(std::fabs(static_cast<double>(seg.mean_time_ns() - ns(670)) / 1e9) <= 3.0);
}

TEST_CASE("landing detector: an all-rest log has no landing", "[reference][landing]") {
  Gauss g(99);
  LandingDetector det(StationaryOptions{}, 10000);
  for (int t = 0; t < 600; ++t) det.feed(ns(t), 101000.0 + 2.0 * g());
  const RestSegment seg = det.finish();
  CHECK_FALSE(seg.found);

  // A rest longer than the ring kept: the tail is all rest (documented).
  LandingDetector small(StationaryOptions{}, 100);
  for (int t = 0; t < 100; ++t) small.feed(ns(t), 101000.0 - 30.0 * t);  // flight
  for (int t = 100; t < 400; ++t) small.feed(ns(t), 98000.0);            // 300 s of rest
  CHECK(small.overflowed());
  CHECK_FALSE(small.finish().found);
}

// ----------------------------------------------------------- reference track

TEST_CASE("reference track: constant and linear", "[reference][track]") {
  const ReferenceTrack c = ReferenceTrack::constant(101234.5);
  CHECK(c.is_constant());
  CHECK(c.at(0).pressure_pa == 101234.5);
  CHECK(c.at(ns(86400)).pressure_pa == 101234.5);
  CHECK_FALSE(c.at(ns(5)).outside_base);

  // 100000 Pa at 100 s, 100100 Pa at 200 s: 1 Pa/s (by hand).
  const ReferenceTrack l = ReferenceTrack::linear(ns(100), 100000.0, ns(200), 100100.0);
  CHECK_FALSE(l.is_constant());
  CHECK(l.at(ns(150)).pressure_pa == Approx(100050.0).margin(1e-9));
  CHECK(l.at(ns(100)).pressure_pa == Approx(100000.0).margin(1e-9));
  CHECK(l.at(ns(200)).pressure_pa == Approx(100100.0).margin(1e-9));
  // Extrapolated linearly on both sides.
  CHECK(l.at(ns(300)).pressure_pa == Approx(100200.0).margin(1e-9));
  CHECK(l.at(ns(0)).pressure_pa == Approx(99900.0).margin(1e-9));
}

TEST_CASE("reference track: base with clock offset, scale and tie", "[reference][track]") {
  // Base: p_base = 100000 + 1 Pa/s t_base, every 10 s from 0 to 1000 s.
  std::vector<BaseSample> s;
  for (int i = 0; i <= 100; ++i) s.push_back({ns(10.0 * i), 100000.0 + 10.0 * i, kMissing});
  auto base = std::make_shared<const BaseSeries>(std::move(s));
  const double S = 30.0, k = 1.001, c = -12.0;
  const ReferenceTrack tr = ReferenceTrack::base(base, S, k, c);
  CHECK_FALSE(tr.is_constant());
  // Pinned (product spec): --base-offset S adds S to the base's times, so
  // flight time 500 s reads base time 470 s; p = k p_base + c.
  const TrackValue v = tr.at(ns(500));
  CHECK_FALSE(v.outside_base);
  CHECK(v.pressure_pa == Approx(k * 100470.0 + c).margin(1e-6));
  CHECK(tr.at(ns(503.5)).pressure_pa == Approx(k * 100473.5 + c).margin(1e-6));
  // Flight time 10 s is base time -20 s: before the base, first value held.
  const TrackValue early = tr.at(ns(10));
  CHECK(early.outside_base);
  CHECK(early.outside_s == Approx(20.0).margin(1e-9));
  CHECK(early.pressure_pa == Approx(k * 100000.0 + c).margin(1e-6));
  // Flight time 1040 s is base time 1010 s: 10 s after its end.
  const TrackValue late = tr.at(ns(1040));
  CHECK(late.outside_base);
  CHECK(late.outside_s == Approx(10.0).margin(1e-9));
  CHECK(late.pressure_pa == Approx(k * 101000.0 + c).margin(1e-6));
  // The base's last sample is inside at flight time 1030 s.
  CHECK_FALSE(tr.at(ns(1030)).outside_base);
}

TEST_CASE("reference track: the checkpoint correction a + b (t - tc) is added",
          "[reference][track]") {
  ReferenceTrack c = ReferenceTrack::constant(100000.0);
  c.set_correction(5.0, 0.01, ns(300));
  CHECK_FALSE(c.is_constant());  // a drift now
  CHECK(c.at(ns(300)).pressure_pa == Approx(100005.0).margin(1e-9));
  CHECK(c.at(ns(500)).pressure_pa == Approx(100007.0).margin(1e-9));  // 5 + 0.01 * 200
  CHECK(c.at(ns(100)).pressure_pa == Approx(100003.0).margin(1e-9));  // 5 - 0.01 * 200
  // A second correction replaces the first.
  c.set_correction(-2.0, 0.0, ns(0));
  CHECK(c.is_constant());
  CHECK(c.at(ns(500)).pressure_pa == Approx(99998.0).margin(1e-9));

  ReferenceTrack l = ReferenceTrack::linear(ns(0), 100000.0, ns(100), 100010.0);
  l.set_correction(1.0, -0.1, ns(50));
  // 100000 + 0.1 * 80 + 1 - 0.1 * 30 = 100006 (by hand).
  CHECK(l.at(ns(80)).pressure_pa == Approx(100006.0).margin(1e-9));
}

// ---------------------------------------------------------------- checkpoints

namespace {

constexpr double kTRef = 288.15;  // K, the standard sea-level value (USSA76)

/// The isothermal relation written here: geopotential height
/// h = (R T / g0) ln(p_ref / p) and dh/dp_ref = R T / (g0 p_ref).
/// Source: hypsometric equation, reference-values.md 4.3 (W&H 2006 eq. 3.29).
std::pair<double, double> hand_height(double p_ref, double p) {
  const double scale = kR * kTRef / kG0;
  return {scale * std::log(p_ref / p), scale / p_ref};
}

/// Pressure at geopotential height h above p_ref, the inverse of hand_height.
double hand_pressure(double p_ref, double h) {
  return p_ref * std::exp(-h * kG0 / (kR * kTRef));
}

Checkpoint checkpoint_at(double t_s, double h_m) {
  Checkpoint c;
  c.text = "test";
  c.time_ns = ns(t_s);
  c.height_m = h_m;
  return c;
}

}  // namespace

TEST_CASE("checkpoint fit: one checkpoint gives the offset of p_ref", "[reference][checkpoint]") {
  // True ground pressure 101000 Pa; the reference in use says 100980 Pa
  // (20 Pa low). A known height of 42.5 m at 600 s.
  const double p_true = 101000.0, p_used = 100980.0;
  const std::vector<Checkpoint> cps = {checkpoint_at(600, 42.5)};
  const std::vector<CheckpointObservation> obs = {{ns(600), hand_pressure(p_true, 42.5), kTRef}};
  const CheckpointFit fit = fit_checkpoints(cps, obs, [&](std::size_t i, double d) {
    return hand_height(p_used + d, obs[i].pressure_pa);
  });
  CHECK(fit.parameters == 1);
  // The correction is the reference's error, +20 Pa (by construction).
  CHECK(fit.offset_pa == Approx(20.0).margin(0.01));
  CHECK(fit.rate_pa_per_s == 0.0);
  REQUIRE(fit.residual_m.size() == 1);
  CHECK(std::fabs(fit.residual_m[0]) < 1e-6);  // Gauss-Newton to convergence
  CHECK(fit.fitted_m[0] == Approx(42.5).margin(1e-6));
  CHECK(fit.centre_ns == ns(600));

  // The same through baroz's IsothermalModel (geometric heights, datum 0):
  // the observation is generated with the inverse written here.
  IsothermalModel model;
  const std::vector<CheckpointObservation> obs2 = {
      {ns(600), isothermal_pressure(p_true, 42.5, kTRef), kTRef}};
  const CheckpointFit fit2 = fit_checkpoints(cps, obs2, [&](std::size_t i, double d) {
    const HeightEval e =
        model.evaluate(obs2[i].pressure_pa, kMissing, ReferencePoint{p_used + d, kTRef, 0.0});
    return std::pair{e.height_m, e.dh_dpref};
  });
  CHECK(fit2.offset_pa == Approx(20.0).margin(0.01));
  CHECK(std::fabs(fit2.residual_m[0]) < 1e-6);
}

TEST_CASE("checkpoint fit: two checkpoints recover offset and drift", "[reference][checkpoint]") {
  // True p_ref(t) = 101000 + 0.02 Pa/s t (72 Pa/h); the reference in use is
  // a constant 100980 Pa. Checkpoints 42.5 m at 600 s and 120 m at 3000 s.
  auto p_true = [](double t) { return 101000.0 + 0.02 * t; };
  const double p_used = 100980.0;
  const std::vector<Checkpoint> cps = {checkpoint_at(600, 42.5), checkpoint_at(3000, 120.0)};
  const std::vector<CheckpointObservation> obs = {
      {ns(600), hand_pressure(p_true(600), 42.5), kTRef},
      {ns(3000), hand_pressure(p_true(3000), 120.0), kTRef}};
  const CheckpointFit fit = fit_checkpoints(cps, obs, [&](std::size_t i, double d) {
    return hand_height(p_used + d, obs[i].pressure_pa);
  });
  CHECK(fit.parameters == 2);
  CHECK(fit.centre_ns == ns(1800));  // the mean time of the checkpoints
  // At the centre the error is p_true(1800) - 100980 = 56 Pa (by hand).
  CHECK(fit.offset_pa == Approx(56.0).margin(0.01));
  CHECK(fit.rate_pa_per_s == Approx(0.02).margin(1e-6));
  for (double r : fit.residual_m) CHECK(std::fabs(r) < 1e-6);
  CHECK(fit.rms_m < 1e-6);
}

TEST_CASE("checkpoint fit: an inconsistent checkpoint leaves the line-fit residuals",
          "[reference][checkpoint]") {
  // Three checkpoints at 600, 1800, 3000 s with a true drift; the middle one
  // is given 1.0 m too high. Near-equal sensitivities dh/dp_ref make the fit
  // a straight-line fit in height of the errors (0, 1, 0) m at (-1200, 0,
  // +1200) s: mean 1/3, slope 0, residuals (-1/3, +2/3, -1/3) m,
  // rms = sqrt((1/9 + 4/9 + 1/9) / 3) = sqrt(2)/3 = 0.4714 m (by hand).
  auto p_true = [](double t) { return 101000.0 + 0.02 * t; };
  const double p_used = 100980.0;
  const double h[3] = {42.5, 80.0, 120.0};
  const double t[3] = {600.0, 1800.0, 3000.0};
  std::vector<Checkpoint> cps;
  std::vector<CheckpointObservation> obs;
  for (int i = 0; i < 3; ++i) {
    cps.push_back(checkpoint_at(t[i], h[i] + (i == 1 ? 1.0 : 0.0)));
    obs.push_back({ns(t[i]), isothermal_pressure(p_true(t[i]), h[i], kTRef), kTRef});
  }
  IsothermalModel model;
  const CheckpointFit fit = fit_checkpoints(cps, obs, [&](std::size_t i, double d) {
    const HeightEval e =
        model.evaluate(obs[i].pressure_pa, kMissing, ReferencePoint{p_used + d, kTRef, 0.0});
    return std::pair{e.height_m, e.dh_dpref};
  });
  CHECK(fit.parameters == 2);
  REQUIRE(fit.residual_m.size() == 3);
  // dh/dp_ref differs between the checkpoints by ~5e-4 (p_ref 101012 to
  // 101060 Pa, and Z' of USSA76 eq. 18): the residuals move by ~5e-4 m.
  CHECK(fit.residual_m[0] == Approx(-1.0 / 3.0).margin(2e-3));
  CHECK(fit.residual_m[1] == Approx(2.0 / 3.0).margin(2e-3));
  CHECK(fit.residual_m[2] == Approx(-1.0 / 3.0).margin(2e-3));
  CHECK(fit.rms_m == Approx(std::sqrt(2.0) / 3.0).margin(2e-3));
  // The line's mean takes 1/3 m of the error: heights 1/3 m higher need a
  // higher p_ref, so the offset is the true one (56 Pa at the centre) plus
  // 1/3 m / (8434.5 m / 101036 Pa) ~ 4.0 Pa (dh/dp_ref = R T / (g0 p_ref)).
  CHECK(fit.offset_pa == Approx(56.0 + (1.0 / 3.0) * 101036.0 / (kR * kTRef / kG0)).margin(0.1));
  CHECK(fit.rate_pa_per_s == Approx(0.02).margin(1e-4));
}

TEST_CASE("checkpoint parsing", "[reference][checkpoint]") {
  const Checkpoint a = parse_checkpoint("2026-10-14T09:30:00Z=42.5", 0);
  CHECK(a.absolute);
  // Source: GNU date -u -d 2026-10-14T09:30:00Z +%s and Python datetime,
  // both 1791970200 (= 20740 days x 86400 s + 9.5 h).
  CHECK(a.time_ns == TimeNs{1791970200} * kSecond);
  CHECK(a.height_m == 42.5);
  CHECK(a.text == "2026-10-14T09:30:00Z=42.5");

  const Checkpoint b = parse_checkpoint("600=12m", 0);
  CHECK_FALSE(b.absolute);
  CHECK(b.time_ns == 600 * kSecond);
  CHECK(b.height_m == 12.0);

  const Checkpoint c = parse_checkpoint("10min=41ft", 0);
  CHECK_FALSE(c.absolute);
  CHECK(c.time_ns == 600 * kSecond);
  // Source: 1 ft = 0.3048 m exactly (international yard and pound agreement, 1959).
  CHECK(c.height_m == Approx(41.0 * 0.3048).margin(1e-12));

  // Without a zone the default offset applies: +02:00 is 2 h before UTC.
  const Checkpoint d = parse_checkpoint("2026-10-14T11:30:00=1", 7200);
  CHECK(d.time_ns == TimeNs{1791970200} * kSecond);

  for (const char* bad : {"abc", "600", "=5", "600=", "600=abc", "-5=3"}) {
    INFO(bad);
    try {
      parse_checkpoint(bad, 0);
      FAIL("expected a usage error");
    } catch (const Error& e) {
      CHECK(e.code() == ExitCode::kUsage);
    }
  }
}

// --------------------------------------------------------------------- GNSS

TEST_CASE("GNSS datum: correlated errors count fewer independent pairs", "[reference][gnss]") {
  // AR(1) errors e_i = 0.9 e_(i-1) + w_i: autocorrelation 0.9^k. Summed up to
  // the last lag above 0.05 (k = 28: 0.9^28 = 0.052, 0.9^29 = 0.047), the
  // rule in gnss_fit.hpp gives n / (1 + 2 x 0.9 (1 - 0.9^28) / 0.1)
  // = n / 18.06 (by hand; the AR(1) effective sample size n (1 - rho) /
  // (1 + rho) = n / 19 without the cut-off, Wilks, from memory).
  Gauss g(28);
  std::vector<double> d;
  double e = 0.0;
  for (int i = 0; i < 20000; ++i) {
    e = 0.9 * e + g();
    d.push_back(250.0 + e);
  }
  const GnssFit fit = fit_gnss_datum(d, 1000.0);
  CHECK(fit.pairs == 20000);
  // Sample autocorrelations of 20000 values scatter by ~1-2 %; their sum
  // over 28 lags by ~10 % (from memory): 20 %.
  CHECK(fit.effective_pairs == Approx(20000.0 / 18.06).epsilon(0.2));
  CHECK(fit.standard_error_m ==
        Approx(1.2533 * fit.spread_m / std::sqrt(fit.effective_pairs)).margin(1e-12));
}

TEST_CASE("GNSS datum: the median resists 20 % outliers", "[reference][gnss]") {
  // 81 good differences 250 + 0.1 k m (k = -40..40) and 20 outliers at
  // 750 m (20 of 101). Sorted, the median (51st value) is the good value
  // with k = 10: 251.0 m (by hand; the mean would be 349 m).
  std::vector<double> d;
  for (int k = -40; k <= 40; ++k) d.push_back(250.0 + 0.1 * k);
  for (int i = 0; i < 20; ++i) d.push_back(750.0);
  std::shuffle(d.begin(), d.end(), std::mt19937_64(3));
  const GnssFit fit = fit_gnss_datum(d, 1000.0);
  CHECK(fit.pairs == 101);
  CHECK(fit.below_m == 1000.0);
  CHECK(fit.datum_m == Approx(251.0).margin(1e-9));
  // Absolute deviations from 251: 0 once, 0.1 j twice for j = 1..30, then
  // once for j = 31..50, and 499 twenty times: the 51st smallest is 2.5 m
  // (by hand). Spread = 1.4826 MAD (Hampel 1974; digits from memory).
  CHECK(fit.spread_m == Approx(1.4826 * 2.5).margin(1e-9));
  // Standard error of the median sqrt(pi/2) sigma / sqrt(n_eff) (from
  // memory), n_eff the effective number of independent differences
  // (gnss_fit.hpp), at most n.
  CHECK(fit.effective_pairs >= 1.0);
  CHECK(fit.effective_pairs <= 101.0);
  CHECK(fit.standard_error_m ==
        Approx(1.2533 * 1.4826 * 2.5 / std::sqrt(fit.effective_pairs)).margin(1e-9));
}

TEST_CASE("GNSS datum: 1.4826 MAD estimates the sigma of normal errors", "[reference][gnss]") {
  Gauss g(1959);
  std::vector<double> d;
  for (int i = 0; i < 10000; ++i) d.push_back(250.0 + 3.0 * g());
  const GnssFit fit = fit_gnss_datum(d, 500.0);
  // Median of 10000 normal values, sigma 3: standard error 1.2533 x 3 / 100
  // = 0.038 m; 0.15 m is 4 of them (from memory).
  CHECK(fit.datum_m == Approx(250.0).margin(0.15));
  // Source: 1.4826 MAD is a consistent estimator of sigma (Hampel 1974);
  // its standard error ~1.65 sigma / sqrt(n) = 0.05 m (from memory): 3 of them.
  CHECK(fit.spread_m == Approx(3.0).margin(0.15));

  // Independent errors in time order: no autocorrelation reaches the 0.05
  // cut-off at lag 1 (its sampling sd is 1/sqrt(n) = 0.01), so n_eff = n.
  CHECK(fit.effective_pairs == Approx(10000.0).margin(1e-9));
  CHECK(fit.standard_error_m == Approx(1.2533 * fit.spread_m / 100.0).margin(1e-12));

  std::vector<double> none;
  const GnssFit empty = fit_gnss_datum(none, 500.0);
  CHECK(empty.pairs == 0);
  CHECK(std::isnan(empty.datum_m));
}
