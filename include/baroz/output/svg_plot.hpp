// SVG plot of a height series: height against time with the uncertainty
// band shaded, the flight's events marked, and optionally a second panel of
// air temperature against height. A self-contained SVG 1.1 document (no
// scripts, no external fonts or images), sized by its viewBox.
//
// Large logs are decimated per pixel column (first, min, max, last in time
// order), so the file stays small (about 51 kB for the 10 M-row test log)
// and spikes stay visible. Layout, palette and figures: docs/plot.md.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_series.hpp"
#include "baroz/core/units.hpp"
#include "baroz/output/byte_sink.hpp"

namespace baroz {

struct PlotOptions {
  /// Unit of the height axis: kMetre or kFoot (kKilometre is accepted too).
  LengthUnit height_unit = LengthUnit::kMetre;
  /// x axis as UTC clock time when the series has absolute time
  /// (FlightSeries::absolute_time), else elapsed time since the first row.
  bool clock_time = true;
  /// Second panel to the right: air temperature against height, drawn when
  /// at least two rows have a temperature.
  bool temperature_panel = true;
  /// Size of the viewBox (and of the intrinsic width/height) [px].
  /// width_px >= 480, height_px >= 320; the temperature panel needs
  /// width_px >= 720 and is left out below that.
  int width_px = 1000;
  int height_px = 600;
  /// Title; empty gives "Height above the launch point - <source>".
  std::string title;
};

/// Appends a self-contained SVG document of `series` (with `events`
/// marked) to `out`.
///
/// Rows with a NaN height are not drawn and break the line; so does a time
/// step longer than 5 times the median interval. Rows flagged kFlagSpike are
/// drawn as small marks, not joined into the line, and do not set the axis
/// range. Events whose time lies outside the series' time span are left out.
/// An empty series (or one without a finite height) gives a valid document
/// with empty axes and a note.
///
/// Throws baroz::Error (usage) when width_px or height_px is out of range.
/// Memory: O(width_px + height_px) besides `out`, whatever the row count.
void write_svg_plot(const FlightSeries& series, const FlightEvents& events,
                    const PlotOptions& options, std::string& out);

/// Writes the same document to `sink` (without commit(); the caller commits).
void write_svg_plot(const FlightSeries& series, const FlightEvents& events,
                    const PlotOptions& options, ByteSink& sink);

/// Axis ticks at a "nice" step: 1, 2 or 5 times a power of ten.
struct NiceTicks {
  double lo = 0.0;             ///< first tick, <= the data minimum
  double hi = 1.0;             ///< last tick, >= the data maximum
  double step = 1.0;           ///< 1, 2 or 5 x 10^k
  int decimals = 0;            ///< decimals needed to write the ticks exactly
  std::vector<double> values;  ///< lo, lo + step, ..., hi (computed as k x step)
};

/// Ticks covering [min_value, max_value]: the step is the smallest
/// 1-2-5 value >= (max_value - min_value) / target_count, lo and hi the
/// multiples of it at or beyond the range (so at most target_count + 2
/// intervals). A degenerate range (min == max) is widened by one unit of its
/// magnitude (by 1 around zero). Both values finite, min_value <= max_value,
/// target_count >= 1; otherwise the ticks of [0, 1].
NiceTicks nice_ticks(double min_value, double max_value, int target_count);

/// Appends `text` to `out` escaped for XML character data and attribute
/// values (& < > " '); bytes that are not valid UTF-8 and control characters
/// XML 1.0 does not allow are replaced by U+FFFD.
void append_xml_escaped(std::string& out, std::string_view text);

}  // namespace baroz
