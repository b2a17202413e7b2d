#include "baroz/output/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <iterator>
#include <limits>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "baroz/core/caution.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/sample.hpp"
#include "baroz/core/time.hpp"

namespace baroz {
namespace {

// ---- Look (docs/plot.md): dark ink on white, a deep teal height line over a
// pale teal band, a warm accent for events, pale sand for float segments.
constexpr const char* kInk = "#1d2a30";          // text
constexpr const char* kMuted = "#46545b";        // secondary text
constexpr const char* kAxis = "#3b4a52";         // axis lines and ticks
constexpr const char* kGrid = "#e1e7e9";         // grid lines
constexpr const char* kLine = "#0b5d63";         // height line (deep teal)
constexpr const char* kBand = "#b5dad5";         // uncertainty band (pale teal)
constexpr const char* kAccent = "#b9531c";       // event markers and labels (burnt orange)
constexpr const char* kAccentGuide = "#dd9a68";  // event guide lines
constexpr const char* kFloat = "#f4e8cc";        // float segments (pale sand)
constexpr const char* kFloatText = "#7a5b1c";
constexpr const char* kSpike = "#8c2d1b";        // spike-flagged rows (brick)
constexpr const char* kTemp = "#4b3f7d";         // temperature lines (dusky violet)
constexpr const char* kTempSpread = "#dcd7ee";   // temperature spread per height row

constexpr double kTitleSize = 16.0;    // [px]
constexpr double kTextSize = 12.0;     // subtitle, axis labels, legend, events [px]
constexpr double kSmallSize = 11.0;    // tick labels, footer [px]
// Average advance of a sans-serif glyph as a fraction of the font size; only
// used to estimate label widths for placement (common practice: ~0.5-0.6 em).
constexpr double kCharWidthEm = 0.56;

constexpr double kGapFactor = 5.0;              // a step > 5 x median interval breaks the line
constexpr std::size_t kMedianSamples = 65536;   // intervals sampled for the median
constexpr std::size_t kMaxSpikeMarks = 5000;    // marks drawn at most (one per pixel)
constexpr double kTempBinPx = 3.0;              // height bin of the temperature panel [px]
constexpr int kTempBreakBins = 4;               // empty bins (12 px) that break a temperature line

constexpr double kInf = std::numeric_limits<double>::infinity();

bool finite(double v) { return std::isfinite(v); }

/// Appends a coordinate rounded to 0.1 px, without a trailing ".0".
void put_num(std::string& out, double v) {
  if (!finite(v)) v = 0.0;
  v = std::clamp(v, -1.0e6, 1.0e6);
  long long t = std::llround(v * 10.0);
  if (t < 0) {
    out += '-';
    t = -t;
  }
  fmt::format_to(std::back_inserter(out), "{}", t / 10);
  if (t % 10 != 0) {
    out += '.';
    out += static_cast<char>('0' + t % 10);
  }
}

std::string num(double v) {
  std::string s;
  put_num(s, v);
  return s;
}

/// A value for a label with `decimals` decimals, never "-0".
std::string label_number(double v, int decimals);

/// A coverage as a percentage: "95", "99.7".
std::string percent(double fraction) {
  const double p = fraction * 100.0;
  return std::fabs(p - std::round(p)) < 1e-9 ? label_number(p, 0) : label_number(p, 1);
}

std::string label_number(double v, int decimals) {
  std::string s = fmt::format("{:.{}f}", v, std::max(0, decimals));
  if (s.front() == '-' && s.find_first_not_of("-0.") == std::string::npos) s.erase(0, 1);
  return s;
}

double estimate_width(std::string_view text, double font_px) {
  std::size_t chars = 0;
  for (unsigned char c : text) chars += (c & 0xC0) != 0x80 ? 1 : 0;  // count UTF-8 code points
  return static_cast<double>(chars) * font_px * kCharWidthEm;
}

/// Greedy word wrap to lines of at most `max_width` px (estimated).
std::vector<std::string> wrap_text(std::string_view text, double font_px, double max_width) {
  std::vector<std::string> lines;
  std::string line;
  std::size_t pos = 0;
  while (pos < text.size()) {
    std::size_t end = text.find(' ', pos);
    if (end == std::string_view::npos) end = text.size();
    const std::string_view word = text.substr(pos, end - pos);
    pos = end + 1;
    if (word.empty()) continue;
    std::string candidate = line.empty() ? std::string(word) : line + ' ' + std::string(word);
    if (!line.empty() && estimate_width(candidate, font_px) > max_width) {
      lines.push_back(std::move(line));
      line = std::string(word);
    } else {
      line = std::move(candidate);
    }
  }
  if (!line.empty()) lines.push_back(std::move(line));
  return lines;
}

long long floor_div(long long a, long long b) {
  long long q = a / b;
  if ((a % b != 0) && ((a < 0) != (b < 0))) --q;
  return q;
}

std::string two_digits(long long v) { return fmt::format("{:02d}", v); }

std::string format_date(long long days) {
  const CivilDate d = civil_from_days(days);
  return fmt::format("{:04d}-{:02d}-{:02d}", d.year, d.month, d.day);
}

struct Box {
  double x0 = 0, y0 = 0, x1 = 1, y1 = 1;  ///< x0 left, y0 top, x1 right, y1 bottom [px]
  double width() const { return x1 - x0; }
  double height() const { return y1 - y0; }
};

struct Tick {
  double at = 0.0;  ///< position in data units (elapsed s, height unit, degC)
  std::string label;
};

/// What one pass over the series finds: spans, counts, the maximum.
struct Extents {
  double t_min = kInf, t_max = -kInf;      // [s] rows with a finite time
  double h_min = kInf, h_max = -kInf;      // [m] heights and band edges, spikes excluded
  double temp_min = kInf, temp_max = -kInf;// [degC] rows drawn in the temperature panel
  double max_height = -kInf;               // [m]
  std::size_t max_index = 0;
  std::size_t rows_with_height = 0, rows_nan_height = 0, rows_spike = 0, rows_temperature = 0;
};

Extents find_extents(const FlightSeries& series) {
  Extents e;
  for (std::size_t i = 0; i < series.points.size(); ++i) {
    const FlightPoint& p = series.points[i];
    if (!finite(p.time_s)) continue;
    e.t_min = std::min(e.t_min, p.time_s);
    e.t_max = std::max(e.t_max, p.time_s);
    if ((p.flags & kFlagSpike) != 0) {
      ++e.rows_spike;
      continue;
    }
    const double h = p.height_m;
    if (!finite(h)) {
      ++e.rows_nan_height;
      continue;
    }
    ++e.rows_with_height;
    const double lo = finite(p.low_m) ? std::min<double>(p.low_m, h) : h;
    const double hi = finite(p.high_m) ? std::max<double>(p.high_m, h) : h;
    e.h_min = std::min(e.h_min, lo);
    e.h_max = std::max(e.h_max, hi);
    if (h > e.max_height) {
      e.max_height = h;
      e.max_index = i;
    }
    if (finite(p.temperature_c)) {
      ++e.rows_temperature;
      e.temp_min = std::min<double>(e.temp_min, p.temperature_c);
      e.temp_max = std::max<double>(e.temp_max, p.temperature_c);
    }
  }
  return e;
}

/// Median of positive time steps, from at most kMedianSamples evenly spaced
/// steps; 0 when there is none.
double median_interval(const FlightSeries& series) {
  const std::size_t n = series.points.size();
  if (n < 2) return 0.0;
  const std::size_t stride = std::max<std::size_t>(1, (n - 1) / kMedianSamples);
  std::vector<double> steps;
  steps.reserve(std::min(n - 1, kMedianSamples) + 1);
  for (std::size_t i = 1; i < n; i += stride) {
    const double dt = series.points[i].time_s - series.points[i - 1].time_s;
    if (finite(dt) && dt > 0.0) steps.push_back(dt);
  }
  if (steps.empty()) return 0.0;
  auto mid = steps.begin() + static_cast<std::ptrdiff_t>(steps.size() / 2);
  std::nth_element(steps.begin(), mid, steps.end());
  return *mid;
}

/// Elapsed-time ticks in s, min or h as the span needs.
std::vector<Tick> elapsed_ticks(double t_min, double t_max, int target, std::string& axis_label) {
  const double span = t_max - t_min;
  double div = 1.0;
  std::string unit = "s";
  if (span > 5.0 * 3600.0) {
    div = 3600.0;
    unit = "h";
  } else if (span > 300.0) {
    div = 60.0;
    unit = "min";
  }
  axis_label = fmt::format("Elapsed time ({})", unit);
  const NiceTicks nt = nice_ticks(t_min / div, t_max / div, target);
  std::vector<Tick> ticks;
  const double eps = span * 1e-9;
  for (double v : nt.values) {
    const double t = v * div;
    if (t < t_min - eps || t > t_max + eps) continue;
    ticks.push_back({t, label_number(v, nt.decimals)});
  }
  return ticks;
}

/// UTC clock-time ticks at 1, 2, 5, 10, 15, 30 s; 1, 2, 5, 10, 15, 30 min;
/// 1, 2, 3, 6, 12 h; 1, 2, 5, 10 d (common practice for clock axes).
std::vector<Tick> clock_ticks(TimeNs start_ns, double t_min, double t_max, int target,
                              std::string& axis_label) {
  constexpr long long kDayNs = 86400LL * 1000000000LL;
  const long long start_day = floor_div(start_ns, kDayNs);
  const double offset_s = static_cast<double>(start_ns - start_day * kDayNs) * 1e-9;  // [s] into the day
  constexpr double kSteps[] = {1,     2,     5,     10,    15,     30,     60,     120,
                               300,   600,   900,   1800,  3600,   7200,   10800,  21600,
                               43200, 86400, 172800, 432000, 864000};
  const double span = t_max - t_min;
  double step = kSteps[std::size(kSteps) - 1];
  for (double s : kSteps) {
    if (span / s <= target) {
      step = s;
      break;
    }
  }
  const long long first_day = start_day + static_cast<long long>(std::floor((offset_s + t_min) / 86400.0));
  const long long last_day = start_day + static_cast<long long>(std::floor((offset_s + t_max) / 86400.0));
  axis_label = first_day == last_day ? fmt::format("Time (UTC), {}", format_date(first_day))
                                     : fmt::format("Time (UTC) from {}", format_date(first_day));
  std::vector<Tick> ticks;
  const auto k_first = static_cast<long long>(std::ceil((offset_s + t_min) / step - 1e-9));
  const auto k_last = static_cast<long long>(std::floor((offset_s + t_max) / step + 1e-9));
  for (long long k = k_first; k <= k_last && ticks.size() < 64; ++k) {
    const double a = static_cast<double>(k) * step;  // [s] since midnight of start_day
    const auto whole = static_cast<long long>(std::llround(a));
    const long long day = floor_div(whole, 86400);
    const long long sod = whole - day * 86400;
    std::string label;
    if (step >= 86400.0) {
      const CivilDate d = civil_from_days(start_day + day);
      label = fmt::format("{:02d}-{:02d}", d.month, d.day);
    } else if (step < 60.0) {
      label = two_digits(sod / 3600) + ':' + two_digits(sod / 60 % 60) + ':' + two_digits(sod % 60);
    } else {
      label = two_digits(sod / 3600) + ':' + two_digits(sod / 60 % 60);
    }
    ticks.push_back({a - offset_s, std::move(label)});
  }
  return ticks;
}

/// Per pixel column of the main panel: the rows kept for the line (first,
/// min, max, last in time order) and the band's extent.
struct Column {
  bool used = false;
  bool break_before = false;  ///< the line is broken (NaN, gap) before this column
  std::size_t first = 0, min_i = 0, max_i = 0, last = 0;
  float min_h = 0, max_h = 0;
  float band_lo = 0, band_hi = 0;
};

/// Per height bin (kTempBinPx) of the temperature panel and flight phase.
struct TempRow {
  std::size_t count = 0;
  double sum = 0.0;
  float min_t = 0, max_t = 0;
};

struct EventLabel {
  const FlightEvent* event = nullptr;
  std::string text;
  double x = 0.0;        // marker x [px]
  double label_x = 0.0;  // text anchor x [px]
  bool anchor_end = false;
  int row = 0;
};

class PlotWriter {
 public:
  PlotWriter(const FlightSeries& series, const FlightEvents& events, const PlotOptions& options,
             std::string& out)
      : series_(series), events_(events), options_(options), out_(out) {}

  void write();

 private:
  double x_of(double t) const {
    return main_.x0 + (t - t_lo_) / (t_hi_ - t_lo_) * main_.width();
  }
  /// `v` in the display unit.
  double y_of_value(double v) const { return main_.y1 - (v - y_lo_) * y_scale_; }
  /// `h` in metres.
  double y_of(double h) const { return y_of_value(h * unit_factor_); }
  double temp_x_of(double c) const {
    return temp_.x0 + (c - temp_ticks_.lo) / (temp_ticks_.hi - temp_ticks_.lo) * temp_.width();
  }

  void layout();
  void plan_events();
  void decimate();
  void write_header();
  void write_legend();
  void write_floats();
  void write_grid_and_axes();
  void write_band_and_line();
  void write_spikes();
  void write_events();
  void write_axes();
  void write_temperature_panel();
  void write_footer();

  void text(double x, double y, std::string_view content, double size, const char* fill,
            std::string_view extra = {});
  std::string event_time_text(double t) const;
  /// The top event drawn: the burst for a burst (the apogee when the burst
  /// is not given), else the apogee.
  const std::optional<FlightEvent>* top_event() const {
    if (events_.apogee_kind == ApogeeKind::kBurst && events_.burst) return &events_.burst;
    return &events_.apogee;
  }
  std::string height_text(double h_m) const;

  const FlightSeries& series_;
  const FlightEvents& events_;
  const PlotOptions& options_;
  std::string& out_;

  double width_ = 1000, height_ = 600;
  double unit_factor_ = 1.0;  // display units per metre
  std::string unit_;
  Extents ext_;
  bool has_data_ = false;
  bool show_temp_ = false;
  Box main_, temp_;
  std::vector<std::string> caution_lines_;
  double caution_y_ = 0.0;
  double t_lo_ = 0.0, t_hi_ = 1.0;  // [s]
  std::vector<Tick> x_ticks_;
  std::string x_label_;
  NiceTicks y_ticks_, temp_ticks_;
  double y_lo_ = 0.0, y_hi_ = 1.0;  // height axis range [display unit]
  double y_scale_ = 1.0;            // px per display unit
  std::vector<EventLabel> labels_;
  int label_rows_ = 0;

  std::vector<Column> columns_;
  std::array<std::vector<TempRow>, 2> temp_rows_;  // height bins; 0 ascent (to the apogee), 1 descent
  std::vector<std::pair<float, float>> spike_marks_;
  std::size_t spike_rows_drawn_ = 0;
};

void PlotWriter::text(double x, double y, std::string_view content, double size, const char* fill,
                      std::string_view extra) {
  out_ += "<text x=\"";
  put_num(out_, x);
  out_ += "\" y=\"";
  put_num(out_, y);
  out_ += '"';
  if (size != kSmallSize) {
    out_ += " font-size=\"";
    put_num(out_, size);
    out_ += '"';
  }
  out_ += " fill=\"";
  out_ += fill;
  out_ += '"';
  if (!extra.empty()) {
    out_ += ' ';
    out_ += extra;
  }
  out_ += '>';
  append_xml_escaped(out_, content);
  out_ += "</text>\n";
}

std::string PlotWriter::event_time_text(double t) const {
  if (series_.absolute_time) {
    const double ns = std::round(t * 1e9);
    if (std::fabs(ns) < 9.0e18) {
      const auto offset = static_cast<TimeNs>(ns);
      return format_rfc3339_utc(series_.start_time_ns + offset);
    }
  }
  return fmt::format("{:.1f} s", t);
}

std::string PlotWriter::height_text(double h_m) const {
  const double v = h_m * unit_factor_;
  return fmt::format("{} {}", label_number(v, std::fabs(v) < 100.0 ? 1 : 0), unit_);
}

void PlotWriter::layout() {
  if (options_.width_px < 480 || options_.width_px > 20000 || options_.height_px < 320 ||
      options_.height_px > 20000)
    throw usage_error(fmt::format("plot size {}x{} px is outside 480x320 to 20000x20000",
                                  options_.width_px, options_.height_px));
  width_ = options_.width_px;
  height_ = options_.height_px;
  unit_factor_ = 1.0 / metres_per(options_.height_unit);
  unit_ = std::string(unit_name(options_.height_unit));

  ext_ = find_extents(series_);
  has_data_ = ext_.rows_with_height > 0;
  show_temp_ = options_.temperature_panel && has_data_ && ext_.rows_temperature >= 2 &&
               options_.width_px >= 720;

  caution_lines_ = wrap_text(kCaution, kSmallSize, width_ - 48.0);
  caution_y_ = height_ - 10.0 - 14.0 * static_cast<double>(caution_lines_.size() - 1);
  const double bottom = caution_y_ - 22.0 - 34.0;
  const double right = width_ - 24.0;
  if (show_temp_) {
    const double temp_width = std::round(width_ * 0.2);
    temp_ = {right - temp_width, 78.0, right, bottom};
    main_ = {74.0, 78.0, temp_.x0 - 40.0, bottom};
  } else {
    main_ = {74.0, 78.0, right, bottom};
  }

  // Time axis: the data's span exactly.
  if (ext_.t_min <= ext_.t_max) {
    t_lo_ = ext_.t_min;
    t_hi_ = ext_.t_max;
  } else {
    t_lo_ = 0.0;
    t_hi_ = 1.0;
  }
  if (!(t_hi_ > t_lo_)) {
    t_lo_ -= 0.5;
    t_hi_ += 0.5;
  }
  const int x_target = std::max(3, static_cast<int>(main_.width() / 100.0));
  if (options_.clock_time && series_.absolute_time)
    x_ticks_ = clock_ticks(series_.start_time_ns, t_lo_, t_hi_, x_target, x_label_);
  else
    x_ticks_ = elapsed_ticks(t_lo_, t_hi_, x_target, x_label_);

  plan_events();

  // Height axis: nice ticks covering heights and band, with head room for
  // the event labels above the data.
  const int y_target = std::max(3, static_cast<int>(main_.height() / 60.0));
  const double lo = has_data_ ? ext_.h_min * unit_factor_ : 0.0;
  const double hi = has_data_ ? ext_.h_max * unit_factor_ : 1.0;
  y_ticks_ = nice_ticks(lo, hi, y_target);
  y_lo_ = y_ticks_.lo;
  y_hi_ = y_ticks_.hi;
  // When the data reach below the second tick by a sliver only (a band edge
  // a few metres below 0), the axis ends just below that tick instead of a
  // whole step lower: ticks then cover the data to within 5 % of a step.
  if (has_data_ && y_ticks_.values.size() >= 4 && y_ticks_.values[1] - lo <= 0.05 * y_ticks_.step) {
    y_ticks_.values.erase(y_ticks_.values.begin());
    y_ticks_.lo = y_ticks_.values.front();
    y_lo_ = y_ticks_.lo - 0.06 * y_ticks_.step;
  }
  const double room_px = label_rows_ > 0 ? 10.0 + 15.0 * label_rows_ : 0.0;
  for (int extra = 0; extra < 4; ++extra) {
    const double free_px = (y_hi_ - hi) / (y_hi_ - y_lo_) * main_.height();
    if (free_px >= room_px) break;
    y_ticks_.hi = (std::round(y_ticks_.hi / y_ticks_.step) + 1.0) * y_ticks_.step;  // k x step
    y_ticks_.values.push_back(y_ticks_.hi);
    y_hi_ = y_ticks_.hi;
  }

  y_scale_ = main_.height() / (y_hi_ - y_lo_);

  if (show_temp_) {
    const int t_target = std::max(3, static_cast<int>(temp_.width() / 50.0));
    temp_ticks_ = nice_ticks(ext_.temp_min, ext_.temp_max, t_target);
  }
}

void PlotWriter::plan_events() {
  struct Named {
    const std::optional<FlightEvent>* event;
    std::string word;
  };
  const std::optional<FlightEvent>* top = top_event();
  const Named named[] = {
      {&events_.launch, "launch"},
      {top, events_.apogee_kind == ApogeeKind::kBurst ? "burst" : "apogee"},
      {&events_.landing, "landing"}};
  const double eps = (t_hi_ - t_lo_) * 1e-9;
  for (const Named& n : named) {
    if (!n.event->has_value()) continue;
    const FlightEvent& e = **n.event;
    if (!finite(e.time_s) || e.time_s < t_lo_ - eps || e.time_s > t_hi_ + eps) continue;
    EventLabel label;
    label.event = &e;
    label.text = n.word;
    if (n.event == top && finite(e.height_m)) label.text += ' ' + height_text(e.height_m);
    label.x = x_of(e.time_s);
    labels_.push_back(std::move(label));
  }
  std::sort(labels_.begin(), labels_.end(),
            [](const EventLabel& a, const EventLabel& b) { return a.x < b.x; });
  // Stagger labels that would overlap onto up to three rows.
  std::vector<std::vector<std::pair<double, double>>> rows(3);
  for (EventLabel& l : labels_) {
    const double w = estimate_width(l.text, kTextSize);
    double left = l.x + 5.0;
    l.anchor_end = left + w > main_.x1;
    if (l.anchor_end) left = l.x - 5.0 - w;
    l.label_x = l.anchor_end ? l.x - 5.0 : l.x + 5.0;
    int row = 0;
    for (; row < 2; ++row) {
      bool clash = false;
      for (const auto& [a, b] : rows[static_cast<std::size_t>(row)])
        if (left < b + 6.0 && left + w > a - 6.0) clash = true;
      if (!clash) break;
    }
    rows[static_cast<std::size_t>(row)].emplace_back(left, left + w);
    l.row = row;
    label_rows_ = std::max(label_rows_, row + 1);
  }
}

void PlotWriter::decimate() {
  const auto ncols = static_cast<std::size_t>(std::max(1.0, std::round(main_.width())));
  columns_.assign(ncols, Column{});
  const auto nrows = static_cast<std::size_t>(std::max(1.0, std::round(main_.height())));
  const auto nbins = static_cast<std::size_t>(std::max(1.0, std::ceil(main_.height() / kTempBinPx)));
  if (show_temp_)
    for (auto& bins : temp_rows_) bins.assign(nbins, TempRow{});
  std::vector<std::uint8_t> spike_seen;  // one byte per pixel of the main panel
  if (ext_.rows_spike > 0) spike_seen.assign(ncols * nrows, 0);

  const double gap_limit = kGapFactor * median_interval(series_);
  const double col_scale = static_cast<double>(ncols) / (t_hi_ - t_lo_);
  const std::size_t apogee_index =
      events_.apogee ? events_.apogee->index : std::numeric_limits<std::size_t>::max();

  bool pending_break = false;
  bool have_prev = false;
  double prev_t = 0.0;
  std::size_t prev_col = 0;
  const std::size_t n = series_.points.size();
  for (std::size_t i = 0; i < n; ++i) {
    const FlightPoint& p = series_.points[i];
    const double t = p.time_s;
    if (!finite(t)) continue;
    const double cx = std::floor((t - t_lo_) * col_scale);
    const std::size_t c = cx <= 0.0 ? 0 : std::min(ncols - 1, static_cast<std::size_t>(cx));
    if ((p.flags & kFlagSpike) != 0) {
      if (finite(p.height_m) && spike_marks_.size() < kMaxSpikeMarks) {
        const double y = std::clamp(y_of(p.height_m), main_.y0, main_.y1);
        const auto r = std::min(nrows - 1, static_cast<std::size_t>(y - main_.y0));
        std::uint8_t& seen = spike_seen[c * nrows + r];
        if (seen == 0) {
          seen = 1;
          spike_marks_.emplace_back(static_cast<float>(x_of(t)), static_cast<float>(y));
        }
      }
      if (finite(p.height_m)) ++spike_rows_drawn_;
      continue;
    }
    const float h = p.height_m;
    if (!std::isfinite(h)) {
      pending_break = true;
      continue;
    }
    if (have_prev && gap_limit > 0.0 && t - prev_t > gap_limit) pending_break = true;
    Column& col = columns_[c];
    // A break inside one pixel column cannot be seen; only a break between
    // columns starts a new path (this also bounds the path count by ncols).
    if (pending_break && have_prev && c != prev_col) col.break_before = true;
    pending_break = false;
    const float lo = std::isfinite(p.low_m) ? std::min(p.low_m, h) : h;
    const float hi = std::isfinite(p.high_m) ? std::max(p.high_m, h) : h;
    if (!col.used) {
      col.used = true;
      col.first = col.min_i = col.max_i = col.last = i;
      col.min_h = col.max_h = h;
      col.band_lo = lo;
      col.band_hi = hi;
    } else {
      col.last = i;
      if (h < col.min_h) {
        col.min_h = h;
        col.min_i = i;
      }
      if (h > col.max_h) {
        col.max_h = h;
        col.max_i = i;
      }
      col.band_lo = std::min(col.band_lo, lo);
      col.band_hi = std::max(col.band_hi, hi);
    }
    have_prev = true;
    prev_t = t;
    prev_col = c;

    if (show_temp_ && std::isfinite(p.temperature_c)) {
      const double from_top = std::clamp(y_of(h) - main_.y0, 0.0, main_.height());
      const auto b = std::min(nbins - 1, static_cast<std::size_t>(from_top * (1.0 / kTempBinPx)));
      TempRow& row = temp_rows_[i > apogee_index ? 1 : 0][b];
      if (row.count == 0) {
        row.min_t = row.max_t = p.temperature_c;
      } else {
        row.min_t = std::min(row.min_t, p.temperature_c);
        row.max_t = std::max(row.max_t, p.temperature_c);
      }
      ++row.count;
      row.sum += p.temperature_c;
    }
  }
}

void PlotWriter::write_header() {
  const std::string title =
      !options_.title.empty()
          ? options_.title
          : (series_.source.empty() ? std::string("Height above the launch point")
                                    : "Height above the launch point - " + series_.source);
  out_ += "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out_ += fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{0}\" height=\"{1}\" "
      "viewBox=\"0 0 {0} {1}\" font-family=\"sans-serif\" font-size=\"{2}\">\n",
      options_.width_px, options_.height_px, kSmallSize);
  out_ += "<title>";
  append_xml_escaped(out_, title);
  out_ += "</title>\n<desc>";

  // The description: what is plotted, in words (W3C SVG 1.1, 5.4).
  std::string desc = fmt::format("Height against time of {}", series_.source.empty() ? "a log" : series_.source);
  if (!series_.model.empty()) desc += fmt::format(", {} model", series_.model);
  desc += fmt::format(", with the {} % band shaded. Rows: {}", percent(series_.confidence),
                      series_.points.size());
  desc += fmt::format(" ({} with a height", ext_.rows_with_height);
  if (ext_.rows_nan_height > 0) desc += fmt::format(", {} without", ext_.rows_nan_height);
  if (ext_.rows_spike > 0) desc += fmt::format(", {} spike-flagged, drawn as marks", ext_.rows_spike);
  desc += ").";
  if (has_data_) {
    const FlightPoint& top = series_.points[ext_.max_index];
    desc += fmt::format(" Maximum height {} (band {} to {}) at {}.", height_text(top.height_m),
                        height_text(std::isfinite(top.low_m) ? top.low_m : top.height_m),
                        height_text(std::isfinite(top.high_m) ? top.high_m : top.height_m),
                        event_time_text(top.time_s));
  } else {
    desc += " No row has a finite height.";
  }
  if (events_.launch) desc += fmt::format(" Launch at {}.", event_time_text(events_.launch->time_s));
  if (const auto& top = *top_event())
    desc += fmt::format(" {} at {}, {}.", events_.apogee_kind == ApogeeKind::kBurst ? "Burst" : "Apogee",
                        event_time_text(top->time_s), height_text(top->height_m));
  if (events_.landing) desc += fmt::format(" Landing at {}.", event_time_text(events_.landing->time_s));
  if (!events_.floats.empty()) desc += fmt::format(" Float segments: {}.", events_.floats.size());
  if (std::isfinite(series_.elevation_m))
    desc += fmt::format(" Site elevation {}.", height_text(series_.elevation_m));
  if (show_temp_) desc += " Right panel: air temperature against height, ascent and descent.";
  desc += fmt::format(" Lines are decimated to first, minimum, maximum and last row per pixel column ({} columns).",
                      columns_.size());
  append_xml_escaped(out_, desc);
  out_ += "</desc>\n";
  out_ += fmt::format("<rect width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>\n", options_.width_px,
                      options_.height_px);

  text(main_.x0 - 50.0, 26.0, title, kTitleSize, kInk, "font-weight=\"bold\" class=\"plot-title\"");
  std::string sub;
  if (!series_.model.empty()) sub += series_.model + " model \u00b7 ";
  sub += fmt::format("{} % band \u00b7 {} rows", percent(series_.confidence),
                     series_.points.size());
  if (has_data_) sub += " \u00b7 max " + height_text(series_.points[ext_.max_index].height_m);
  text(main_.x0 - 50.0, 45.0, sub, kTextSize, kMuted, "class=\"plot-subtitle\"");
}

void PlotWriter::write_legend() {
  double x = main_.x0 - 50.0;
  const double y = 64.0;
  out_ += "<g class=\"legend\">\n";
  auto item_text = [&](std::string_view label) {
    text(x, y + 4.0, label, kTextSize, kInk);
    x += estimate_width(label, kTextSize) + 18.0;
  };
  out_ += fmt::format("<path d=\"M{} {}h22\" stroke=\"{}\" stroke-width=\"2\" fill=\"none\"/>\n", num(x),
                      num(y), kLine);
  x += 27.0;
  item_text("height");
  out_ += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"22\" height=\"10\" fill=\"{}\"/>\n", num(x),
                      num(y - 5.0), kBand);
  x += 27.0;
  item_text(fmt::format("{} % band", percent(series_.confidence)));
  if (!labels_.empty()) {
    out_ += fmt::format(
        "<path d=\"M{0} {1}v12\" stroke=\"{2}\" stroke-dasharray=\"3 2\" fill=\"none\"/>"
        "<circle cx=\"{0}\" cy=\"{3}\" r=\"3.5\" fill=\"{4}\" stroke=\"#ffffff\"/>\n",
        num(x + 6.0), num(y - 6.0), kAccentGuide, num(y), kAccent);
    x += 17.0;
    item_text("event");
  }
  if (!events_.floats.empty()) {
    out_ += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"22\" height=\"10\" fill=\"{}\"/>\n", num(x),
                        num(y - 5.0), kFloat);
    x += 27.0;
    item_text("float");
  }
  if (spike_rows_drawn_ > 0) {
    out_ += fmt::format("<path d=\"M{} {}l5 5m0 -5l-5 5\" stroke=\"{}\" stroke-width=\"1.2\" fill=\"none\"/>\n",
                        num(x + 3.0), num(y - 2.5), kSpike);
    x += 14.0;
    item_text("spike-flagged row");
  }
  if (show_temp_) {
    out_ += fmt::format("<path d=\"M{} {}h22\" stroke=\"{}\" stroke-width=\"1.6\" fill=\"none\"/>\n", num(x),
                        num(y), kTemp);
    x += 27.0;
    item_text("temperature, ascent");
    out_ += fmt::format(
        "<path d=\"M{} {}h22\" stroke=\"{}\" stroke-width=\"1.6\" stroke-dasharray=\"5 3\" fill=\"none\"/>\n",
        num(x), num(y), kTemp);
    x += 27.0;
    item_text("descent");
  }
  out_ += "</g>\n";
}

void PlotWriter::write_floats() {
  if (events_.floats.empty()) return;
  out_ += fmt::format("<g class=\"floats\" fill=\"{}\">\n", kFloat);
  for (const FlightSegment& s : events_.floats) {
    if (!finite(s.start.time_s) || !finite(s.end.time_s)) continue;
    const double a = std::clamp(x_of(std::min(s.start.time_s, s.end.time_s)), main_.x0, main_.x1);
    const double b = std::clamp(x_of(std::max(s.start.time_s, s.end.time_s)), main_.x0, main_.x1);
    out_ += fmt::format("<rect class=\"float\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>\n", num(a),
                        num(main_.y0), num(std::max(b - a, 1.0)), num(main_.height()));
    if (b - a >= 30.0) text((a + b) / 2.0, main_.y1 - 6.0, "float", kSmallSize, kFloatText, "text-anchor=\"middle\"");
  }
  out_ += "</g>\n";
}

void PlotWriter::write_grid_and_axes() {
  // Grid.
  out_ += fmt::format("<g class=\"grid\" stroke=\"{}\" stroke-width=\"1\" fill=\"none\">\n<path d=\"", kGrid);
  for (double v : y_ticks_.values) {
    const double y = y_of_value(v);
    out_ += 'M';
    put_num(out_, main_.x0);
    out_ += ' ';
    put_num(out_, y);
    out_ += 'H';
    put_num(out_, main_.x1);
    if (show_temp_) {
      out_ += 'M';
      put_num(out_, temp_.x0);
      out_ += ' ';
      put_num(out_, y);
      out_ += 'H';
      put_num(out_, temp_.x1);
    }
  }
  for (const Tick& t : x_ticks_) {
    out_ += 'M';
    put_num(out_, x_of(t.at));
    out_ += ' ';
    put_num(out_, main_.y0);
    out_ += 'V';
    put_num(out_, main_.y1);
  }
  if (show_temp_) {
    for (double v : temp_ticks_.values) {
      out_ += 'M';
      put_num(out_, temp_x_of(v));
      out_ += ' ';
      put_num(out_, temp_.y0);
      out_ += 'V';
      put_num(out_, temp_.y1);
    }
  }
  out_ += "\"/>\n</g>\n";
}

void PlotWriter::write_band_and_line() {
  const auto& pts = series_.points;
  std::string band;
  std::string line;
  std::vector<std::pair<double, double>> upper, lower;
  std::size_t subpath_points = 0;
  double last_x = kInf, last_y = kInf;

  auto flush_band = [&] {
    if (upper.empty()) return;
    band += 'M';
    for (std::size_t k = 0; k < upper.size(); ++k) {
      if (k > 0) band += 'L';
      put_num(band, upper[k].first);
      band += ' ';
      put_num(band, upper[k].second);
    }
    for (std::size_t k = lower.size(); k-- > 0;) {
      band += 'L';
      put_num(band, lower[k].first);
      band += ' ';
      put_num(band, lower[k].second);
    }
    band += 'Z';
    upper.clear();
    lower.clear();
  };
  auto end_subpath = [&] {
    if (subpath_points == 1) line += "h0";  // a lone point: a dot (round caps)
    subpath_points = 0;
    last_x = last_y = kInf;
  };
  auto add_point = [&](std::size_t i) {
    const double x = std::round(x_of(pts[i].time_s) * 10.0) / 10.0;
    const double y = std::round(y_of(pts[i].height_m) * 10.0) / 10.0;
    if (x == last_x && y == last_y) return;
    line += subpath_points == 0 ? 'M' : 'L';
    put_num(line, x);
    line += ' ';
    put_num(line, y);
    last_x = x;
    last_y = y;
    ++subpath_points;
  };

  bool open = false;
  for (const Column& col : columns_) {
    if (!col.used) continue;
    if (open && col.break_before) {
      end_subpath();
      flush_band();
    }
    open = true;
    std::array<std::size_t, 4> order = {col.first, col.min_i, col.max_i, col.last};
    std::sort(order.begin(), order.end());
    for (std::size_t k = 0; k < order.size(); ++k)
      if (k == 0 || order[k] != order[k - 1]) add_point(order[k]);
    const double xa = x_of(pts[col.first].time_s);
    const double xb = x_of(pts[col.last].time_s);
    upper.emplace_back(xa, y_of(col.band_hi));
    lower.emplace_back(xa, y_of(col.band_lo));
    if (std::fabs(xb - xa) >= 0.05) {
      upper.emplace_back(xb, y_of(col.band_hi));
      lower.emplace_back(xb, y_of(col.band_lo));
    }
  }
  end_subpath();
  flush_band();

  out_ += fmt::format("<path class=\"band\" fill=\"{}\" stroke=\"none\" d=\"", kBand);
  out_ += band;
  out_ += "\"/>\n";
  out_ += fmt::format(
      "<path class=\"height\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.6\" stroke-linejoin=\"round\" "
      "stroke-linecap=\"round\" d=\"",
      kLine);
  out_ += line;
  out_ += "\"/>\n";
  if (!has_data_)
    text((main_.x0 + main_.x1) / 2.0, (main_.y0 + main_.y1) / 2.0, "no finite heights to plot", kTextSize, kMuted,
         "text-anchor=\"middle\" class=\"no-data\"");
}

void PlotWriter::write_spikes() {
  if (spike_marks_.empty()) return;
  out_ += fmt::format("<path class=\"spikes\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.2\" d=\"", kSpike);
  for (const auto& [x, y] : spike_marks_) {
    out_ += 'M';
    put_num(out_, x - 2.5);
    out_ += ' ';
    put_num(out_, y - 2.5);
    out_ += "l5 5m0 -5l-5 5";
  }
  out_ += "\"/>\n";
}

void PlotWriter::write_events() {
  if (labels_.empty()) return;
  out_ += "<g class=\"events\">\n";
  for (const EventLabel& l : labels_) {
    const FlightEvent& e = *l.event;
    const double label_y = main_.y0 + 14.0 + 15.0 * l.row;
    out_ += fmt::format("<g class=\"event\">\n<path d=\"M{0} {1}V{2}\" stroke=\"{3}\" stroke-width=\"1\" "
                        "stroke-dasharray=\"4 3\" fill=\"none\"/>\n",
                        num(l.x), num(label_y + 4.0), num(main_.y1), kAccentGuide);
    if (finite(e.height_m)) {
      const double y = std::clamp(y_of(e.height_m), main_.y0, main_.y1);
      out_ += fmt::format("<circle cx=\"{}\" cy=\"{}\" r=\"4\" fill=\"{}\" stroke=\"#ffffff\" stroke-width=\"1.2\"/>\n",
                          num(l.x), num(y), kAccent);
    }
    text(l.label_x, label_y, l.text, kTextSize, kAccent,
         l.anchor_end ? "text-anchor=\"end\" font-weight=\"bold\" class=\"event-label\""
                      : "font-weight=\"bold\" class=\"event-label\"");
    out_ += "</g>\n";
  }
  out_ += "</g>\n";
}

void PlotWriter::write_axes() {
  out_ += fmt::format("<g class=\"axes\" stroke=\"{}\" stroke-width=\"1\" fill=\"none\">\n<path d=\"M{} {}V{}H{}",
                      kAxis, num(main_.x0), num(main_.y0), num(main_.y1), num(main_.x1));
  for (double v : y_ticks_.values) {
    const double y = y_of_value(v);
    out_ += fmt::format("M{} {}h-5", num(main_.x0), num(y));
  }
  for (const Tick& t : x_ticks_) out_ += fmt::format("M{} {}v5", num(x_of(t.at)), num(main_.y1));
  if (show_temp_) {
    out_ += fmt::format("M{} {}V{}H{}", num(temp_.x0), num(temp_.y0), num(temp_.y1), num(temp_.x1));
    for (double v : temp_ticks_.values) out_ += fmt::format("M{} {}v5", num(temp_x_of(v)), num(temp_.y1));
  }
  out_ += "\"/>\n</g>\n";

  out_ += "<g class=\"y-ticks\" text-anchor=\"end\">\n";
  for (double v : y_ticks_.values) {
    const double y = y_of_value(v);
    text(main_.x0 - 8.0, y + 4.0, label_number(v, y_ticks_.decimals), kSmallSize, kInk);
  }
  out_ += "</g>\n<g class=\"x-ticks\" text-anchor=\"middle\">\n";
  for (const Tick& t : x_ticks_) text(x_of(t.at), main_.y1 + 17.0, t.label, kSmallSize, kInk);
  out_ += "</g>\n";
  const double mid_y = (main_.y0 + main_.y1) / 2.0;
  out_ += fmt::format("<text class=\"y-label\" x=\"20\" y=\"{0}\" transform=\"rotate(-90 20 {0})\" "
                      "text-anchor=\"middle\" font-size=\"{1}\" fill=\"{2}\">",
                      num(mid_y), kTextSize, kInk);
  append_xml_escaped(out_, fmt::format("Height ({})", unit_));
  out_ += "</text>\n";
  text((main_.x0 + main_.x1) / 2.0, main_.y1 + 35.0, x_label_, kTextSize, kInk,
       "text-anchor=\"middle\" class=\"x-label\"");

}

void PlotWriter::write_temperature_panel() {
  if (!show_temp_) return;
  out_ += "<g class=\"temperature-panel\">\n";
  out_ += "<g class=\"temperature-ticks\" text-anchor=\"middle\">\n";
  for (double v : temp_ticks_.values)
    text(temp_x_of(v), temp_.y1 + 17.0, label_number(v, temp_ticks_.decimals), kSmallSize, kInk);
  out_ += "</g>\n";
  text((temp_.x0 + temp_.x1) / 2.0, temp_.y1 + 35.0, "Air temperature (\u00b0C)", kTextSize, kInk,
       "text-anchor=\"middle\" class=\"temperature-label\"");

  std::string spread;
  for (const auto& rows : temp_rows_) {
    for (std::size_t r = 0; r < rows.size(); ++r) {
      const TempRow& row = rows[r];
      if (row.count == 0) continue;
      const double a = temp_x_of(row.min_t);
      const double b = temp_x_of(row.max_t);
      if (b - a < 0.6) continue;
      spread += 'M';
      put_num(spread, a);
      spread += ' ';
      put_num(spread, temp_.y0 + (static_cast<double>(r) + 0.5) * kTempBinPx);
      spread += 'H';
      put_num(spread, b);
    }
  }
  out_ += fmt::format("<path class=\"temperature-spread\" fill=\"none\" stroke=\"{}\" stroke-width=\"{}\" d=\"{}\"/>\n",
                      kTempSpread, kTempBinPx, spread);
  for (std::size_t phase = 0; phase < 2; ++phase) {
    const auto& rows = temp_rows_[phase];
    std::string d;
    int empty_run = 0;
    bool open = false;
    std::size_t points = 0;
    for (std::size_t r = rows.size(); r-- > 0;) {  // bottom to top
      const TempRow& row = rows[r];
      if (row.count == 0) {
        if (++empty_run > kTempBreakBins) open = false;
        continue;
      }
      empty_run = 0;
      if (!open && points == 1) d += "h0";
      if (!open) points = 0;
      d += open ? 'L' : 'M';
      put_num(d, temp_x_of(row.sum / static_cast<double>(row.count)));
      d += ' ';
      put_num(d, temp_.y0 + (static_cast<double>(r) + 0.5) * kTempBinPx);
      open = true;
      ++points;
    }
    if (points == 1) d += "h0";
    if (d.empty()) continue;
    out_ += fmt::format("<path class=\"temperature-{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"1.6\" "
                        "stroke-linejoin=\"round\" stroke-linecap=\"round\"{} d=\"{}\"/>\n",
                        phase == 0 ? "ascent" : "descent", kTemp,
                        phase == 0 ? "" : " stroke-dasharray=\"5 3\"", d);
  }
  out_ += "</g>\n";
}

void PlotWriter::write_footer() {
  out_ += fmt::format("<text class=\"caution\" font-size=\"{}\" fill=\"{}\">", kSmallSize, "#333333");
  for (std::size_t k = 0; k < caution_lines_.size(); ++k) {
    out_ += "<tspan x=\"24\" y=\"";
    put_num(out_, caution_y_ + 14.0 * static_cast<double>(k));
    out_ += "\">";
    append_xml_escaped(out_, caution_lines_[k]);
    out_ += "</tspan>";
  }
  out_ += "</text>\n</svg>\n";
}

void PlotWriter::write() {
  layout();
  decimate();
  out_.reserve(out_.size() + 64 * 1024);
  write_header();
  write_legend();
  write_floats();
  write_grid_and_axes();
  write_band_and_line();
  write_spikes();
  write_events();
  write_axes();
  write_temperature_panel();
  write_footer();
}

}  // namespace

NiceTicks nice_ticks(double min_value, double max_value, int target_count) {
  if (!finite(min_value) || !finite(max_value) || min_value > max_value || target_count < 1) {
    min_value = 0.0;
    max_value = 1.0;
    target_count = 1;
  }
  if (max_value == min_value) {
    const double unit =
        min_value == 0.0 ? 1.0 : std::pow(10.0, std::floor(std::log10(std::fabs(min_value))));
    min_value -= unit;
    max_value += unit;
  }
  // Step: the smallest 1, 2 or 5 x 10^k >= range / target (1-2-5 steps:
  // common practice for axis ticks, cf. the ISO 3 preferred-number series).
  const double raw = (max_value - min_value) / target_count;
  int exponent = static_cast<int>(std::floor(std::log10(raw)));
  double magnitude = std::pow(10.0, exponent);
  double mantissa = 1.0;
  const double norm = raw / magnitude;
  if (norm > 5.0 * (1.0 + 1e-12)) {
    mantissa = 1.0;
    ++exponent;
    magnitude = std::pow(10.0, exponent);
  } else if (norm > 2.0 * (1.0 + 1e-12)) {
    mantissa = 5.0;
  } else if (norm > 1.0 * (1.0 + 1e-12)) {
    mantissa = 2.0;
  }
  NiceTicks t;
  t.step = mantissa * magnitude;
  t.decimals = std::max(0, -exponent);
  auto k_lo = static_cast<long long>(std::floor(min_value / t.step));
  if (static_cast<double>(k_lo) * t.step > min_value) --k_lo;
  auto k_hi = static_cast<long long>(std::ceil(max_value / t.step));
  if (static_cast<double>(k_hi) * t.step < max_value) ++k_hi;
  t.lo = static_cast<double>(k_lo) * t.step;
  t.hi = static_cast<double>(k_hi) * t.step;
  t.values.reserve(static_cast<std::size_t>(k_hi - k_lo + 1));
  for (long long k = k_lo; k <= k_hi; ++k) t.values.push_back(static_cast<double>(k) * t.step);
  return t;
}

void append_xml_escaped(std::string& out, std::string_view text) {
  constexpr std::string_view kReplacement = "\xEF\xBF\xBD";  // U+FFFD
  const std::size_t n = text.size();
  std::size_t i = 0;
  while (i < n) {
    const auto c = static_cast<unsigned char>(text[i]);
    if (c < 0x80) {
      switch (c) {
        case '&': out += "&amp;"; break;
        case '<': out += "&lt;"; break;
        case '>': out += "&gt;"; break;
        case '"': out += "&quot;"; break;
        case '\'': out += "&apos;"; break;
        default:
          // XML 1.0 Char: #x9 | #xA | #xD | [#x20-...]
          if (c < 0x20 && c != 0x09 && c != 0x0A && c != 0x0D)
            out += kReplacement;
          else
            out += static_cast<char>(c);
      }
      ++i;
      continue;
    }
    // UTF-8 (RFC 3629, section 4): the length and the range of the second byte.
    std::size_t len = 0;
    unsigned char lo2 = 0x80, hi2 = 0xBF;
    if (c >= 0xC2 && c <= 0xDF) {
      len = 2;
    } else if (c >= 0xE0 && c <= 0xEF) {
      len = 3;
      if (c == 0xE0) lo2 = 0xA0;
      if (c == 0xED) hi2 = 0x9F;  // no surrogates
    } else if (c >= 0xF0 && c <= 0xF4) {
      len = 4;
      if (c == 0xF0) lo2 = 0x90;
      if (c == 0xF4) hi2 = 0x8F;
    }
    bool ok = len > 0 && i + len <= n;
    for (std::size_t k = 1; ok && k < len; ++k) {
      const auto b = static_cast<unsigned char>(text[i + k]);
      ok = k == 1 ? (b >= lo2 && b <= hi2) : (b >= 0x80 && b <= 0xBF);
    }
    // U+FFFE and U+FFFF are not XML characters.
    if (ok && len == 3 && c == 0xEF && static_cast<unsigned char>(text[i + 1]) == 0xBF &&
        static_cast<unsigned char>(text[i + 2]) >= 0xBE)
      ok = false;
    if (ok) {
      out.append(text.substr(i, len));
      i += len;
    } else {
      out += kReplacement;
      ++i;
    }
  }
}

void write_svg_plot(const FlightSeries& series, const FlightEvents& events, const PlotOptions& options,
                    std::string& out) {
  PlotWriter(series, events, options, out).write();
}

void write_svg_plot(const FlightSeries& series, const FlightEvents& events, const PlotOptions& options,
                    ByteSink& sink) {
  std::string text;
  write_svg_plot(series, events, options, text);
  sink.write(text.data(), text.size());
}

}  // namespace baroz
