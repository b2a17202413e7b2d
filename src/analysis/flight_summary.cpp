// The flight summary; see flight_summary.hpp and docs/analysis-events.md.
#include "baroz/analysis/flight_summary.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "baroz/core/error.hpp"

namespace baroz {
namespace {

double level_or(double level, const FlightEvent& e) {
  return std::isfinite(level) ? level : e.height_m;
}

/// Statistics of the usable rows with elapsed time in [t0, t1].
PhaseStats phase(const FlightSeries& series, const std::vector<std::size_t>& rows,
                 const char* name, double t0, double t1, bool complete) {
  PhaseStats ps;
  ps.name = name;
  ps.complete = complete;
  const auto& pts = series.points;
  double hi = -std::numeric_limits<double>::infinity(), lo = -hi;
  double up = -std::numeric_limits<double>::infinity(), down = -up;
  for (std::size_t r : rows) {
    const FlightPoint& p = pts[r];
    if (p.time_s < t0 || p.time_s > t1) continue;
    if (ps.rows == 0) {
      ps.start_s = p.time_s;
      ps.start_height_m = p.height_m;
    }
    ps.end_s = p.time_s;
    ps.end_height_m = p.height_m;
    ++ps.rows;
    hi = std::max(hi, static_cast<double>(p.height_m));
    lo = std::min(lo, static_cast<double>(p.height_m));
    if (std::isfinite(p.vspeed_mps)) {
      up = std::max(up, static_cast<double>(p.vspeed_mps));
      down = std::min(down, static_cast<double>(p.vspeed_mps));
    }
  }
  if (ps.rows == 0) return ps;
  ps.duration_s = ps.end_s - ps.start_s;
  ps.min_height_m = lo;
  ps.max_height_m = hi;
  if (ps.duration_s > 0) ps.mean_rate_mps = (ps.end_height_m - ps.start_height_m) / ps.duration_s;
  if (std::isfinite(up)) ps.max_vspeed_mps = up;
  if (std::isfinite(down)) ps.min_vspeed_mps = down;
  return ps;
}

/// Time with height > H over consecutive usable rows, the height linear
/// between rows; an interval longer than gap_s (no data) is not counted.
double time_above(const FlightSeries& series, const std::vector<std::size_t>& rows, double H,
                  double gap_s) {
  const auto& pts = series.points;
  double total = 0.0;
  for (std::size_t k = 1; k < rows.size(); ++k) {
    const FlightPoint& a = pts[rows[k - 1]];
    const FlightPoint& b = pts[rows[k]];
    const double dt = b.time_s - a.time_s;
    if (dt > gap_s) continue;
    const double ha = a.height_m, hb = b.height_m;
    if (ha > H && hb > H) {
      total += dt;
    } else if (ha > H || hb > H) {
      // One crossing of H: the part of the interval on the high side.
      total += dt * (std::max(ha, hb) - H) / std::fabs(hb - ha);
    }
  }
  return total;
}

}  // namespace

FlightSummary summarize_flight(const FlightSeries& series, const FlightEvents& ev,
                               const SummaryOptions& options) {
  if (!(options.gap_s >= 0.0)) throw usage_error("summary gap threshold must not be negative");
  for (double H : options.above_m)
    if (!std::isfinite(H)) throw usage_error("summary height for time above must be finite");

  FlightSummary s;
  s.notes = ev.notes;
  const auto& pts = series.points;
  s.rows = pts.size();
  const std::vector<std::size_t> rows = usable_indices(series);
  s.usable_rows = rows.size();
  for (const FlightPoint& p : pts)
    if (p.flags & kFlagSpike) ++s.spike_rows;

  // Duration of the log: the span of all row times.
  {
    double lo = std::numeric_limits<double>::infinity(), hi = -lo;
    for (const FlightPoint& p : pts) {
      if (!std::isfinite(p.time_s)) continue;
      lo = std::min(lo, p.time_s);
      hi = std::max(hi, p.time_s);
    }
    if (hi >= lo) s.duration_s = hi - lo;
  }
  if (rows.empty()) {
    s.notes.push_back("every value is null: the series has no usable row");
    return s;
  }
  const double t_first = pts[rows.front()].time_s;
  const double t_last = pts[rows.back()].time_s;

  if (ev.apogee) {
    s.max_height_m = ev.apogee->height_m;
    s.max_height_low_m = ev.apogee->low_m;
    s.max_height_high_m = ev.apogee->high_m;
  }
  if (ev.launch) s.launch_height_m = level_or(ev.launch_rest_height_m, *ev.launch);
  if (ev.landing) s.landing_height_m = level_or(ev.landing_rest_height_m, *ev.landing);

  if (ev.launch && ev.landing) s.flight_duration_s = ev.landing->time_s - ev.launch->time_s;
  if (ev.launch && ev.apogee && ev.apogee->time_s > ev.launch->time_s)
    s.mean_ascent_rate_mps =
        (ev.apogee->height_m - s.launch_height_m) / (ev.apogee->time_s - ev.launch->time_s);
  if (ev.landing && ev.apogee && ev.landing->time_s > ev.apogee->time_s)
    s.mean_descent_rate_mps =
        (ev.apogee->height_m - s.landing_height_m) / (ev.landing->time_s - ev.apogee->time_s);

  {
    double up = -std::numeric_limits<double>::infinity(), down = up;
    for (std::size_t r : rows) {
      const double vs = pts[r].vspeed_mps;
      if (!std::isfinite(vs)) continue;
      up = std::max(up, vs);
      down = std::max(down, -vs);
    }
    if (std::isfinite(up)) {
      s.max_ascent_rate_mps = up;
      s.max_descent_rate_mps = down;
    }
  }

  // Phases between the events.
  const bool flight = ev.launch.has_value() || ev.starts_in_flight;
  if (!flight) {
    s.phases.push_back(phase(series, rows, "stationary", t_first, t_last, true));
  } else {
    const double t_launch = ev.launch ? ev.launch->time_s : t_first;
    const double t_top = ev.apogee ? ev.apogee->time_s : t_last;
    const double t_landing = ev.landing ? ev.landing->time_s : t_last;
    if (ev.launch) s.phases.push_back(phase(series, rows, "pre_launch", t_first, t_launch, true));
    s.phases.push_back(phase(series, rows, "ascent", t_launch, t_top, ev.launch.has_value()));
    s.phases.push_back(phase(series, rows, "descent", t_top, t_landing, ev.landing.has_value()));
    if (ev.landing) s.phases.push_back(phase(series, rows, "post_landing", t_landing, t_last, true));
  }

  const double gap = options.gap_s > 0 ? options.gap_s
                     : std::isfinite(ev.gap_s) ? ev.gap_s
                                               : std::numeric_limits<double>::infinity();
  for (double H : options.above_m) s.time_above.push_back({H, time_above(series, rows, H, gap)});
  if (!options.above_m.empty() && ev.gap_count > 0)
    s.notes.push_back(fmt::format("time_above does not count the {} gap(s) longer than {:g} s",
                                  ev.gap_count, gap));

  // Why each missing value is missing (the keys are those of the JSON summary).
  const char* why_launch = ev.starts_in_flight ? "the log starts in flight" : "no launch was found";
  const char* why_landing = ev.ends_in_flight ? "the log ends in flight" : "no landing was found";
  if (!ev.launch)
    s.notes.push_back(fmt::format(
        "launch_time, launch_elapsed_s, launch_height_m, mean_ascent_rate_mps and "
        "flight_duration_s are null: {}",
        why_launch));
  if (!ev.landing)
    s.notes.push_back(fmt::format(
        "landing_time, landing_elapsed_s, landing_height_m, mean_descent_rate_mps and "
        "flight_duration_s are null: {}",
        why_landing));
  if (ev.apogee && !ev.burst) {
    if (!flight)
      s.notes.push_back("burst_time and burst_elapsed_s are null: no flight");
    else if (std::isfinite(ev.fall_rate_mps))
      s.notes.push_back(fmt::format(
          "burst_time and burst_elapsed_s are null: the top was not a burst (fastest fall "
          "within the burst window {:.1f} m/s)",
          ev.fall_rate_mps));
    else
      s.notes.push_back(
          "burst_time and burst_elapsed_s are null: no fall after the top to tell a burst");
  }
  if (ev.launch && ev.apogee && !std::isfinite(s.mean_ascent_rate_mps))
    s.notes.push_back("mean_ascent_rate_mps is null: the apogee is not after the launch");
  if (ev.landing && ev.apogee && !std::isfinite(s.mean_descent_rate_mps))
    s.notes.push_back("mean_descent_rate_mps is null: the landing is not after the apogee");
  if (!ev.apogee) s.notes.push_back("apogee_time, burst_time and max_height_m are null: no apogee");
  if (!std::isfinite(s.max_ascent_rate_mps))
    s.notes.push_back(
        "max_ascent_rate_mps and max_descent_rate_mps are null: the series has no vertical speed");
  return s;
}

}  // namespace baroz
