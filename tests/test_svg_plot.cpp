// Tests of the SVG plot writer (include/baroz/output/svg_plot.hpp).
//
// The documents are checked with a small XML well-formedness parser written
// here (and with Python's xml.dom.minidom when python3 exists), then for the
// elements the product specification asks for ("Conventions": SVG namespace,
// viewBox, <title>, <desc>; "Cautions": the footer).
//
// Environment variables (optional):
//   BAROZ_PLOT_ROWS=N                 rows of the large-log test (default 2000000)
//   BAROZ_WRITE_PLOT_SCREENSHOT=PATH  also render the balloon plot to PATH (PNG) with
//                                     headless Chromium and write the SVG beside it
#include <catch2/catch.hpp>

#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <iterator>
#include <limits>
#include <memory>
#include <random>
#include <regex>
#include <stdexcept>
#include <string>
#include <string_view>
#include <system_error>
#include <utility>
#include <vector>

#include "baroz/core/caution.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/core/units.hpp"
#include "baroz/output/svg_plot.hpp"

namespace {

using baroz::FlightEvent;
using baroz::FlightEvents;
using baroz::FlightPoint;
using baroz::FlightSeries;
using baroz::PlotOptions;

// ---------------------------------------------------------------------------
// A small XML 1.0 well-formedness checker building an element tree: tags
// nest and match, attributes are quoted and unique, entity references are
// the five predefined ones or character references, no '<' or stray '&' in
// text or attribute values. (W3C XML 1.0, sections 2.1, 3.1, 4.1.)

struct XmlElement {
  std::string name;
  std::vector<std::pair<std::string, std::string>> attrs;
  std::vector<std::unique_ptr<XmlElement>> children;
  std::string text;  // character data directly inside, decoded

  const std::string* attr(std::string_view key) const {
    for (const auto& [k, v] : attrs)
      if (k == key) return &v;
    return nullptr;
  }
  bool has_class(std::string_view cls) const {
    const std::string* c = attr("class");
    if (!c) return false;
    std::size_t pos = 0;
    while (pos <= c->size()) {
      std::size_t end = c->find(' ', pos);
      if (end == std::string::npos) end = c->size();
      if (std::string_view(*c).substr(pos, end - pos) == cls) return true;
      pos = end + 1;
    }
    return false;
  }
  std::string all_text() const {
    std::string s = text;
    for (const auto& c : children) s += c->all_text();
    return s;
  }
};

class XmlParser {
 public:
  explicit XmlParser(std::string_view s) : s_(s) {}

  std::unique_ptr<XmlElement> parse_document() {
    if (s_.substr(0, 5) == "<?xml") {
      const std::size_t end = s_.find("?>");
      if (end == std::string_view::npos) fail("unterminated xml declaration");
      i_ = end + 2;
    }
    skip_misc();
    if (i_ >= s_.size() || s_[i_] != '<') fail("no root element");
    auto root = parse_element();
    skip_misc();
    if (i_ != s_.size()) fail("content after the root element");
    return root;
  }

 private:
  [[noreturn]] void fail(const std::string& what) const {
    throw std::runtime_error("xml: " + what + " at byte " + std::to_string(i_));
  }
  static bool name_start(char c) {
    return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_' || c == ':';
  }
  static bool name_char(char c) {
    return name_start(c) || (c >= '0' && c <= '9') || c == '-' || c == '.';
  }
  static bool space(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }
  void skip_space() {
    while (i_ < s_.size() && space(s_[i_])) ++i_;
  }
  void skip_misc() {
    for (;;) {
      skip_space();
      if (s_.substr(i_, 4) == "<!--") {
        const std::size_t end = s_.find("-->", i_ + 4);
        if (end == std::string_view::npos) fail("unterminated comment");
        i_ = end + 3;
      } else {
        return;
      }
    }
  }
  std::string parse_name() {
    if (i_ >= s_.size() || !name_start(s_[i_])) fail("bad name");
    const std::size_t start = i_;
    while (i_ < s_.size() && name_char(s_[i_])) ++i_;
    return std::string(s_.substr(start, i_ - start));
  }
  void parse_reference(std::string& out) {
    const std::size_t end = s_.find(';', i_);
    if (end == std::string_view::npos || end - i_ > 12) fail("bad entity reference");
    const std::string_view ref = s_.substr(i_ + 1, end - i_ - 1);
    if (ref == "amp") out += '&';
    else if (ref == "lt") out += '<';
    else if (ref == "gt") out += '>';
    else if (ref == "quot") out += '"';
    else if (ref == "apos") out += '\'';
    else if (ref.size() >= 2 && ref[0] == '#') {
      const bool hex = ref[1] == 'x';
      const std::string digits(ref.substr(hex ? 2 : 1));
      if (digits.empty() || digits.find_first_not_of(hex ? "0123456789abcdefABCDEF" : "0123456789") !=
                                std::string::npos)
        fail("bad character reference");
      out += '?';  // the value itself is not needed by the tests
    } else {
      fail("unknown entity &" + std::string(ref) + ";");
    }
    i_ = end + 1;
  }
  std::unique_ptr<XmlElement> parse_element() {
    ++i_;  // '<'
    auto el = std::make_unique<XmlElement>();
    el->name = parse_name();
    for (;;) {
      const std::size_t before = i_;
      skip_space();
      if (i_ >= s_.size()) fail("unterminated start tag");
      if (s_.substr(i_, 2) == "/>") {
        i_ += 2;
        return el;
      }
      if (s_[i_] == '>') {
        ++i_;
        break;
      }
      if (i_ == before) fail("no space before attribute");
      std::string key = parse_name();
      skip_space();
      if (i_ >= s_.size() || s_[i_] != '=') fail("attribute without '='");
      ++i_;
      skip_space();
      if (i_ >= s_.size() || (s_[i_] != '"' && s_[i_] != '\'')) fail("unquoted attribute");
      const char quote = s_[i_++];
      std::string value;
      while (i_ < s_.size() && s_[i_] != quote) {
        if (s_[i_] == '<') fail("'<' in attribute value");
        if (s_[i_] == '&') {
          parse_reference(value);
        } else {
          value += s_[i_++];
        }
      }
      if (i_ >= s_.size()) fail("unterminated attribute value");
      ++i_;
      if (el->attr(key)) fail("duplicate attribute " + key);
      el->attrs.emplace_back(std::move(key), std::move(value));
    }
    // Content.
    for (;;) {
      if (i_ >= s_.size()) fail("unclosed element <" + el->name + ">");
      const char c = s_[i_];
      if (c == '<') {
        if (s_.substr(i_, 2) == "</") {
          i_ += 2;
          const std::string name = parse_name();
          if (name != el->name) fail("</" + name + "> closes <" + el->name + ">");
          skip_space();
          if (i_ >= s_.size() || s_[i_] != '>') fail("bad end tag");
          ++i_;
          return el;
        }
        if (s_.substr(i_, 4) == "<!--") {
          const std::size_t end = s_.find("-->", i_ + 4);
          if (end == std::string_view::npos) fail("unterminated comment");
          i_ = end + 3;
          continue;
        }
        if (s_.substr(i_, 2) == "<!" || s_.substr(i_, 2) == "<?") fail("unexpected markup");
        el->children.push_back(parse_element());
      } else if (c == '&') {
        parse_reference(el->text);
      } else {
        if (s_.substr(i_, 3) == "]]>") fail("']]>' in text");
        el->text += c;
        ++i_;
      }
    }
  }

  std::string_view s_;
  std::size_t i_ = 0;
};

std::unique_ptr<XmlElement> parse_xml(const std::string& text) { return XmlParser(text).parse_document(); }

void collect(const XmlElement& el, const std::function<bool(const XmlElement&)>& pred,
             std::vector<const XmlElement*>& found) {
  if (pred(el)) found.push_back(&el);
  for (const auto& c : el.children) collect(*c, pred, found);
}

std::vector<const XmlElement*> find_all(const XmlElement& root,
                                        const std::function<bool(const XmlElement&)>& pred) {
  std::vector<const XmlElement*> found;
  collect(root, pred, found);
  return found;
}

std::vector<const XmlElement*> by_name(const XmlElement& root, std::string_view name) {
  return find_all(root, [name](const XmlElement& e) { return e.name == name; });
}

std::vector<const XmlElement*> by_class(const XmlElement& root, std::string_view cls) {
  return find_all(root, [cls](const XmlElement& e) { return e.has_class(cls); });
}

/// Texts of the <text> elements inside the groups of class `cls`.
std::vector<std::string> texts_in(const XmlElement& root, std::string_view cls) {
  std::vector<std::string> out;
  for (const XmlElement* g : by_class(root, cls))
    for (const XmlElement* t : by_name(*g, "text")) out.push_back(t->all_text());
  return out;
}

/// The (x, y) points of the M and L commands of a path's d attribute (as
/// written by the plot writer: absolute M/L pairs, "h0" dots).
std::vector<std::pair<double, double>> path_points(const std::string& d, std::size_t* subpaths = nullptr) {
  std::vector<std::pair<double, double>> pts;
  std::size_t moves = 0;
  const char* p = d.c_str();
  while (*p) {
    const char cmd = *p++;
    if (cmd == 'M' || cmd == 'L') {
      char* end = nullptr;
      const double x = std::strtod(p, &end);
      p = end;
      const double y = std::strtod(p, &end);
      p = end;
      pts.emplace_back(x, y);
      if (cmd == 'M') ++moves;
    } else if (cmd == 'h' || cmd == 'H' || cmd == 'V' || cmd == 'v') {
      char* end = nullptr;
      std::strtod(p, &end);
      p = end;
    }
  }
  if (subpaths) *subpaths = moves;
  return pts;
}

bool have_program(const std::string& name) {
  return std::system(("command -v " + name + " >/dev/null 2>&1").c_str()) == 0;
}

std::filesystem::path temp_dir() {
  auto dir = std::filesystem::temp_directory_path() / ("baroz_svg_plot_test_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  return dir;
}

void write_file(const std::filesystem::path& path, const std::string& text) {
  std::ofstream f(path, std::ios::binary);
  f << text;
  REQUIRE(f.good());
}

/// Python's parser as a second opinion, when python3 is installed.
void check_with_python(const std::string& svg) {
  if (!have_program("python3")) {
    WARN("python3 not found: second XML parser skipped");
    return;
  }
  const auto path = temp_dir() / "python_check.svg";
  write_file(path, svg);
  const std::string cmd = "python3 -c 'import xml.dom.minidom,sys; xml.dom.minidom.parse(sys.argv[1])' '" +
                          path.string() + "'";
  CHECK(std::system(cmd.c_str()) == 0);
  std::filesystem::remove(path);
  std::error_code ignored;
  std::filesystem::remove(path.parent_path(), ignored);  // only when empty
}

// ---------------------------------------------------------------------------
// A synthetic balloon flight (its shape, not measured data): 5 min at rest,
// ascent at 5 m/s with a 15 min float at 18 km, burst at 31.5 km, parachute
// descent fast at altitude and slowing towards the ground, 10 min on the
// ground. Noise, a few spike-flagged rows, a short NaN run and a telemetry
// gap are added. Temperatures follow the U.S. Standard Atmosphere 1976
// lapse rates (-6.5 K/km to 11 km, isothermal to 20 km, +1 K/km above;
// USSA76 Table 4), warmer on descent (sensor lag).

struct SyntheticFlight {
  FlightSeries series;
  FlightEvents events;
};

constexpr double kRestEnd = 300.0;       // launch [s]
constexpr double kRate = 5.0;            // ascent rate [m/s]
constexpr double kFloatHeight = 18000.0; // [m]
constexpr double kFloatStart = kRestEnd + kFloatHeight / kRate;  // 3900 s
constexpr double kFloatEnd = kFloatStart + 900.0;                // 4800 s
constexpr double kBurstHeight = 31500.0;                          // [m]
constexpr double kBurst = kFloatEnd + (kBurstHeight - kFloatHeight) / kRate;  // 7500 s
constexpr double kScaleH = 14000.0;      // descent speed e-folding height [m]
constexpr double kGroundSpeed = 5.0;     // descent speed at the ground [m/s]
// dh/dt = -v0 exp(h/H)  =>  exp(-h/H) = exp(-hb/H) + v0 (t - tb) / H
const double kLanding = kBurst + kScaleH / kGroundSpeed * (1.0 - std::exp(-kBurstHeight / kScaleH));
const double kEnd = kLanding + 600.0;
constexpr double kGapStart = 8200.0, kGapEnd = 8500.0;  // telemetry drop [s]

double true_height(double t) {
  if (t <= kRestEnd) return 0.0;
  if (t <= kFloatStart) return kRate * (t - kRestEnd);
  if (t <= kFloatEnd) return kFloatHeight + 20.0 * std::sin((t - kFloatStart) / 900.0 * 3.14159265);
  if (t <= kBurst) return kFloatHeight + kRate * (t - kFloatEnd);
  if (t < kLanding)
    return std::max(0.0, -kScaleH * std::log(std::exp(-kBurstHeight / kScaleH) +
                                             kGroundSpeed * (t - kBurst) / kScaleH));
  return 0.0;
}

double standard_like_temperature(double h) {
  if (h < 11000.0) return 15.0 - 6.5e-3 * h;
  if (h < 20000.0) return -56.5;
  return -56.5 + 1.0e-3 * (h - 20000.0);
}

std::size_t index_at(const FlightSeries& s, double t) {
  const auto it = std::lower_bound(s.points.begin(), s.points.end(), t,
                                   [](const FlightPoint& p, double v) { return p.time_s < v; });
  return static_cast<std::size_t>(std::min<std::ptrdiff_t>(it - s.points.begin(),
                                                          static_cast<std::ptrdiff_t>(s.points.size()) - 1));
}

FlightEvent event_at(const FlightSeries& s, double t) {
  FlightEvent e;
  e.index = index_at(s, t);
  const FlightPoint& p = s.points[e.index];
  e.time_s = p.time_s;
  e.height_m = p.height_m;
  e.low_m = p.low_m;
  e.high_m = p.high_m;
  return e;
}

/// About `rows` rows over the whole flight (fewer by the gap).
SyntheticFlight make_balloon(std::size_t rows) {
  SyntheticFlight f;
  FlightSeries& s = f.series;
  s.source = "balloon-2026-06-14.csv";
  s.absolute_time = true;
  s.start_time_ns = *baroz::parse_rfc3339("2026-06-14T08:45:00Z", 0);
  s.model = "profile";
  s.confidence = 0.95;
  s.points.reserve(rows);
  std::mt19937_64 rng(20260614);
  std::normal_distribution<double> noise(0.0, 1.0);
  const double dt = kEnd / static_cast<double>(rows - 1);
  const std::size_t spike_every = std::max<std::size_t>(rows / 9, 1);
  for (std::size_t k = 0; k < rows; ++k) {
    const double t = static_cast<double>(k) * dt;
    if (t > kGapStart && t < kGapEnd) continue;
    const double h = true_height(t) + 0.8 * noise(rng);
    const double sigma = 2.0 + 0.006 * true_height(t);  // [m], grows with height
    FlightPoint p;
    p.time_s = t;
    p.height_m = static_cast<float>(h);
    p.low_m = static_cast<float>(h - 1.96 * sigma);
    p.high_m = static_cast<float>(h + 1.96 * sigma);
    const bool descending = t > kBurst;
    p.temperature_c = static_cast<float>(standard_like_temperature(true_height(t)) +
                                         (descending ? 4.0 : 0.0) + 0.3 * noise(rng));
    if (k % spike_every == spike_every / 2 && t > kRestEnd && t < kBurst) {
      p.height_m += 900.0f;
      p.flags |= baroz::kFlagSpike;
    }
    s.points.push_back(p);
  }
  // A short run of rows without a height in the ascent (e.g. a sensor reset).
  const std::size_t nan_at = index_at(s, 2000.0);
  const std::size_t nan_rows = std::max<std::size_t>(rows / 200, 3);
  for (std::size_t k = nan_at; k < nan_at + nan_rows && k < s.points.size(); ++k) {
    s.points[k].height_m = s.points[k].low_m = s.points[k].high_m =
        std::numeric_limits<float>::quiet_NaN();
  }
  f.events.launch = event_at(s, kRestEnd);
  std::size_t top = 0;  // the highest row that is not a spike
  for (std::size_t k = 0; k < s.points.size(); ++k)
    if (!(s.points[k].flags & baroz::kFlagSpike) && s.points[k].height_m > s.points[top].height_m) top = k;
  f.events.apogee = event_at(s, s.points[top].time_s);
  f.events.apogee_kind = baroz::ApogeeKind::kBurst;
  f.events.burst = f.events.apogee;
  f.events.landing = event_at(s, kLanding);
  baroz::FlightSegment seg;
  seg.start = event_at(s, kFloatStart);
  seg.end = event_at(s, kFloatEnd);
  seg.mean_height_m = kFloatHeight;
  f.events.floats.push_back(seg);
  return f;
}

std::string plot(const SyntheticFlight& f, const PlotOptions& options = {}) {
  std::string out;
  baroz::write_svg_plot(f.series, f.events, options, out);
  return out;
}

/// True when `step` is 1, 2 or 5 times a power of ten (to 1e-9 relative).
bool is_125_step(double step) {
  if (!(step > 0.0)) return false;
  const double mag = std::pow(10.0, std::floor(std::log10(step) + 1e-12));
  const double m = step / mag;
  return std::fabs(m - 1.0) < 1e-9 || std::fabs(m - 2.0) < 1e-9 || std::fabs(m - 5.0) < 1e-9;
}

/// The next smaller 1-2-5 step.
double previous_125_step(double step) {
  const double mag = std::pow(10.0, std::floor(std::log10(step) + 1e-12));
  const double m = std::round(step / mag);
  if (m == 1.0) return 0.5 * mag;
  if (m == 2.0) return 1.0 * mag;
  return 2.0 * mag;
}

/// Label number of a tick text.
double tick_value(const std::string& label) { return std::stod(label); }

/// Finite data range of the series in metres (spikes excluded).
std::pair<double, double> data_range_m(const FlightSeries& s) {
  double lo = std::numeric_limits<double>::infinity(), hi = -lo;
  for (const FlightPoint& p : s.points) {
    if ((p.flags & baroz::kFlagSpike) || !std::isfinite(p.height_m)) continue;
    lo = std::min({lo, static_cast<double>(p.height_m), static_cast<double>(p.low_m)});
    hi = std::max({hi, static_cast<double>(p.height_m), static_cast<double>(p.high_m)});
  }
  return {lo, hi};
}

/// Checks the y-axis tick labels: equal 1-2-5 steps covering [lo, hi]; at the
/// bottom a sliver of at most 5 % of a step may lie below the first tick
/// (the documented trimming of the axis).
void check_y_ticks(const XmlElement& root, double lo, double hi) {
  const auto labels = texts_in(root, "y-ticks");
  REQUIRE(labels.size() >= 3);
  std::vector<double> v;
  for (const auto& l : labels) v.push_back(tick_value(l));
  const double step = v[1] - v[0];
  CHECK(is_125_step(step));
  for (std::size_t k = 1; k < v.size(); ++k) CHECK(v[k] - v[k - 1] == Approx(step).epsilon(1e-9));
  CHECK(v.front() <= lo + 0.05 * step);
  CHECK(v.back() >= hi);
}

/// Linear map value -> y [px] from the y tick labels (label baseline = tick + 4 px).
std::pair<double, double> y_axis_map(const XmlElement& root) {
  std::vector<std::pair<double, double>> ticks;
  for (const XmlElement* g : by_class(root, "y-ticks"))
    for (const XmlElement* t : by_name(*g, "text"))
      ticks.emplace_back(tick_value(t->all_text()), std::stod(*t->attr("y")) - 4.0);
  REQUIRE(ticks.size() >= 2);
  const auto& a = ticks.front();
  const auto& b = ticks.back();
  const double slope = (b.second - a.second) / (b.first - a.first);
  return {slope, a.second - slope * a.first};  // y = slope * v + offset
}

}  // namespace

TEST_CASE("nice ticks: 1-2-5 steps that cover the data range", "[plot]") {
  // The 1-2-5 sequence for axis steps: common practice (cf. the ISO 3
  // preferred-number series R3 rounded to 1, 2, 5).
  const std::pair<double, double> ranges[] = {
      {0.0, 31500.0}, {-3.2, 117.9}, {0.0, 0.0}, {12.5, 12.5}, {-60.3, 21.7}, {0.001, 0.0093},
      {99.0, 101.0},  {-5.0, -1.0},  {0.0, 1e6}, {2.5, 2.6},   {0.0, 3.0},    {0.3, 0.9}};
  for (const auto& [lo, hi] : ranges) {
    for (int target : {1, 3, 5, 7, 10}) {
      INFO("range " << lo << ".." << hi << " target " << target);
      const baroz::NiceTicks t = baroz::nice_ticks(lo, hi, target);
      CHECK(is_125_step(t.step));
      CHECK(t.lo <= lo);
      CHECK(t.hi >= hi);
      REQUIRE(t.values.size() >= 2);
      CHECK(t.values.front() == t.lo);
      CHECK(t.values.back() == t.hi);
      for (std::size_t k = 1; k < t.values.size(); ++k)
        CHECK(t.values[k] - t.values[k - 1] == Approx(t.step).epsilon(1e-9));
      if (hi > lo) {
        // The step is the smallest 1-2-5 step with at most `target` steps over the range.
        CHECK(t.step * target >= (hi - lo) * (1.0 - 1e-12));
        CHECK(previous_125_step(t.step) * target < (hi - lo));
        CHECK(t.values.size() - 1 <= static_cast<std::size_t>(target) + 2);
      }
      // The decimals are enough to write every tick exactly.
      for (double v : t.values) {
        const double scaled = v * std::pow(10.0, t.decimals);
        CHECK(std::fabs(scaled - std::round(scaled)) < 1e-6 * std::max(1.0, std::fabs(scaled)));
      }
    }
  }
  // Invalid input gives the ticks of [0, 1].
  const baroz::NiceTicks bad = baroz::nice_ticks(std::nan(""), 1.0, 5);
  CHECK(bad.lo <= 0.0);
  CHECK(bad.hi >= 1.0);
}

TEST_CASE("svg plot of a balloon flight is well-formed and has every element", "[plot]") {
  const SyntheticFlight f = make_balloon(10606);  // 1 Hz
  const std::string svg = plot(f);
  std::unique_ptr<XmlElement> root;
  REQUIRE_NOTHROW(root = parse_xml(svg));
  check_with_python(svg);

  // Root: SVG namespace and viewBox (W3C SVG 1.1, 5.1.2 and 7.7).
  CHECK(root->name == "svg");
  REQUIRE(root->attr("xmlns"));
  CHECK(*root->attr("xmlns") == "http://www.w3.org/2000/svg");
  REQUIRE(root->attr("viewBox"));
  CHECK(*root->attr("viewBox") == "0 0 1000 600");
  REQUIRE(root->attr("font-family"));
  CHECK(root->attr("font-family")->find("sans-serif") != std::string::npos);

  // <title> and <desc> as direct children (W3C SVG 1.1, 5.4).
  const XmlElement* title = nullptr;
  const XmlElement* desc = nullptr;
  for (const auto& c : root->children) {
    if (c->name == "title") title = c.get();
    if (c->name == "desc") desc = c.get();
  }
  REQUIRE(title);
  REQUIRE(desc);
  CHECK(title->all_text() == "Height above the launch point - balloon-2026-06-14.csv");
  const std::string d = desc->all_text();
  CHECK(d.find("balloon-2026-06-14.csv") != std::string::npos);
  CHECK(d.find("profile model") != std::string::npos);
  CHECK(d.find("Rows: " + std::to_string(f.series.points.size())) != std::string::npos);
  CHECK(d.find("Maximum height") != std::string::npos);
  // The burst is the top near 08:45 + 7500 s = 10:50:00 (noise moves it a few seconds).
  CHECK(std::regex_search(d, std::regex("Burst at 2026-06-14T10:(49:5[0-9]|50:0[0-9])\\.[0-9]{3}Z")));

  // Self-contained: no scripts, no images, no external references.
  CHECK(by_name(*root, "script").empty());
  CHECK(by_name(*root, "image").empty());
  CHECK(by_name(*root, "foreignObject").empty());
  CHECK(svg.find("href") == std::string::npos);
  CHECK(svg.find("url(") == std::string::npos);
  CHECK(svg.find("@import") == std::string::npos);
  // No NaN or infinity anywhere (product spec, "Conventions").
  CHECK(svg.find("nan") == std::string::npos);
  CHECK(svg.find("inf") == std::string::npos);

  // Band and line.
  const auto band = by_class(*root, "band");
  const auto line = by_class(*root, "height");
  REQUIRE(band.size() == 1);
  REQUIRE(line.size() == 1);
  CHECK(band[0]->name == "path");
  CHECK(line[0]->name == "path");
  CHECK(band[0]->attr("d")->find('Z') != std::string::npos);
  CHECK(path_points(*band[0]->attr("d")).size() > 100);
  CHECK(path_points(*line[0]->attr("d")).size() > 100);

  // Events with their labels.
  const auto labels = by_class(*root, "event-label");
  REQUIRE(labels.size() == 3);
  std::vector<std::string> words;
  for (const XmlElement* l : labels) words.push_back(l->all_text().substr(0, l->all_text().find(' ')));
  std::sort(words.begin(), words.end());
  CHECK(words == std::vector<std::string>{"burst", "landing", "launch"});
  CHECK(by_class(*root, "event").size() == 3);
  CHECK(by_class(*root, "float").size() == 1);
  CHECK(by_class(*root, "spikes").size() == 1);

  // The caution in the footer, whole (product spec, "Cautions").
  const auto caution = by_class(*root, "caution");
  REQUIRE(caution.size() == 1);
  std::string joined;
  for (const XmlElement* span : by_name(*caution[0], "tspan")) {
    if (!joined.empty()) joined += ' ';
    joined += span->all_text();
  }
  CHECK(joined == std::string(baroz::kCaution));
  CHECK(by_name(*caution[0], "tspan").size() == 2);

  // Legible when printed: no font size below 11 px at the viewBox size.
  for (const XmlElement* e : find_all(*root, [](const XmlElement& x) { return x.attr("font-size"); }))
    CHECK(std::stod(*e->attr("font-size")) >= 11.0);

  // Axes: height ticks in 1-2-5 steps covering the data; clock-time ticks in UTC.
  const auto [lo, hi] = data_range_m(f.series);
  check_y_ticks(*root, lo, hi);
  const auto y_label = by_class(*root, "y-label");
  REQUIRE(y_label.size() == 1);
  CHECK(y_label[0]->all_text() == "Height (m)");
  const auto x_label = by_class(*root, "x-label");
  REQUIRE(x_label.size() == 1);
  CHECK(x_label[0]->all_text().find("UTC") != std::string::npos);
  CHECK(x_label[0]->all_text().find("2026-06-14") != std::string::npos);
  const auto x_ticks = texts_in(*root, "x-ticks");
  REQUIRE(x_ticks.size() >= 3);
  const std::regex hh_mm("([01][0-9]|2[0-3]):[0-5][0-9]");
  for (const auto& t : x_ticks) CHECK(std::regex_match(t, hh_mm));

  // Temperature panel with ascent and descent.
  CHECK(by_class(*root, "temperature-panel").size() == 1);
  CHECK(by_class(*root, "temperature-ascent").size() == 1);
  CHECK(by_class(*root, "temperature-descent").size() == 1);
  const auto temp_label = by_class(*root, "temperature-label");
  REQUIRE(temp_label.size() == 1);
  CHECK(temp_label[0]->all_text() == "Air temperature (\u00b0C)");
}

TEST_CASE("svg plot in feet, elapsed time, without the temperature panel", "[plot]") {
  SyntheticFlight f = make_balloon(10606);
  f.events.apogee_kind = baroz::ApogeeKind::kApogee;  // a smooth top: labelled "apogee"
  f.events.burst.reset();
  PlotOptions options;
  options.height_unit = baroz::LengthUnit::kFoot;
  options.clock_time = false;
  options.temperature_panel = false;
  options.width_px = 800;
  options.height_px = 500;
  options.title = "Flight 7";
  const std::string svg = plot(f, options);
  const auto root = parse_xml(svg);
  CHECK(*root->attr("viewBox") == "0 0 800 500");
  CHECK(by_name(*root, "title")[0]->all_text() == "Flight 7");
  CHECK(by_class(*root, "temperature-panel").empty());
  CHECK(by_class(*root, "y-label")[0]->all_text() == "Height (ft)");
  std::vector<std::string> words;
  for (const XmlElement* l : by_class(*root, "event-label"))
    words.push_back(l->all_text().substr(0, l->all_text().find(' ')));
  std::sort(words.begin(), words.end());
  CHECK(words == std::vector<std::string>{"apogee", "landing", "launch"});
  CHECK(by_name(*root, "desc")[0]->all_text().find("Apogee at") != std::string::npos);
  // 1 ft = 0.3048 m exactly. Source: NIST SP 811 (2008), B.8.
  const auto [lo, hi] = data_range_m(f.series);
  check_y_ticks(*root, lo / 0.3048, hi / 0.3048);
  // The flight lasts about 3 h: elapsed time in minutes, ticks 1-2-5 steps.
  CHECK(by_class(*root, "x-label")[0]->all_text() == "Elapsed time (min)");
  const auto x_ticks = texts_in(*root, "x-ticks");
  REQUIRE(x_ticks.size() >= 3);
  CHECK(is_125_step(tick_value(x_ticks[1]) - tick_value(x_ticks[0])));
  // A wider caution line fits fewer words: still the whole caution.
  std::string joined;
  for (const XmlElement* span : by_name(*by_class(*root, "caution")[0], "tspan"))
  {
    if (!joined.empty()) joined += ' ';
    joined += span->all_text();
  }
  CHECK(joined == std::string(baroz::kCaution));
}

TEST_CASE("svg plot: elapsed-time unit follows the span", "[plot]") {
  const std::pair<double, std::string> cases[] = {
      {120.0, "Elapsed time (s)"}, {3600.0, "Elapsed time (min)"}, {10.0 * 3600.0, "Elapsed time (h)"}};
  for (const auto& [span, label] : cases) {
    SyntheticFlight f;
    f.series.source = "hop.csv";
    for (int k = 0; k <= 200; ++k) {
      FlightPoint p;
      p.time_s = span * k / 200.0;
      p.height_m = static_cast<float>(50.0 * std::sin(k / 40.0));
      p.low_m = p.height_m - 1.0f;
      p.high_m = p.height_m + 1.0f;
      f.series.points.push_back(p);
    }
    const auto root = parse_xml(plot(f));
    CHECK(by_class(*root, "x-label")[0]->all_text() == label);
    // No events: no markers, and no temperature panel without temperatures.
    CHECK(by_class(*root, "event").empty());
    CHECK(by_class(*root, "temperature-panel").empty());
  }
}

TEST_CASE("svg plot escapes XML text", "[plot]") {
  SyntheticFlight f = make_balloon(2000);
  f.series.source = "a<b>&\"c'd.csv";
  f.series.model = "x&y";
  std::string svg = plot(f);
  CHECK(svg.find("a<b>") == std::string::npos);
  CHECK(svg.find("a&lt;b&gt;&amp;&quot;c&apos;d.csv") != std::string::npos);
  auto root = parse_xml(svg);
  CHECK(by_name(*root, "title")[0]->all_text() == "Height above the launch point - a<b>&\"c'd.csv");
  check_with_python(svg);

  // Bytes that are not UTF-8 and control characters are replaced (U+FFFD).
  PlotOptions options;
  options.title = std::string("bad \xff\xfe byte \x01 and ]]> end");
  svg = plot(f, options);
  CHECK(svg.find('\xff') == std::string::npos);
  CHECK(svg.find('\x01') == std::string::npos);
  root = parse_xml(svg);
  CHECK(by_name(*root, "title")[0]->all_text() == "bad \xEF\xBF\xBD\xEF\xBF\xBD byte \xEF\xBF\xBD and ]]> end");
  check_with_python(svg);

  std::string out;
  baroz::append_xml_escaped(out, "\xC3\xA9\xE2\x82\xAC\xF0\x9F\x8E\x88");  // e-acute, euro, balloon: kept
  CHECK(out == "\xC3\xA9\xE2\x82\xAC\xF0\x9F\x8E\x88");
  out.clear();
  baroz::append_xml_escaped(out, "\xC0\xAF\xED\xA0\x80\xEF\xBF\xBF");  // overlong, surrogate, U+FFFF
  CHECK(out.find("\xC0") == std::string::npos);
  CHECK(out.find("\xED") == std::string::npos);
  CHECK(out.find("\xEF\xBF\xBF") == std::string::npos);
}

TEST_CASE("svg plot: NaN heights and a gap break the line", "[plot]") {
  SyntheticFlight f;
  f.series.source = "breaks.csv";
  for (int k = 0; k < 600; ++k) {
    if (k >= 300 && k < 400) continue;  // a 100 s gap in a 1 Hz log
    FlightPoint p;
    p.time_s = k;
    p.height_m = static_cast<float>(k);
    if (k >= 100 && k < 150) p.height_m = std::numeric_limits<float>::quiet_NaN();
    p.low_m = p.height_m - 3.0f;
    p.high_m = p.height_m + 3.0f;
    p.temperature_c = 10.0f;
    f.series.points.push_back(p);
  }
  const std::string svg = plot(f);
  const auto root = parse_xml(svg);
  check_with_python(svg);
  std::size_t subpaths = 0;
  path_points(*by_class(*root, "height")[0]->attr("d"), &subpaths);
  CHECK(subpaths == 3);  // 0-99, 150-299, 400-599
  const std::string& band = *by_class(*root, "band")[0]->attr("d");
  CHECK(std::count(band.begin(), band.end(), 'Z') == 3);
  CHECK(svg.find("nan") == std::string::npos);
  CHECK(by_name(*root, "desc")[0]->all_text().find("50 without") != std::string::npos);

  // Nothing plottable at all: still a valid document, with a note.
  SyntheticFlight empty;
  const auto root2 = parse_xml(plot(empty));
  CHECK(by_class(*root2, "no-data").size() == 1);
  CHECK(by_class(*root2, "caution").size() == 1);
}

TEST_CASE("svg plot: spikes are marks; decimation keeps a one-row peak", "[plot]") {
  const std::size_t rows = 200000;
  SyntheticFlight f;
  f.series.source = "flat.csv";
  f.series.points.resize(rows);
  for (std::size_t k = 0; k < rows; ++k) {
    FlightPoint& p = f.series.points[k];
    p.time_s = static_cast<double>(k) * 0.01;
    p.height_m = 100.0f + static_cast<float>(k % 7) * 0.1f;
    p.low_m = p.height_m - 2.0f;
    p.high_m = p.height_m + 2.0f;
  }
  // One unflagged row at 1100 m: it must reach the line despite 300 rows a pixel.
  f.series.points[rows / 3].height_m = 1100.0f;
  f.series.points[rows / 3].high_m = 1102.0f;
  // Three flagged spikes at 5000 m: marks only, not in the axis range.
  for (std::size_t k : {rows / 5, rows / 2, rows * 4 / 5}) {
    f.series.points[k].height_m = 5000.0f;
    f.series.points[k].flags |= baroz::kFlagSpike;
  }
  const auto root = parse_xml(plot(f));
  const auto [slope, offset] = y_axis_map(*root);
  const auto pts = path_points(*by_class(*root, "height")[0]->attr("d"));
  double top = 1e9;
  for (const auto& [x, y] : pts) top = std::min(top, y);
  CHECK(top == Approx(slope * 1100.0 + offset).margin(0.15));  // 0.1 px rounding
  // The line stays below the spikes' height everywhere: the axis ends below 5000 m.
  const auto labels = texts_in(*root, "y-ticks");
  CHECK(tick_value(labels.back()) < 5000.0);
  const auto spikes = by_class(*root, "spikes");
  REQUIRE(spikes.size() == 1);
  std::size_t marks = 0;
  path_points(*spikes[0]->attr("d"), &marks);
  CHECK(marks == 3);
  CHECK(by_name(*root, "desc")[0]->all_text().find("3 spike-flagged") != std::string::npos);
}

TEST_CASE("svg plot: rows out of time order stay bounded", "[plot]") {
  // Decimation bins by pixel column, not by runs, so a log whose rows go
  // back and forth in time cannot make the file grow with the row count.
  SyntheticFlight f = make_balloon(200000);
  std::mt19937 rng(7);
  std::shuffle(f.series.points.begin(), f.series.points.end(), rng);
  const std::string svg = plot(f);
  CHECK(svg.size() < 400000);
  const auto root = parse_xml(svg);
  CHECK(by_class(*root, "height").size() == 1);
}

TEST_CASE("svg plot rejects a too small size", "[plot]") {
  const SyntheticFlight f = make_balloon(100);
  PlotOptions options;
  options.width_px = 100;
  std::string out;
  CHECK_THROWS_AS(baroz::write_svg_plot(f.series, f.events, options, out), baroz::Error);
}

TEST_CASE("svg plot of a large log stays under 1 MB", "[plot]") {
  std::size_t rows = 2000000;
  const char* env = std::getenv("BAROZ_PLOT_ROWS");
  if (env) rows = std::stoul(env);
  const SyntheticFlight f = make_balloon(rows);
  std::string svg;
  const auto t0 = std::chrono::steady_clock::now();
  baroz::write_svg_plot(f.series, f.events, PlotOptions{}, svg);
  const auto t1 = std::chrono::steady_clock::now();
  const double ms = std::chrono::duration<double, std::milli>(t1 - t0).count();
  if (env) std::printf("svg plot: %zu rows -> %zu bytes in %.1f ms\n", f.series.points.size(), svg.size(), ms);
  CHECK(svg.size() < 1000000);
  const auto root = parse_xml(svg);
  CHECK(by_class(*root, "event-label").size() == 3);
  const auto [lo, hi] = data_range_m(f.series);
  check_y_ticks(*root, lo, hi);
}

TEST_CASE("svg plot renders in headless Chromium", "[plot]") {
  std::string chromium;
  if (access("/usr/bin/chromium", X_OK) == 0)
    chromium = "/usr/bin/chromium";
  else if (have_program("chromium"))
    chromium = "chromium";
  if (chromium.empty()) {
    WARN("chromium not found: rendering check skipped (install the Debian package chromium)");
    return;
  }
  const SyntheticFlight f = make_balloon(10606);
  const std::string svg = plot(f);
  const auto dir = temp_dir();
  const auto svg_path = dir / "plot.svg";
  write_file(svg_path, svg);
  std::string png_path = (dir / "plot.png").string();
  const char* shot = std::getenv("BAROZ_WRITE_PLOT_SCREENSHOT");
  if (shot && *shot) {
    png_path = shot;
    std::filesystem::path svg_copy(shot);
    svg_copy.replace_extension(".svg");
    write_file(svg_copy, svg);
  }
  std::filesystem::remove(png_path);
  const std::string cmd = "timeout 60 " + chromium +
                          " --headless --no-sandbox --disable-gpu --hide-scrollbars --screenshot='" + png_path +
                          "' --window-size=1000,600 'file://" + svg_path.string() + "' >'" +
                          (dir / "chromium.log").string() + "' 2>&1";
  const int status = std::system(cmd.c_str());
  INFO("command: " << cmd);
  REQUIRE(status == 0);
  std::ifstream png(png_path, std::ios::binary);
  REQUIRE(png.good());
  const std::string bytes((std::istreambuf_iterator<char>(png)), std::istreambuf_iterator<char>());
  CHECK(bytes.size() > 5000);
  // PNG signature. Source: ISO/IEC 15948:2004 (PNG), section 5.2.
  CHECK(bytes.substr(0, 8) == std::string("\x89PNG\r\n\x1a\n", 8));
  std::filesystem::remove_all(dir);
}
