// Summary writers; see summary_writer.hpp.
#include "baroz/output/summary_writer.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <string_view>
#include <utility>
#include <vector>

#include "baroz/core/time.hpp"
#include "baroz/output/json_writer.hpp"

namespace baroz {
namespace {

/// Rounds to 0.001 (the summary's resolution for m, s and m/s); NaN stays NaN.
double r3(double v) { return std::isfinite(v) ? std::round(v * 1000.0) / 1000.0 : v; }

/// A time of the series: RFC 3339 UTC or seconds on the log's clock.
struct TimeValue {
  bool absolute = false;
  std::string text;       // when absolute
  double seconds = 0.0;   // when not
};

TimeValue time_of(const FlightSeries& series, double elapsed_s) {
  TimeValue tv;
  if (series.absolute_time) {
    tv.absolute = true;
    tv.text = format_rfc3339_utc(series.start_time_ns + std::llround(elapsed_s * 1e9));
  } else {
    tv.seconds = r3(static_cast<double>(series.start_time_ns) * 1e-9 + elapsed_s);
  }
  return tv;
}

void write_time(JsonWriter& w, const FlightSeries& series, std::string_view key,
                const std::optional<double>& elapsed_s) {
  w.key(key);
  if (!elapsed_s) {
    w.null();
    return;
  }
  const TimeValue tv = time_of(series, *elapsed_s);
  if (tv.absolute)
    w.value(tv.text);
  else
    w.value(tv.seconds);
}

void write_number(JsonWriter& w, std::string_view key, double v) {
  w.key(key);
  w.value(r3(v));  // NaN -> null
}

std::optional<double> when(const std::optional<FlightEvent>& e) {
  if (!e) return std::nullopt;
  return e->time_s;
}

double elapsed_or_nan(const std::optional<FlightEvent>& e) { return e ? e->time_s : kMissing; }

double altitude(const FlightSeries& series, double height_m) {
  return std::isfinite(series.elevation_m) ? series.elevation_m + height_m : kMissing;
}

const char* kind_name(ApogeeKind k) { return k == ApogeeKind::kBurst ? "burst" : "apogee"; }

/// ASCII only: every byte >= 0x80 or control byte becomes '?'.
std::string ascii(std::string_view s) {
  std::string out(s);
  for (char& c : out) {
    const auto u = static_cast<unsigned char>(c);
    if (u >= 0x80 || u < 0x20 || u == 0x7f) c = '?';
  }
  return out;
}

}  // namespace

std::string summary_json(const FlightSeries& series, const FlightEvents& ev,
                         const FlightSummary& s) {
  std::optional<double> t_end;
  if (std::isfinite(s.duration_s)) t_end = s.duration_s;

  JsonWriter w(JsonStyle::kPretty);
  w.begin_object();
  w.member("source", series.source);
  w.member("model", series.model);
  w.member("confidence", series.confidence);
  w.member("time_basis", series.absolute_time ? "utc" : "log_clock");
  write_time(w, series, "start_time", series.points.empty() ? std::nullopt : std::optional<double>(0.0));
  write_time(w, series, "end_time", t_end);
  write_number(w, "duration_s", s.duration_s);

  write_time(w, series, "launch_time", when(ev.launch));
  write_number(w, "launch_elapsed_s", elapsed_or_nan(ev.launch));
  write_number(w, "launch_height_m", s.launch_height_m);

  w.key("apogee_kind");
  if (ev.apogee)
    w.value(kind_name(ev.apogee_kind));
  else
    w.null();
  write_time(w, series, "apogee_time", when(ev.apogee));
  write_number(w, "apogee_elapsed_s", elapsed_or_nan(ev.apogee));
  write_time(w, series, "burst_time", when(ev.burst));
  write_number(w, "burst_elapsed_s", elapsed_or_nan(ev.burst));
  write_number(w, "max_height_m", s.max_height_m);
  write_number(w, "max_height_low_m", s.max_height_low_m);
  write_number(w, "max_height_high_m", s.max_height_high_m);
  write_number(w, "elevation_m", series.elevation_m);
  write_number(w, "max_altitude_m", altitude(series, s.max_height_m));

  write_time(w, series, "landing_time", when(ev.landing));
  write_number(w, "landing_elapsed_s", elapsed_or_nan(ev.landing));
  write_number(w, "landing_height_m", s.landing_height_m);

  write_number(w, "flight_duration_s", s.flight_duration_s);
  w.member("starts_in_flight", ev.starts_in_flight);
  w.member("ends_in_flight", ev.ends_in_flight);
  write_number(w, "mean_ascent_rate_mps", s.mean_ascent_rate_mps);
  write_number(w, "mean_descent_rate_mps", s.mean_descent_rate_mps);
  write_number(w, "max_ascent_rate_mps", s.max_ascent_rate_mps);
  write_number(w, "max_descent_rate_mps", s.max_descent_rate_mps);

  w.key("floats").begin_array();
  for (const FlightSegment& f : ev.floats) {
    w.begin_object();
    write_number(w, "start_elapsed_s", f.start.time_s);
    write_number(w, "end_elapsed_s", f.end.time_s);
    write_number(w, "duration_s", f.end.time_s - f.start.time_s);
    write_number(w, "mean_height_m", f.mean_height_m);
    w.end_object();
  }
  w.end_array();

  w.key("time_above").begin_array();
  for (const TimeAbove& ta : s.time_above) {
    w.begin_object();
    write_number(w, "height_m", ta.height_m);
    write_number(w, "duration_s", ta.duration_s);
    w.end_object();
  }
  w.end_array();

  w.key("phases").begin_array();
  for (const PhaseStats& p : s.phases) {
    w.begin_object();
    w.member("name", p.name);
    w.member("complete", p.complete);
    write_number(w, "start_elapsed_s", p.start_s);
    write_number(w, "end_elapsed_s", p.end_s);
    write_number(w, "duration_s", p.duration_s);
    write_number(w, "start_height_m", p.start_height_m);
    write_number(w, "end_height_m", p.end_height_m);
    write_number(w, "min_height_m", p.min_height_m);
    write_number(w, "max_height_m", p.max_height_m);
    write_number(w, "mean_rate_mps", p.mean_rate_mps);
    write_number(w, "max_vspeed_mps", p.max_vspeed_mps);
    write_number(w, "min_vspeed_mps", p.min_vspeed_mps);
    w.member("rows", p.rows);
    w.end_object();
  }
  w.end_array();

  w.member("rows", s.rows);
  w.member("usable_rows", s.usable_rows);
  w.member("spike_rows", s.spike_rows);
  w.member("gap_count", ev.gap_count);
  write_number(w, "gap_total_s", ev.gap_total_s);

  w.key("detection").begin_object();
  write_number(w, "sample_interval_s", ev.sample_interval_s);
  write_number(w, "gap_s", ev.gap_s);
  write_number(w, "noise_sigma_m", ev.noise_sigma_m);
  write_number(w, "threshold_m", ev.threshold_m);
  write_number(w, "fall_rate_mps", ev.fall_rate_mps);
  w.end_object();

  // UDUNITS-2 unit string of every numeric member, by member name (nested
  // members included); "1" for dimensionless values and counts.
  const char* time_unit = series.absolute_time ? nullptr : "s";
  w.key("units").begin_object();
  w.member("confidence", "1");
  if (time_unit) {
    for (const char* k : {"start_time", "end_time", "launch_time", "apogee_time", "burst_time",
                          "landing_time"})
      w.member(k, time_unit);
  }
  for (const char* k : {"duration_s", "launch_elapsed_s", "apogee_elapsed_s", "burst_elapsed_s",
                        "landing_elapsed_s", "flight_duration_s", "start_elapsed_s",
                        "end_elapsed_s", "gap_total_s", "sample_interval_s", "gap_s"})
    w.member(k, "s");
  for (const char* k : {"launch_height_m", "max_height_m", "max_height_low_m", "max_height_high_m",
                        "elevation_m", "max_altitude_m", "landing_height_m", "mean_height_m",
                        "height_m", "start_height_m", "end_height_m", "min_height_m",
                        "noise_sigma_m", "threshold_m"})
    w.member(k, "m");
  for (const char* k : {"mean_ascent_rate_mps", "mean_descent_rate_mps", "max_ascent_rate_mps",
                        "max_descent_rate_mps", "mean_rate_mps", "max_vspeed_mps", "min_vspeed_mps",
                        "fall_rate_mps"})
    w.member(k, "m s-1");
  for (const char* k : {"rows", "usable_rows", "spike_rows", "gap_count"}) w.member(k, "1");
  w.end_object();

  // CF standard names (CF Standard Name Table): heights above the reference
  // are "height", heights above mean sea level "altitude".
  w.key("standard_names").begin_object();
  for (const char* k : {"launch_height_m", "max_height_m", "max_height_low_m", "max_height_high_m",
                        "landing_height_m", "mean_height_m", "height_m", "start_height_m",
                        "end_height_m", "min_height_m"})
    w.member(k, "height");
  w.member("max_altitude_m", "altitude");
  w.end_object();

  // Each term's share of the height variance (docs/uncertainty.md).
  auto budget = [&](const char* key, const BudgetAt& b) {
    w.key(key);
    if (!b.set) {
      w.null();
      return;
    }
    w.begin_object();
    write_number(w, "elapsed_s", b.elapsed_s);
    write_number(w, "height_m", b.height_m);
    write_number(w, "sigma_m", b.sigma_m);
    w.key("terms").begin_object();
    const double v = b.sigma_m * b.sigma_m;
    for (const auto& [name, sigma] : b.terms) {
      w.key(name).begin_object();
      write_number(w, "sigma_m", sigma);
      write_number(w, "variance_share", v > 0.0 ? sigma * sigma / v : 0.0);
      w.end_object();
    }
    w.end_object();
    w.end_object();
  };
  w.key("error_budget").begin_object();
  budget("at_max_height", series.budget_at_max);
  budget("at_end", series.budget_at_end);
  w.end_object();

  w.key("notes").begin_array();
  for (const std::string& n : s.notes) w.value(n);
  w.end_array();
  w.end_object();
  std::string out = w.take();
  out += '\n';
  return out;
}

std::string summary_text(const FlightSeries& series, const FlightEvents& ev,
                         const FlightSummary& s) {
  auto num = [](double v, const char* unit) {
    if (!std::isfinite(v)) return std::string("-");
    return fmt::format("{:.3f} {}", r3(v), unit);
  };
  auto time_text = [&](double elapsed_s) {
    if (!std::isfinite(elapsed_s)) return std::string("-");
    const TimeValue tv = time_of(series, elapsed_s);
    return tv.absolute ? tv.text : fmt::format("{:.3f} s", tv.seconds);
  };

  std::string out;
  std::vector<std::pair<std::string, std::string>> kv;
  auto add = [&](std::string label, std::string value) {
    kv.emplace_back(std::move(label), std::move(value));
  };
  auto flush = [&](const char* heading) {
    out += heading;
    out += '\n';
    std::size_t wlab = 0;
    for (const auto& [label, value] : kv) wlab = std::max(wlab, label.size());
    for (const auto& [label, value] : kv)
      out += fmt::format("  {:<{}}  {}\n", label, wlab, value);
    kv.clear();
  };

  add("source", ascii(series.source));
  add("model", ascii(series.model));
  add("band", fmt::format("{:g} % confidence", series.confidence * 100.0));
  add("time basis", series.absolute_time ? "UTC (RFC 3339)" : "log clock (s)");
  add("duration", num(s.duration_s, "s"));
  add("flight duration", num(s.flight_duration_s, "s"));
  add("rows", fmt::format("{} ({} used, {} spikes, {} gaps)", s.rows, s.usable_rows,
                          s.spike_rows, ev.gap_count));
  flush("flight");

  // The events table: fixed columns, right-aligned numbers.
  struct Row {
    std::string name, time, elapsed, height, low, high;
  };
  std::vector<Row> table;
  auto f3 = [](double v) { return std::isfinite(v) ? fmt::format("{:.3f}", r3(v)) : std::string("-"); };
  auto event_row = [&](const char* name, const std::optional<FlightEvent>& e) {
    if (!e) {
      table.push_back({name, "-", "-", "-", "-", "-"});
      return;
    }
    table.push_back({name, time_text(e->time_s), f3(e->time_s), f3(e->height_m), f3(e->low_m),
                     f3(e->high_m)});
  };
  table.push_back({"event", "time", "elapsed_s", "height_m", "low_m", "high_m"});
  event_row("launch", ev.launch);
  event_row("apogee", ev.apogee);
  if (ev.burst) event_row("burst", ev.burst);
  event_row("landing", ev.landing);
  std::size_t w[6] = {};
  for (const Row& r : table) {
    w[0] = std::max(w[0], r.name.size());
    w[1] = std::max(w[1], r.time.size());
    w[2] = std::max(w[2], r.elapsed.size());
    w[3] = std::max(w[3], r.height.size());
    w[4] = std::max(w[4], r.low.size());
    w[5] = std::max(w[5], r.high.size());
  }
  out += "events\n";
  for (const Row& r : table)
    out += fmt::format("  {:<{}}  {:<{}}  {:>{}}  {:>{}}  {:>{}}  {:>{}}\n", r.name, w[0], r.time,
                       w[1], r.elapsed, w[2], r.height, w[3], r.low, w[4], r.high, w[5]);

  add("max height", std::isfinite(s.max_height_m)
                        ? fmt::format("{} [{} .. {}]", num(s.max_height_m, "m"),
                                      f3(s.max_height_low_m), f3(s.max_height_high_m))
                        : std::string("-"));
  add("launch height", num(s.launch_height_m, "m"));
  add("landing height", num(s.landing_height_m, "m"));
  add("mean ascent rate", num(s.mean_ascent_rate_mps, "m/s"));
  add("mean descent rate", num(s.mean_descent_rate_mps, "m/s"));
  add("max ascent rate", num(s.max_ascent_rate_mps, "m/s"));
  add("max descent rate", num(s.max_descent_rate_mps, "m/s"));
  flush("heights and rates (descent rates positive)");

  if (!ev.floats.empty()) {
    for (std::size_t i = 0; i < ev.floats.size(); ++i) {
      const FlightSegment& f = ev.floats[i];
      add(fmt::format("float {}", i + 1),
          fmt::format("{} s .. {} s ({} s) at {} m", f3(f.start.time_s), f3(f.end.time_s),
                      f3(f.end.time_s - f.start.time_s), f3(f.mean_height_m)));
    }
    flush("floats (elapsed)");
  }
  if (!s.time_above.empty()) {
    for (const TimeAbove& ta : s.time_above)
      add(fmt::format("above {} m", f3(ta.height_m)), num(ta.duration_s, "s"));
    flush("time above");
  }
  for (const auto& [title, b] : {std::pair<const char*, const BudgetAt*>{"error budget at the "
                                                                        "maximum height",
                                                                        &series.budget_at_max},
                                 {"error budget at the end", &series.budget_at_end}}) {
    if (!b->set) continue;
    const double v = b->sigma_m * b->sigma_m;
    add("1 sigma", fmt::format("{} at {} m, {} s", num(b->sigma_m, "m"), f3(b->height_m),
                               f3(b->elapsed_s)));
    for (const auto& [name, sigma] : b->terms)
      add(name, fmt::format("{} ({:.1f} % of the variance)", num(sigma, "m"),
                            v > 0.0 ? 100.0 * sigma * sigma / v : 0.0));
    flush(title);
  }
  if (!s.notes.empty()) {
    out += "notes\n";
    for (const std::string& n : s.notes) out += "  - " + ascii(n) + '\n';
  }
  return out;
}

}  // namespace baroz
