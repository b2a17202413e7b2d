// Spike flags, vertical speed and smoothed height (analysis/flight_smoother).
//
// The references are outside facts: the analytic derivative of synthetic
// trajectories, the definition of the Hampel identifier (Hampel 1974;
// Pearson et al. 2016, "Generalized Hampel filters", EURASIP J. Adv. Signal
// Process. 2016:87), the least-squares slope's standard error
// sigma / sqrt(Sxx) (Draper & Smith, "Applied Regression Analysis", ch. 1;
// from memory) and a direct, non-streaming evaluation of the documented
// method written out in this file. Noise is deterministic (std::mt19937 with
// fixed seeds).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <random>
#include <vector>

#include "baroz/analysis/flight_smoother.hpp"
#include "baroz/core/error.hpp"

using namespace baroz;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kPi = 3.14159265358979323846;

struct Log {
  std::vector<double> t;
  std::vector<double> h;
  void add(double time_s, double height_m) {
    t.push_back(time_s);
    h.push_back(height_m);
  }
};

struct Run {
  std::vector<SmoothedRow> rows;
  std::size_t max_pending = 0;
  std::size_t max_buffered = 0;
  double delay_s = 0.0;
  double spike_window_s = 0.0;
  double vspeed_window_s = 0.0;
  std::uint64_t reversals = 0;
  std::uint64_t overflows = 0;
  double max_lag_s = 0.0;  // newest input time minus the time of a row released by that push
};

/// Streams `log` through a smoother; pops after every push (`eager`) or only
/// after finish().
Run stream(const Log& log, const SmoothingOptions& options, bool eager = true) {
  FlightSmoother smoother(options);
  Run run;
  SmoothedRow row;
  for (std::size_t i = 0; i < log.t.size(); ++i) {
    smoother.push(log.t[i], log.h[i]);
    run.max_pending = std::max(run.max_pending, smoother.pending());
    run.max_buffered = std::max(run.max_buffered, smoother.buffered());
    if (!eager) continue;
    while (smoother.pop(row)) {
      if (std::isfinite(row.time_s)) run.max_lag_s = std::max(run.max_lag_s, log.t[i] - row.time_s);
      run.rows.push_back(row);
    }
  }
  smoother.finish();
  while (smoother.pop(row)) run.rows.push_back(row);
  run.delay_s = smoother.delay_s();
  run.spike_window_s = smoother.spike_window_used_s();
  run.vspeed_window_s = smoother.vspeed_window_used_s();
  run.reversals = smoother.time_reversals();
  run.overflows = smoother.overflow_cuts();
  return run;
}

std::size_t count_spikes(const Run& run) {
  return static_cast<std::size_t>(std::count_if(run.rows.begin(), run.rows.end(),
                                                [](const SmoothedRow& r) { return r.spike; }));
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const std::size_t n = v.size();
  return n % 2 == 1 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

struct Expected {
  bool spike = false;
  double vspeed = kNaN;
  double smoothed = kNaN;
};

/// The documented method evaluated directly on the whole log (no streaming,
/// no running sums, no shortcut): for each row the windows are found by
/// scanning its segment. Valid while a spike window holds at most 64 rows.
std::vector<Expected> direct(const Log& log, double spike_window_s, double vspeed_window_s,
                             double threshold, double floor_m) {
  const std::size_t n = log.t.size();
  std::vector<Expected> out(n);
  const double hs = spike_window_s / 2, hv = vspeed_window_s / 2;
  std::size_t begin = 0;
  while (begin < n) {
    std::size_t end = begin + 1;  // a segment ends before a time reversal
    if (std::isfinite(log.t[begin]))
      while (end < n && std::isfinite(log.t[end]) && log.t[end] >= log.t[end - 1]) ++end;
    for (std::size_t c = begin; c < end; ++c) {
      if (!std::isfinite(log.h[c]) || !std::isfinite(log.t[c])) continue;
      const double tc = log.t[c];
      std::vector<double> tt, hh;
      for (std::size_t j = begin; j < end; ++j)
        if (log.t[j] >= tc - hs && log.t[j] <= tc + hs && std::isfinite(log.h[j])) {
          tt.push_back(log.t[j] - tc);
          hh.push_back(log.h[j]);
        }
      REQUIRE(tt.size() <= 64);
      if (tt.size() < 5) continue;
      const std::size_t m = tt.size() - tt.size() / 2;
      std::vector<double> slopes;
      for (std::size_t k = 0; k + m < tt.size(); ++k)
        if (tt[k + m] > tt[k]) slopes.push_back((hh[k + m] - hh[k]) / (tt[k + m] - tt[k]));
      const double s = slopes.empty() ? 0.0 : median(slopes);
      std::vector<double> r;
      for (std::size_t j = 0; j < tt.size(); ++j) r.push_back(hh[j] - s * tt[j]);
      const double rc = log.h[c];  // t - t_c = 0 at the centre
      const double med = median(r);
      std::vector<double> dev;
      for (double x : r) dev.push_back(std::fabs(x - med));
      // Hampel identifier (Pearson et al. 2016): |x - median| > t * 1.4826 MAD.
      // Source for 1.4826 = 1/Phi^-1(3/4): Hampel 1974 (from memory).
      out[c].spike = std::fabs(rc - med) > std::max(threshold * 1.4826 * median(dev), floor_m);
    }
    for (std::size_t c = begin; c < end; ++c) {
      if (!std::isfinite(log.h[c]) || !std::isfinite(log.t[c])) continue;
      const double tc = log.t[c];
      std::vector<double> uu, hh;
      for (std::size_t j = begin; j < end; ++j)
        if (log.t[j] >= tc - hv && log.t[j] <= tc + hv && std::isfinite(log.h[j]) &&
            !out[j].spike) {
          uu.push_back(log.t[j] - tc);
          hh.push_back(log.h[j]);
        }
      if (uu.size() < 3 || uu.back() - uu.front() < 0.25 * vspeed_window_s) continue;
      double mu = 0, mh = 0;
      for (std::size_t j = 0; j < uu.size(); ++j) mu += uu[j], mh += hh[j];
      mu /= static_cast<double>(uu.size());
      mh /= static_cast<double>(uu.size());
      double sxx = 0, sxy = 0;
      for (std::size_t j = 0; j < uu.size(); ++j) {
        sxx += (uu[j] - mu) * (uu[j] - mu);
        sxy += (uu[j] - mu) * (hh[j] - mh);
      }
      out[c].vspeed = sxy / sxx;
      out[c].smoothed = mh - out[c].vspeed * mu;
    }
    begin = end;
  }
  return out;
}

/// Heights noise sigma for a balloon: a constant pressure noise grows in
/// height like 1/rho ~ exp(z / H), H ~ 7 km the density scale height of the
/// lower atmosphere (common practice, from memory); 0.1 m at the ground
/// reaches about 17 m at 36 km.
double balloon_noise_m(double z_m) {
  return 0.1 * std::exp(std::max(z_m, 0.0) / 7000.0);
}

}  // namespace

TEST_CASE("vertical speed of a 5 m/s balloon climb at 1 Hz with 0.5 m noise", "[analysis]") {
  std::mt19937 rng(11);
  std::normal_distribution<double> noise(0.0, 0.5);
  Log log;
  const int n = 1800;
  for (int i = 0; i < n; ++i) log.add(i, 5.0 * i + noise(rng));  // h = 5 t
  const Run run = stream(log, SmoothingOptions{});
  REQUIRE(run.rows.size() == log.t.size());
  // Defaults at 1 Hz: the fit window is widened to 21 rows (20 s).
  CHECK(run.vspeed_window_s == Approx(20.0));

  double max_err = 0, sum2 = 0, sum2_h = 0, max_end_err = 0;
  int inner = 0;
  for (const SmoothedRow& r : run.rows) {
    REQUIRE(std::isfinite(r.vspeed_mps));
    const double err = r.vspeed_mps - 5.0;  // Source: analytic derivative d(5t)/dt = 5 m/s
    if (r.time_s >= 20 && r.time_s <= n - 21) {
      max_err = std::max(max_err, std::fabs(err));
      sum2 += err * err;
      sum2_h += (r.smoothed_height_m - 5.0 * r.time_s) * (r.smoothed_height_m - 5.0 * r.time_s);
      ++inner;
    } else {
      max_end_err = std::max(max_end_err, std::fabs(err));
    }
  }
  INFO("max |vspeed - 5| inside " << max_err << " m/s, at the ends " << max_end_err);
  CHECK(max_err < 0.1);
  // Least-squares slope error sigma/sqrt(Sxx), Sxx = 21 (21^2 - 1)/12 = 770 s^2
  // for 21 rows 1 s apart (Draper & Smith ch. 1, from memory): 0.018 m/s;
  // the mean of 21 rows has sigma/sqrt(21) = 0.109 m.
  const double rms = std::sqrt(sum2 / inner), rms_h = std::sqrt(sum2_h / inner);
  INFO("rms vspeed error " << rms << " m/s, rms smoothed height error " << rms_h << " m");
  CHECK(rms == Approx(0.5 / std::sqrt(770.0)).epsilon(0.2));
  CHECK(rms_h == Approx(0.5 / std::sqrt(21.0)).epsilon(0.2));
  // One-sided fits at the ends (11 rows, Sxx = 110 s^2: sigma 0.048 m/s).
  CHECK(max_end_err < 0.25);
  CHECK(count_spikes(run) == 0);
}

TEST_CASE("vertical speed of a sinusoidal drone climb at 50 Hz with jittered sampling",
          "[analysis]") {
  // h = A (1 - cos(w t)), A = 30 m, period 40 s: v = A w sin(w t), at most
  // 4.71 m/s. Samples every 20 ms with +-8 ms jitter (irregular), 0.1 m noise.
  std::mt19937 rng(12);
  std::normal_distribution<double> noise(0.0, 0.1);
  std::uniform_real_distribution<double> jitter(-0.008, 0.008);
  const double a = 30.0, w = 2 * kPi / 40.0;
  Log log;
  for (int i = 0; i < 120 * 50; ++i) {
    const double t = 0.02 * i + jitter(rng);
    log.add(t, a * (1 - std::cos(w * t)) + noise(rng));
  }
  const Run run = stream(log, SmoothingOptions{});
  REQUIRE(run.rows.size() == log.t.size());
  CHECK(run.vspeed_window_s == Approx(2.0));  // 2 s default, 21 rows need only 0.4 s at 50 Hz
  // Tolerances: the linear fit over +-T (T = 1 s) has a slope bias h''' T^2/10
  // = A w^3/10 = 0.012 m/s and noise sigma/sqrt(Sxx) ~ 0.1/sqrt(100/3) = 0.017
  // m/s; its value at the centre has a bias h'' T^2/6 = A w^2/6 = 0.12 m.
  double max_err = 0, max_err_h = 0;
  for (const SmoothedRow& r : run.rows) {
    if (r.time_s < 2 || r.time_s > 118) continue;
    // Source: analytic derivative of A (1 - cos(w t)).
    max_err = std::max(max_err, std::fabs(r.vspeed_mps - a * w * std::sin(w * r.time_s)));
    max_err_h =
        std::max(max_err_h, std::fabs(r.smoothed_height_m - a * (1 - std::cos(w * r.time_s))));
  }
  INFO("max vspeed error " << max_err << " m/s, max smoothed height error " << max_err_h << " m");
  CHECK(max_err < 0.1);
  CHECK(max_err_h < 0.2);
  CHECK(count_spikes(run) == 0);
}

TEST_CASE("isolated +80 m and -150 m spikes in a 5 m/s climb are flagged and do not bias vspeed",
          "[analysis]") {
  std::mt19937 rng(13);
  std::normal_distribution<double> noise(0.0, 0.5);
  Log clean;
  for (int i = 0; i < 1200; ++i) clean.add(i, 5.0 * i + noise(rng));
  Log spiky = clean;
  spiky.h[400] += 80.0;
  spiky.h[800] -= 150.0;

  const Run a = stream(clean, SmoothingOptions{});
  const Run b = stream(spiky, SmoothingOptions{});
  REQUIRE(b.rows.size() == spiky.t.size());
  std::vector<std::size_t> flagged;
  for (const SmoothedRow& r : b.rows)
    if (r.spike) flagged.push_back(static_cast<std::size_t>(r.index));
  CHECK(flagged == std::vector<std::size_t>{400, 800});
  CHECK(count_spikes(a) == 0);

  double max_shift = 0, max_err = 0;
  for (std::size_t i = 370; i < 830; ++i) {
    max_shift = std::max(max_shift, std::fabs(b.rows[i].vspeed_mps - a.rows[i].vspeed_mps));
    max_err = std::max(max_err, std::fabs(b.rows[i].vspeed_mps - 5.0));  // Source: d(5t)/dt
  }
  INFO("vspeed shift by the spikes " << max_shift << " m/s, error " << max_err << " m/s");
  CHECK(max_shift < 0.1);
  CHECK(max_err < 0.1);
  // The spike rows keep their heights; their smoothed height is the line
  // through the neighbours (truth 5 t, mean of 20 rows: sigma 0.11 m).
  CHECK(b.rows[400].height_m == spiky.h[400]);
  CHECK(std::fabs(b.rows[400].smoothed_height_m - 2000.0) < 0.5);
  CHECK(std::fabs(b.rows[800].smoothed_height_m - 4000.0) < 0.5);

  // Without the flag (threshold out of reach) the +80 m spike pulls the slope
  // of rows up to 10 s away by up to 80 * 10 / 770 = 1.04 m/s: the exclusion
  // is what keeps the neighbours right.
  SmoothingOptions off;
  off.spike_threshold = 1e9;
  off.spike_floor_m = 1e9;
  const Run c = stream(spiky, off);
  double max_shift_off = 0;
  for (std::size_t i = 370; i < 430; ++i)
    max_shift_off = std::max(max_shift_off, std::fabs(c.rows[i].vspeed_mps - a.rows[i].vspeed_mps));
  CHECK(max_shift_off > 0.5);
}

TEST_CASE("the Hampel rule: |r - median| > k * 1.4826 * MAD on detrended residuals", "[analysis]") {
  // 41 rows 1 s apart; row 20 is tested with a 40 s window (all 41 rows).
  // Rows k and k + 21 (k < 20) carry the same value p_k: every Theil pair
  // slope is 0 (before the trend is added). Values: 20 zeros, ten +1, ten -1,
  // and d at the centre, so the median is 0 and the MAD is 1 exactly.
  // Threshold k = 6, no floor: d is a spike iff |d| > 6 * 1.4826 = 8.8956.
  // Source: the Hampel identifier, Pearson et al. 2016 (the standard Hampel filter); 1.4826 =
  // 1/Phi^-1(0.75) (from memory).
  const double p[20] = {0, 1, 0, -1, 0, 1, 0, -1, 0, 1, 0, -1, 0, 1, 0, -1, 0, 1, 0, -1};
  SmoothingOptions o;
  o.spike_window_s = 40.0;
  o.spike_floor_m = 0.0;
  o.spike_threshold = 6.0;
  o.spike_min_rows = 0;
  o.vspeed_min_rows = 0;
  for (const double trend : {0.0, 15.0, -30.0}) {  // a climb or fall must not matter
    for (const double d : {8.85, -8.85, 8.95, -8.95}) {
      Log log;
      for (int i = 0; i < 41; ++i) {
        const double v = i == 20 ? d : p[i < 20 ? i : i - 21];
        log.add(i, v + trend * i);
      }
      const Run run = stream(log, o);
      INFO("trend " << trend << " m/s, d " << d << " m");
      CHECK(run.rows[20].spike == (std::fabs(d) > 8.8956));
    }
  }
  // The floor: the same row with d = 8.95 is no spike under a 9 m floor.
  Log log;
  for (int i = 0; i < 41; ++i) log.add(i, i == 20 ? 8.95 : p[i < 20 ? i : i - 21]);
  o.spike_floor_m = 9.0;
  CHECK_FALSE(stream(log, o).rows[20].spike);
}

TEST_CASE("no normal row is flagged over a 2 h noisy balloon ascent nor a 15 m/s fall",
          "[analysis]") {
  // Gaussian noise growing with height (0.1 m at the ground, ~17 m at 36 km).
  // With the default 41-row windows and k = 6 the measured false-positive
  // rate on pure Gaussian noise is about 2e-5 a row (docs/analysis-smoothing.md),
  // i.e. 0.15 expected over these 7200 rows: more than 2 means a fault.
  std::mt19937 rng(14);
  std::normal_distribution<double> unit(0.0, 1.0);
  Log up;
  for (int i = 0; i < 7200; ++i) {
    const double z = 5.0 * i;
    up.add(i, z + balloon_noise_m(z) * unit(rng));
  }
  const Run ascent = stream(up, SmoothingOptions{});
  INFO("false positives in the ascent: " << count_spikes(ascent));
  CHECK(count_spikes(ascent) <= 2);
  // A falling payload: 36 km down at 15 m/s.
  Log down;
  for (int i = 0; i < 2400; ++i) {
    const double z = 36000.0 - 15.0 * i;
    down.add(i, z + balloon_noise_m(z) * unit(rng));
  }
  const Run fall = stream(down, SmoothingOptions{});
  INFO("false positives in the fall: " << count_spikes(fall));
  CHECK(count_spikes(fall) <= 1);
  // Low down the noise is small and the vspeed is sharp (Source: d/dt of -15 t).
  for (std::size_t i = 1800; i < 2380; ++i) CHECK(std::fabs(fall.rows[i].vspeed_mps + 15.0) < 0.1);
}

TEST_CASE("a burst (5 m/s climb, then a fall from 30 m/s decaying) is not flagged around the turn",
          "[analysis]") {
  // Climb 5 m/s for 6000 s, then v = -(5 + 25 exp(-tau / 900 s)): the speed
  // jumps from +5 to -30 m/s at the burst. 1 Hz, 0.5 m noise.
  std::mt19937 rng(15);
  std::normal_distribution<double> noise(0.0, 0.5);
  auto height = [](double t) {  // exact integral of the speed
    if (t <= 6000) return 5.0 * t;
    const double tau = t - 6000;
    return 30000.0 - 5.0 * tau - 25.0 * 900.0 * (1 - std::exp(-tau / 900.0));
  };
  auto speed = [](double t) {
    return t <= 6000 ? 5.0 : -(5.0 + 25.0 * std::exp(-(t - 6000) / 900.0));
  };
  Log log;
  for (int i = 0; i < 8000; ++i) log.add(i, height(i) + noise(rng));  // lands near tau = 2000 s
  const Run run = stream(log, SmoothingOptions{});
  std::size_t near_turn = 0;
  for (const SmoothedRow& r : run.rows)
    if (r.spike && std::fabs(r.time_s - 6000) <= 120) ++near_turn;
  CHECK(near_turn == 0);
  CHECK(count_spikes(run) <= 1);
  // Away from the turn by more than the 20 s fit window the speed follows the
  // analytic one (Source: derivative of height()).
  for (const SmoothedRow& r : run.rows) {
    if (std::fabs(r.time_s - 6000) < 11 || r.time_s < 20 || r.time_s > 7979) continue;
    INFO("t = " << r.time_s);
    REQUIRE(std::fabs(r.vspeed_mps - speed(r.time_s)) < 0.1);
  }

  // A drone at 50 Hz: hover, an instant 3 m/s climb for 10 s, hover, an
  // instant 2 m/s descent: no flag at any corner.
  std::normal_distribution<double> small(0.0, 0.1);
  Log drone;
  for (int i = 0; i < 60 * 50; ++i) {
    const double t = 0.02 * i;
    const double h = t < 10   ? 0
                     : t < 20 ? 3 * (t - 10)
                     : t < 35 ? 30
                     : t < 50 ? 30 - 2 * (t - 35)
                              : 0;
    drone.add(t, h + small(rng));
  }
  CHECK(count_spikes(stream(drone, SmoothingOptions{})) == 0);
}

TEST_CASE("spikes at 100 Hz (strided spike statistics) and at a 2 s cadence", "[analysis]") {
  std::mt19937 rng(16);
  std::normal_distribution<double> noise(0.0, 0.2);
  Log log;
  for (int i = 0; i < 30000; ++i) log.add(0.01 * i, 3.0 * 0.01 * i + noise(rng));
  for (const std::size_t i : {5000u, 5001u, 12000u, 20000u}) log.h[i] += (i % 2 ? -25.0 : 40.0);
  const Run run = stream(log, SmoothingOptions{});
  std::vector<std::size_t> flagged;
  for (const SmoothedRow& r : run.rows)
    if (r.spike) flagged.push_back(static_cast<std::size_t>(r.index));
  CHECK(flagged == std::vector<std::size_t>{5000, 5001, 12000, 20000});

  // 0.5 Hz: the windows widen to 41 and 21 rows (80 s and 40 s).
  Log slow;
  for (int i = 0; i < 1500; ++i) slow.add(2.0 * i, 10.0 * i + noise(rng));
  slow.h[700] += 60;
  const Run s = stream(slow, SmoothingOptions{});
  CHECK(s.spike_window_s == Approx(80.0));
  CHECK(s.vspeed_window_s == Approx(40.0));
  CHECK(s.delay_s == Approx(60.0));
  CHECK(count_spikes(s) == 1);
  CHECK(s.rows[700].spike);
  CHECK(std::fabs(s.rows[700].vspeed_mps - 5.0) < 0.05);  // Source: 10 m per 2 s
}

TEST_CASE("streaming equals the direct evaluation and the in-memory series", "[analysis]") {
  // An awkward ~10 Hz log: jitter, spikes, a 60 s gap, duplicate times, NaN
  // heights, a time reversal (logger restart) and a non-finite time.
  std::mt19937 rng(17);
  std::normal_distribution<double> noise(0.0, 0.3);
  std::uniform_real_distribution<double> jitter(-0.03, 0.03);
  Log log;
  auto add = [&](double t, double h) { log.add(t, static_cast<double>(static_cast<float>(h))); };
  for (int i = 0; i < 3000; ++i) {
    double t = 0.1 * i + jitter(rng);
    if (i >= 1500) t += 60.0;  // gap
    const double h = 20 * std::sin(0.01 * t) + 2.0 * t + noise(rng);
    add(t, h);
    if (i % 97 == 0) add(t, h + noise(rng));     // duplicate time
    if (i % 251 == 0) add(t + 0.001, h + 30.0);  // spike
  }
  log.h[100] = kNaN;
  log.h[2222] = kNaN;
  for (int i = 0; i < 400; ++i) add(0.1 * i, -1.5 * 0.1 * i + noise(rng));  // restart
  log.add(kNaN, 10.0);
  for (int i = 0; i < 50; ++i) add(100 + 0.1 * i, noise(rng));

  // Two settings: the defaults' kind (floor 1 m, the shortcut decides most
  // rows) and a low threshold without floor, where many decisions are
  // borderline and any difference in a window would show.
  struct Setting {
    double threshold, floor_m;
  };
  for (const Setting setting : {Setting{4.0, 1.0}, Setting{2.5, 0.0}}) {
    SmoothingOptions o;
    o.spike_window_s = 5.0;   // ~51 rows, below the 64-row stride limit; wider than
    o.vspeed_window_s = 1.0;  // twice the fit window, so its look-back decides the trimming
    o.spike_threshold = setting.threshold;
    o.spike_floor_m = setting.floor_m;
    o.spike_min_rows = 0;
    o.vspeed_min_rows = 0;
    const Run eager = stream(log, o, true);
    const Run lazy = stream(log, o, false);
    REQUIRE(eager.rows.size() == log.t.size());
    REQUIRE(lazy.rows.size() == log.t.size());
    CHECK(eager.reversals == 2);  // the restart and the NaN time

    FlightSeries series;
    for (std::size_t i = 0; i < log.t.size(); ++i) {
      FlightPoint p;
      p.time_s = log.t[i];
      p.height_m = static_cast<float>(log.h[i]);
      p.flags = (i % 2 ? kFlagSpike : 0u) | kFlagGap;  // stale spike bits must be cleared
      series.points.push_back(p);
    }
    smooth_series(series, o);

    const std::vector<Expected> want = direct(log, 5.0, 1.0, setting.threshold, setting.floor_m);
    std::size_t spikes = 0, finite = 0;
    for (std::size_t i = 0; i < log.t.size(); ++i) {
      const SmoothedRow& e = eager.rows[i];
      const SmoothedRow& l = lazy.rows[i];
      INFO("threshold " << setting.threshold << ", row " << i << " t " << log.t[i]);
      REQUIRE(e.index == i);
      REQUIRE(l.index == i);
      REQUIRE(e.spike == want[i].spike);
      REQUIRE(std::isfinite(e.vspeed_mps) == std::isfinite(want[i].vspeed));
      if (std::isfinite(want[i].vspeed)) {
        REQUIRE(e.vspeed_mps == Approx(want[i].vspeed).margin(1e-9));
        REQUIRE(e.smoothed_height_m == Approx(want[i].smoothed).margin(1e-7));
        ++finite;
      }
      // Pop timing changes nothing: bit-identical.
      REQUIRE(l.spike == e.spike);
      REQUIRE(
          (l.vspeed_mps == e.vspeed_mps || (std::isnan(l.vspeed_mps) && std::isnan(e.vspeed_mps))));
      REQUIRE((l.smoothed_height_m == e.smoothed_height_m ||
               (std::isnan(l.smoothed_height_m) && std::isnan(e.smoothed_height_m))));
      const FlightPoint& p = series.points[i];
      REQUIRE(((p.flags & kFlagSpike) != 0) == e.spike);
      REQUIRE((p.flags & kFlagGap) != 0);
      const float v = static_cast<float>(e.vspeed_mps);
      REQUIRE((p.vspeed_mps == v || (std::isnan(p.vspeed_mps) && std::isnan(v))));
      spikes += e.spike ? 1 : 0;
    }
    // The synthetic spikes (12 of them) are found; NaN-height and NaN-time rows
    // have no vspeed.
    CHECK(spikes >= 12);
    CHECK(std::isnan(eager.rows[100].vspeed_mps));
    CHECK_FALSE(eager.rows[100].spike);
    CHECK(finite > log.t.size() - 60);
  }
}

TEST_CASE("output lags a live stream by delay_s and memory stays bounded by the window",
          "[analysis]") {
  std::mt19937 rng(18);
  std::normal_distribution<double> noise(0.0, 0.2);
  SECTION("100 Hz, default windows (2 s)") {
    Log log;
    for (int i = 0; i < 60000; ++i) log.add(0.01 * i, 2.0 * std::sin(0.05 * 0.01 * i) + noise(rng));
    const Run run = stream(log, SmoothingOptions{});
    REQUIRE(run.rows.size() == log.t.size());
    for (std::size_t i = 0; i < run.rows.size(); ++i) REQUIRE(run.rows[i].index == i);
    CHECK(run.delay_s == Approx(2.0));
    // A row comes out once the input has passed t + delay (at most two
    // sampling intervals after).
    CHECK(run.max_lag_s <= run.delay_s + 0.02 + 1e-9);
    CHECK(run.max_lag_s >= run.delay_s);
    // pending ~ the delay's rows; held ~ delay plus the look-back (1 s + 1 s).
    CHECK(run.max_pending <= 203);
    CHECK(run.max_buffered <= 410);
  }
  SECTION("100 Hz with 10 s windows (1000 rows)") {
    Log log;
    for (int i = 0; i < 30000; ++i) log.add(0.01 * i, 1.0 * 0.01 * i + noise(rng));
    SmoothingOptions o;
    o.spike_window_s = 10.0;
    o.vspeed_window_s = 10.0;
    const Run run = stream(log, o);
    CHECK(run.delay_s == Approx(10.0));
    CHECK(run.max_pending <= 1003);
    CHECK(run.max_buffered <= 2010);
    CHECK(count_spikes(run) == 0);
  }
  SECTION("1 Hz: 30 s delay with the widened windows") {
    Log log;
    for (int i = 0; i < 3000; ++i) log.add(i, 5.0 * i + noise(rng));
    const Run run = stream(log, SmoothingOptions{});
    CHECK(run.delay_s == Approx(30.0));
    CHECK(run.max_lag_s <= 32.0);
    CHECK(run.max_pending <= 33);
  }
}

TEST_CASE("a 60 s gap, duplicate times, NaN heights and a stuck clock are handled", "[analysis]") {
  std::mt19937 rng(19);
  std::normal_distribution<double> noise(0.0, 0.5);
  SECTION("60 s gap between a climb and a descent: no window reaches across") {
    Log log;
    for (int i = 0; i < 600; ++i) log.add(i, 5.0 * i + noise(rng));
    for (int i = 660; i < 1260; ++i) log.add(i, 3000.0 - 3.0 * (i - 660) + noise(rng));
    const Run run = stream(log, SmoothingOptions{});
    CHECK(count_spikes(run) == 0);
    for (const SmoothedRow& r : run.rows) {
      INFO("t = " << r.time_s);
      REQUIRE(std::isfinite(r.vspeed_mps));
      // Source: d/dt of the two lines; one-sided fits next to the gap (11
      // rows: sigma 0.048 m/s).
      REQUIRE(std::fabs(r.vspeed_mps - (r.time_s < 630 ? 5.0 : -3.0)) < 0.25);
    }
  }
  SECTION("duplicate timestamps in a 10 Hz climb") {
    std::normal_distribution<double> small(0.0, 0.1);
    Log log;
    for (int i = 0; i < 3000; ++i) {
      const double t = 0.1 * i;
      log.add(t, 2.0 * t + small(rng));
      if (i % 10 == 0) log.add(t, 2.0 * t + small(rng));  // a second reading, same time
      if (i == 1500)
        for (int k = 0; k < 5; ++k) log.add(t, 2.0 * t + small(rng));
    }
    const Run run = stream(log, SmoothingOptions{});
    REQUIRE(run.rows.size() == log.t.size());
    CHECK(count_spikes(run) == 0);
    double max_err = 0;
    for (const SmoothedRow& r : run.rows)
      if (r.time_s > 2 && r.time_s < 298)
        max_err = std::max(max_err, std::fabs(r.vspeed_mps - 2.0));
    // 2 s window, ~23 rows, 0.1 m noise: sigma ~0.036 m/s (Source: d(2t)/dt).
    CHECK(max_err < 0.2);
  }
  SECTION("a cluster of rows at one time between gaps has no vspeed") {
    Log log;
    for (int i = 0; i < 100; ++i) log.add(i, i + noise(rng));
    for (int k = 0; k < 6; ++k) log.add(500, 500 + noise(rng));
    for (int i = 900; i < 1000; ++i) log.add(i, i + noise(rng));
    const Run run = stream(log, SmoothingOptions{});
    for (std::size_t i = 100; i < 106; ++i) {
      CHECK(std::isnan(run.rows[i].vspeed_mps));
      CHECK_FALSE(run.rows[i].spike);
    }
    CHECK(std::isfinite(run.rows[99].vspeed_mps));
    CHECK(std::isfinite(run.rows[106].vspeed_mps));
  }
  SECTION("NaN heights are released in order, ignored by their neighbours") {
    Log log;
    for (int i = 0; i < 300; ++i) log.add(i, i % 7 == 3 ? kNaN : 4.0 * i + noise(rng));
    const Run run = stream(log, SmoothingOptions{});
    REQUIRE(run.rows.size() == 300);
    for (const SmoothedRow& r : run.rows) {
      if (static_cast<int>(r.index) % 7 == 3) {
        CHECK(std::isnan(r.vspeed_mps));
        CHECK_FALSE(r.spike);
      } else if (r.time_s > 20 && r.time_s < 280) {
        CHECK(std::fabs(r.vspeed_mps - 4.0) < 0.1);  // Source: d(4t)/dt
      }
    }
  }
  SECTION("a stuck clock is cut into segments at max_window_rows") {
    Log log;
    for (int i = 0; i < 100; ++i) log.add(0.1 * i, noise(rng));
    for (int i = 0; i < 5000; ++i) log.add(10.0, noise(rng));
    for (int i = 0; i < 100; ++i) log.add(10.1 + 0.1 * i, noise(rng));
    SmoothingOptions o;
    o.max_window_rows = 256;
    const Run run = stream(log, o);
    REQUIRE(run.rows.size() == log.t.size());
    CHECK(run.overflows >= 15);
    CHECK(run.max_buffered <= 300);
  }
}

TEST_CASE("smoothing options out of range are usage errors", "[analysis]") {
  auto bad = [](auto change) {
    SmoothingOptions o;
    change(o);
    try {
      FlightSmoother s(o);
    } catch (const Error& e) {
      return e.code() == ExitCode::kUsage;
    }
    return false;
  };
  CHECK(bad([](SmoothingOptions& o) { o.spike_window_s = 0; }));
  CHECK(bad([](SmoothingOptions& o) { o.vspeed_window_s = -1; }));
  CHECK(bad([](SmoothingOptions& o) { o.vspeed_window_s = kNaN; }));
  CHECK(bad([](SmoothingOptions& o) { o.spike_threshold = 0; }));
  CHECK(bad([](SmoothingOptions& o) { o.spike_floor_m = -0.1; }));
  CHECK(bad([](SmoothingOptions& o) { o.max_window_rows = 10; }));
  CHECK_FALSE(bad([](SmoothingOptions& o) { o.spike_floor_m = 0; }));
}
