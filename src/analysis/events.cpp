// Flight event detection; see events.hpp and docs/analysis-events.md.
#include "baroz/analysis/events.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <utility>

#include "baroz/core/error.hpp"
#include "baroz/core/robust_statistics.hpp"

namespace baroz {
namespace {

/// The usable rows in one direction of time. Position k = 0 .. size()-1 is
/// row rows[k] (forward) or rows[size()-1-k] (backward); tau(k) is the time
/// in the walking direction (t forward, -t backward), so that it always
/// increases with k.
class View {
 public:
  View(const FlightSeries& series, const std::vector<std::size_t>& rows, bool forward)
      : points_(series.points), rows_(rows), forward_(forward) {}
  std::size_t size() const { return rows_.size(); }
  std::size_t row(std::size_t k) const { return forward_ ? rows_[k] : rows_[rows_.size() - 1 - k]; }
  double tau(std::size_t k) const {
    const double t = points_[row(k)].time_s;
    return forward_ ? t : -t;
  }
  double h(std::size_t k) const { return points_[row(k)].height_m; }

 private:
  const std::vector<FlightPoint>& points_;
  const std::vector<std::size_t>& rows_;
  bool forward_;
};

struct RestEnd {
  bool departed = false;       ///< a sustained departure from the rest was confirmed
  int sign = 0;                ///< +1: height rose (in the walking direction), -1: fell
  std::size_t last_rest = 0;   ///< position of the last row of the rest (the event)
  double level_m = kMissing;   ///< rest level [m]
  double rest_s = 0.0;         ///< duration of the rest [s]
  double trend_mps = 0.0;      ///< least-squares trend of the rest's last part [m/s]
};

/// Least-squares slope of h against tau over positions [a, b] of `v`, only
/// the positions with use[k] != 0 (all when use is empty). 0 with fewer
/// than two points.
double slope(const View& v, std::size_t a, std::size_t b, const std::vector<unsigned char>& use) {
  double n = 0, st = 0, sh = 0;
  for (std::size_t k = a; k <= b; ++k) {
    if (!use.empty() && !use[k]) continue;
    n += 1;
    st += v.tau(k);
    sh += v.h(k);
  }
  if (n < 2) return 0.0;
  const double tm = st / n, hm = sh / n;
  double stt = 0, sth = 0;
  for (std::size_t k = a; k <= b; ++k) {
    if (!use.empty() && !use[k]) continue;
    stt += (v.tau(k) - tm) * (v.tau(k) - tm);
    sth += (v.tau(k) - tm) * (v.h(k) - hm);
  }
  return stt > 0 ? sth / stt : 0.0;
}

/// The break between a level stretch and a straight climb or fall: h =
/// level over positions [ws, b], a straight line from (tau(b), level) over
/// (b, confirm]; b in [ws, c) minimises the sum of squared residuals (least
/// squares over a bounded window). Requires ws < c <= confirm.
std::size_t hinge_break(const View& v, std::size_t ws, std::size_t c, std::size_t confirm,
                        double level) {
  // Suffix sums over (bk, confirm] make each candidate O(1); x is tau
  // relative to tau(ws) to keep the sums well conditioned.
  const double x0 = v.tau(ws);
  double sn = 0, sx = 0, sxx = 0, sy = 0, sxy = 0, syy = 0;  // over (bk, confirm]
  for (std::size_t k = ws + 1; k <= confirm; ++k) {
    const double x = v.tau(k) - x0, y = v.h(k) - level;
    sn += 1, sx += x, sxx += x * x, sy += y, sxy += x * y, syy += y * y;
  }
  double rest_sse = 0.0;  // over [ws, bk]
  std::size_t best = ws;
  double best_sse = std::numeric_limits<double>::infinity();
  for (std::size_t bk = ws; bk < c; ++bk) {
    if (bk > ws) {  // row bk moves from the line to the level part
      const double x = v.tau(bk) - x0, y = v.h(bk) - level;
      sn -= 1, sx -= x, sxx -= x * x, sy -= y, sxy -= x * y, syy -= y * y;
    }
    const double yb = v.h(bk) - level;
    rest_sse += yb * yb;
    // Line through (tau(bk), level) with the least-squares rate: with
    // u = x - xb, Suu = Sxx - 2 xb Sx + n xb^2 and Suy = Sxy - xb Sy.
    const double xb = v.tau(bk) - x0;
    const double suu = sxx - 2.0 * xb * sx + sn * xb * xb;
    const double suy = sxy - xb * sy;
    const double line_sse = suu > 0 ? syy - suy * suy / suu : syy;
    const double sse = rest_sse + line_sse;
    if (sse < best_sse) {
      best_sse = sse;
      best = bk;
    }
  }
  return best;
}

/// Walks `v` from its start while the height stays at a resting level and
/// returns where the rest ends (docs/analysis-events.md, "Launch and
/// landing"). `threshold` is the departure threshold delta [m], `sigma` the
/// height noise [m], `dt` the median row interval [s].
RestEnd find_rest_end(const View& v, const EventOptions& o, double threshold, double sigma,
                      double dt) {
  RestEnd r;
  const std::size_t m = v.size();
  if (m == 0) return r;
  std::vector<unsigned char> included(m, 0);
  std::size_t rest_end = 1;  // positions [0, rest_end) are decided resting
  std::size_t span_begin = 0;
  double span_sum = 0.0, last_rest_h = v.h(0);
  std::size_t span_count = 0;
  auto include = [&](std::size_t k, bool use) {
    included[k] = use ? 1 : 0;
    if (use) {
      span_sum += v.h(k);
      ++span_count;
      last_rest_h = v.h(k);
    }
  };
  include(0, true);
  bool candidate = false;
  std::size_t c = 0;
  int sign = 0;
  std::size_t confirm = 0;
  for (std::size_t k = 1; k < m; ++k) {
    // The baseline: mean of the resting rows of the last baseline_span_s.
    while (span_begin + 1 < rest_end && v.tau(k) - v.tau(span_begin) > o.baseline_span_s) {
      if (included[span_begin]) {
        span_sum -= v.h(span_begin);
        --span_count;
      }
      ++span_begin;
    }
    const double b = span_count > 0 ? span_sum / static_cast<double>(span_count) : last_rest_h;
    const double d = v.h(k) - b;
    if (!candidate) {
      if (std::fabs(d) <= threshold) {
        include(k, true);
        rest_end = k + 1;
      } else {
        candidate = true;
        c = k;
        sign = d > 0 ? 1 : -1;
      }
      continue;
    }
    if (d * sign > threshold / 2.0) {
      if (v.tau(k) - v.tau(c) >= o.launch_sustain_s) {
        confirm = k;
        r.departed = true;
        break;
      }
      continue;
    }
    // A transient (the payload lifted by hand, a pressure wave): its rows
    // join the rest but only those within the threshold count in the mean.
    for (std::size_t j = c; j <= k; ++j) include(j, std::fabs(v.h(j) - b) <= threshold);
    rest_end = k + 1;
    candidate = false;
  }
  if (!r.departed) {
    // No departure: everything is rest.
    r.last_rest = m - 1;
    r.rest_s = v.tau(m - 1) - v.tau(0);
    double s = 0;
    std::size_t n = 0;
    for (std::size_t k = 0; k < m; ++k)
      if (included[k]) s += v.h(k), ++n;
    r.level_m = n > 0 ? s / static_cast<double>(n) : kMissing;
    return r;
  }
  r.sign = sign;

  // Walk back to the last row that had not yet started to move: within
  // max(2 sigma, delta/5) of the rest level.
  const double level0 = span_count > 0 ? span_sum / static_cast<double>(span_count) : last_rest_h;
  const double quiet = std::max(2.0 * sigma, threshold / 5.0);
  std::size_t end = rest_end;
  while (end > 1 && included[end - 1] && (v.h(end - 1) - level0) * sign > quiet) --end;
  const std::size_t walk_back = end - 1;

  // The rest level: mean of the resting rows of the baseline span before it.
  {
    double s = 0;
    std::size_t n = 0;
    for (std::size_t k = walk_back + 1; k-- > 0;) {
      if (v.tau(walk_back) - v.tau(k) > o.baseline_span_s) break;
      if (included[k]) s += v.h(k), ++n;
    }
    r.level_m = n > 0 ? s / static_cast<double>(n) : level0;
  }
  const double level = r.level_m;

  // Refine with a hinge fit (see hinge_break).
  const double back_s = std::max(2.0 * o.launch_sustain_s, 10.0 * dt);
  std::size_t ws = walk_back;
  while (ws > 0 && v.tau(walk_back) - v.tau(ws - 1) <= back_s) --ws;
  const std::size_t best = hinge_break(v, ws, c, confirm, level);
  r.last_rest = best;
  r.rest_s = v.tau(best) - v.tau(0);
  // Trend of the rest's last max(rest_min_s, baseline_span_s).
  const double trend_span = std::max(o.rest_min_s, o.baseline_span_s);
  std::size_t ts = best;
  while (ts > 0 && v.tau(best) - v.tau(ts - 1) <= trend_span) --ts;
  r.trend_mps = std::fabs(slope(v, ts, best, included));
  return r;
}

FlightEvent event_at(const FlightSeries& series, std::size_t row) {
  const FlightPoint& p = series.points[row];
  FlightEvent e;
  e.index = row;
  e.time_s = p.time_s;
  e.height_m = p.height_m;
  e.low_m = p.low_m;
  e.high_m = p.high_m;
  return e;
}

void check_options(const EventOptions& o) {
  auto positive = [](double v, const char* name) {
    if (!(v > 0.0) || !std::isfinite(v)) throw usage_error(fmt::format("event option {} must be positive", name));
  };
  auto non_negative = [](double v, const char* name) {
    if (!(v >= 0.0) || !std::isfinite(v))
      throw usage_error(fmt::format("event option {} must not be negative", name));
  };
  positive(o.launch_climb_m, "launch_climb_m");
  positive(o.launch_sustain_s, "launch_sustain_s");
  positive(o.rest_speed_mps, "rest_speed_mps");
  non_negative(o.rest_min_s, "rest_min_s");
  positive(o.float_min_s, "float_min_s");
  positive(o.float_speed_mps, "float_speed_mps");
  positive(o.burst_drop_mps, "burst_drop_mps");
  positive(o.burst_window_s, "burst_window_s");
  non_negative(o.noise_multiple, "noise_multiple");
  positive(o.baseline_span_s, "baseline_span_s");
  non_negative(o.gap_s, "gap_s");
  non_negative(o.float_bridge_s, "float_bridge_s");
}

}  // namespace

bool usable_point(const FlightPoint& point) {
  return (point.flags & kFlagSpike) == 0 && std::isfinite(point.height_m) &&
         std::isfinite(point.time_s);
}

std::vector<std::size_t> usable_indices(const FlightSeries& series) {
  std::vector<std::size_t> rows;
  rows.reserve(series.points.size());
  double last = -std::numeric_limits<double>::infinity();
  for (std::size_t i = 0; i < series.points.size(); ++i) {
    const FlightPoint& p = series.points[i];
    if (!usable_point(p) || !(p.time_s > last)) continue;
    rows.push_back(i);
    last = p.time_s;
  }
  return rows;
}

FlightEvents detect_events(const FlightSeries& series, const EventOptions& o) {
  check_options(o);
  FlightEvents ev;
  const auto& pts = series.points;
  for (const FlightPoint& p : pts)
    if (p.flags & kFlagSpike) ++ev.spike_rows;
  const std::vector<std::size_t> rows = usable_indices(series);
  const std::size_t m = rows.size();
  ev.usable_rows = m;
  {
    std::size_t unusable = pts.size() - m - ev.spike_rows;
    if (unusable > 0)
      ev.notes.push_back(fmt::format(
          "{} row(s) without a finite height or with a time not after the previous row's were not used",
          unusable));
  }
  if (m < 3) {
    ev.notes.push_back(fmt::format("no events: only {} usable row(s)", m));
    if (m > 0) {
      std::size_t top = rows[0];
      for (std::size_t r : rows)
        if (pts[r].height_m > pts[top].height_m) top = r;
      ev.apogee = event_at(series, top);
    }
    return ev;
  }
  auto t = [&](std::size_t k) { return pts[rows[k]].time_s; };
  auto h = [&](std::size_t k) { return static_cast<double>(pts[rows[k]].height_m); };

  // Sampling interval, gaps.
  {
    std::vector<double> dts;
    dts.reserve(m - 1);
    for (std::size_t k = 1; k < m; ++k) dts.push_back(t(k) - t(k - 1));
    ev.sample_interval_s = median_in_place(dts);
  }
  const double dt = ev.sample_interval_s;
  ev.gap_s = o.gap_s > 0 ? o.gap_s : std::max(10.0 * dt, 10.0);
  std::vector<unsigned char> gap_before(m, 0);  // interval (k-1, k] is a gap
  for (std::size_t k = 1; k < m; ++k) {
    const double d = t(k) - t(k - 1);
    if (d > ev.gap_s) {
      gap_before[k] = 1;
      ++ev.gap_count;
      ev.gap_total_s += d;
    }
  }
  if (ev.gap_count > 0)
    ev.notes.push_back(fmt::format("{} gap(s) longer than {:g} s without data (total {:.1f} s)",
                                   ev.gap_count, ev.gap_s, ev.gap_total_s));

  // Height noise from second differences (a straight climb cancels):
  // e = (h[k+1]-h[k]) - r (h[k]-h[k-1]), r = dt2/dt1, var e = (1 + (1+r)^2 + r^2) sigma^2
  // for independent noise; sigma = 1.4826 median|e| / sqrt(that) (normal MAD).
  {
    std::vector<double> e;
    e.reserve(m);
    for (std::size_t k = 1; k + 1 < m; ++k) {
      if (gap_before[k] || gap_before[k + 1]) continue;
      const double r = (t(k + 1) - t(k)) / (t(k) - t(k - 1));
      const double d2 = (h(k + 1) - h(k)) - r * (h(k) - h(k - 1));
      e.push_back(std::fabs(d2) / std::sqrt(1.0 + (1.0 + r) * (1.0 + r) + r * r));
    }
    // 1.4826 MAD estimates sigma for normal data (Hampel 1974).
    ev.noise_sigma_m = e.empty() ? 0.0 : kMadToSigma * median_in_place(e);
  }
  const double sigma = ev.noise_sigma_m;
  const double threshold = std::max(o.launch_climb_m, o.noise_multiple * sigma);
  ev.threshold_m = threshold;

  // Launch: the end of the rest at the start.
  const View fwd(series, rows, true);
  const RestEnd start = find_rest_end(fwd, o, threshold, sigma, dt);
  std::size_t from = 0, to = m - 1;  // positions bounding the flight
  bool flight = true;
  if (!start.departed) {
    flight = false;
    ev.notes.push_back(fmt::format(
        "no flight found: the height never left its resting level by more than {:.1f} m for {:g} s",
        threshold, o.launch_sustain_s));
  } else if (start.sign < 0) {
    ev.starts_in_flight = true;
    ev.notes.push_back(fmt::format(
        "no launch: the first sustained departure from the starting level, at {:.1f} s, is a descent "
        "(the log starts in flight)",
        t(start.last_rest)));
  } else if (start.rest_s < o.rest_min_s || start.trend_mps > o.rest_speed_mps) {
    ev.starts_in_flight = true;
    if (start.rest_s < o.rest_min_s)
      ev.notes.push_back(fmt::format(
          "no launch: the log starts in flight (no rest of at least {:g} s before the first climb, "
          "{:.1f} s found)",
          o.rest_min_s, start.rest_s));
    else
      ev.notes.push_back(fmt::format(
          "no launch: the log starts in flight (the height before the first climb drifts at "
          "{:.2f} m/s, more than {:g} m/s for a rest)",
          start.trend_mps, o.rest_speed_mps));
  } else {
    from = start.last_rest;
    ev.launch = event_at(series, rows[from]);
    ev.launch_rest_height_m = start.level_m;
  }

  // Landing: the same walk from the end, backwards in time.
  if (flight) {
    const View bwd(series, rows, false);
    const RestEnd end = find_rest_end(bwd, o, threshold, sigma, dt);
    const std::size_t pos = end.departed ? m - 1 - end.last_rest : 0;
    if (!end.departed) {
      ev.ends_in_flight = true;
      ev.notes.push_back("no landing: no rest found at the end of the log");
    } else if (end.rest_s < o.rest_min_s) {
      ev.ends_in_flight = true;
      ev.notes.push_back(fmt::format(
          "no landing: the log ends in flight (no rest of at least {:g} s at the end, {:.1f} s found)",
          o.rest_min_s, end.rest_s));
    } else if (end.trend_mps > o.rest_speed_mps) {
      ev.ends_in_flight = true;
      ev.notes.push_back(fmt::format(
          "no landing: the log ends in flight (the height at the end drifts at {:.2f} m/s, more "
          "than {:g} m/s for a rest)",
          end.trend_mps, o.rest_speed_mps));
    } else if (pos <= from) {
      ev.ends_in_flight = true;
      ev.notes.push_back("no landing: the final rest does not begin after the launch");
    } else {
      to = pos;
      ev.landing = event_at(series, rows[to]);
      ev.landing_rest_height_m = end.level_m;
    }
  }

  // Apogee: the highest usable row of the flight (the whole log without one).
  std::size_t top = from;
  for (std::size_t k = from; k <= to; ++k)
    if (h(k) > h(top)) top = k;
  ev.apogee = event_at(series, rows[top]);
  if (ev.landing && std::isfinite(ev.landing_rest_height_m) &&
      ev.landing_rest_height_m >= h(top) - threshold)
    ev.notes.push_back(
        "the final rest is at the top of the flight: landed on higher ground, or the log ends "
        "while hovering");

  // Floats: runs of rows with |vspeed| < float_speed_mps in the air.
  std::vector<std::pair<std::size_t, std::size_t>> float_pos;  // positions of each float
  if (flight) {
    bool any_vspeed = false;
    for (std::size_t k = from; k <= to && !any_vspeed; ++k)
      any_vspeed = std::isfinite(pts[rows[k]].vspeed_mps);
    if (!any_vspeed)
      ev.notes.push_back("no vertical speed in the series: floats not searched");
    auto slow = [&](std::size_t k) {
      const double vs = pts[rows[k]].vspeed_mps;
      return std::isfinite(vs) && std::fabs(vs) < o.float_speed_mps;
    };
    auto near_ground = [&](double level) {
      return (std::isfinite(ev.launch_rest_height_m) &&
              std::fabs(level - ev.launch_rest_height_m) <= threshold) ||
             (std::isfinite(ev.landing_rest_height_m) &&
              std::fabs(level - ev.landing_rest_height_m) <= threshold);
    };
    auto close_run = [&](std::size_t a, std::size_t b) {
      if (t(b) - t(a) < o.float_min_s) return;
      double s = 0;
      std::size_t n = 0;
      for (std::size_t k = a; k <= b; ++k)
        if (slow(k)) s += h(k), ++n;
      const double mean = s / static_cast<double>(n);
      if (near_ground(mean)) return;  // an intermediate touchdown is not a float
      FlightSegment seg;
      seg.start = event_at(series, rows[a]);
      seg.end = event_at(series, rows[b]);
      seg.mean_height_m = mean;
      ev.floats.push_back(seg);
      float_pos.emplace_back(a, b);
    };
    bool in_run = false;
    std::size_t rs = 0, re = 0;
    std::size_t last_gap = 0;  // latest position k with gap_before[k]
    for (std::size_t k = from; k <= to; ++k) {
      if (gap_before[k]) last_gap = k;
      if (!slow(k)) continue;
      if (in_run) {
        const bool adjacent = k == re + 1 && !gap_before[k];
        const bool bridged = last_gap <= re && t(k) - t(re) <= o.float_bridge_s &&
                             std::fabs(h(k) - h(re)) <= threshold;
        if (adjacent || bridged) {
          re = k;
          continue;
        }
        close_run(rs, re);
      }
      in_run = true;
      rs = re = k;
    }
    if (in_run) close_run(rs, re);
  }
  // Burst or apogee: the fastest fall within burst_window_s after the top,
  // from vspeed and from the mean fall since the top (over at least
  // max(3 dt, 5 s), which keeps the noise of the top out of it). When the
  // highest row lies inside a float, the top ends where the float ends (a
  // float balloon cut down after hours at its ceiling).
  std::size_t top_end = top;
  for (const auto& [a, b] : float_pos) {
    if (a > top || top > b) continue;
    top_end = b;
    // The float's end from |vspeed| comes early by up to half the vspeed
    // window; refine it with the hinge fit: level = mean of the float's
    // last baseline_span_s, the fall up to launch_sustain_s after it first
    // drops below level - delta.
    double sum = 0;
    std::size_t n = 0;
    for (std::size_t k = b + 1; k-- > a;) {
      if (t(b) - t(k) > o.baseline_span_s) break;
      sum += h(k), ++n;
    }
    const double level = sum / static_cast<double>(n);
    std::size_t c = b + 1;
    while (c < m && t(c) - t(b) <= o.burst_window_s && h(c) >= level - threshold) ++c;
    if (c < m && h(c) < level - threshold && !gap_before[c]) {
      std::size_t confirm = c;
      while (confirm + 1 < m && t(confirm + 1) - t(c) <= o.launch_sustain_s) ++confirm;
      const double back_s = std::max(2.0 * o.launch_sustain_s, 10.0 * dt);
      std::size_t ws = b;
      while (ws > a && t(b) - t(ws - 1) <= back_s) --ws;
      top_end = hinge_break(fwd, ws, c, confirm, level);
    }
  }
  if (!flight) {
    // No flight: no burst to tell.
  } else if (top_end + 1 >= m) {
    ev.notes.push_back("the log ends at the top of the flight: burst or apogee cannot be told");
  } else {
    const double t_top = t(top_end), h_top = h(top_end);
    const double min_span = std::max(3.0 * dt, 5.0);
    double fall = -std::numeric_limits<double>::infinity();
    for (std::size_t k = top_end + 1; k < m; ++k) {
      const double since = t(k) - t_top;
      if (since > o.burst_window_s) {
        // A gap at the top (telemetry lost at burst): the mean fall to the
        // first row after it is a lower bound of the fastest fall.
        if (k == top_end + 1) fall = (h_top - h(k)) / since;
        break;
      }
      const double vs = pts[rows[k]].vspeed_mps;
      if (std::isfinite(vs)) fall = std::max(fall, -vs);
      if (since >= min_span) fall = std::max(fall, (h_top - h(k)) / since);
    }
    if (std::isfinite(fall)) {
      ev.fall_rate_mps = fall;
      if (fall >= o.burst_drop_mps) {
        ev.apogee_kind = ApogeeKind::kBurst;
        ev.burst = event_at(series, rows[top_end]);
        if (top_end != top)
          ev.notes.push_back(fmt::format(
              "the top is a float ending in a burst at {:.1f} s; the highest row ({:.1f} m at "
              "{:.1f} s) lies inside the float",
              t(top_end), h(top), t(top)));
      }
    }
  }
  return ev;
}

}  // namespace baroz
