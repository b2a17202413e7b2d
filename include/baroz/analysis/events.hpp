// Flight events found in a height series: launch, burst or apogee, landing
// and float segments, each with time, height and band.
//
// Methods, thresholds and their tolerances: docs/analysis-events.md.
//
// Precondition: the smoothing stage (flight_smoother.hpp) has filled
// vspeed_mps and flagged spikes (kFlagSpike). Rows flagged as spikes, rows
// with a non-finite height and rows whose time is not later than the previous
// usable row's are ignored by every detector.
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "baroz/analysis/flight_series.hpp"

namespace baroz {

/// One event at one row of the series.
struct FlightEvent {
  std::size_t index = 0;   ///< row of the series (FlightSeries::points)
  double time_s = 0.0;     ///< elapsed seconds (may lie between rows when interpolated)
  double height_m = 0.0;   ///< height above the reference [m]
  double low_m = 0.0;      ///< band lower edge [m]
  double high_m = 0.0;     ///< band upper edge [m]
};

/// A segment of level flight (or of rest on the ground).
struct FlightSegment {
  FlightEvent start;
  FlightEvent end;
  double mean_height_m = 0.0;  ///< mean height over the segment [m]
};

/// What kind of top the flight had.
enum class ApogeeKind {
  kBurst,   ///< a climb ending in a fast fall (balloon burst, cut-down)
  kApogee,  ///< a smooth top (drone, kite, rocket apogee, slow balloon descent)
};

struct EventOptions {
  double launch_climb_m = 5.0;       ///< height gained above the pre-launch rest to call a launch [m], > 0
  double launch_sustain_s = 5.0;     ///< the climb must last this long [s], > 0
  double rest_speed_mps = 0.3;       ///< a rest's fitted trend must stay below this [m/s], > 0
  double rest_min_s = 15.0;          ///< shortest pre-launch / post-landing rest [s], >= 0 (a drone may sit 15-20 s after landing)
  double float_min_s = 120.0;        ///< shortest float segment [s], > 0
  double float_speed_mps = 0.5;      ///< |vspeed| below this in the air counts as floating [m/s], > 0
  double burst_drop_mps = 8.0;       ///< descent faster than this within burst_window_s of the top = burst [m/s], > 0
  double burst_window_s = 60.0;      ///< [s], > 0
  /// The departure threshold is max(launch_climb_m, noise_multiple * sigma),
  /// sigma the height noise estimated from the series [1], >= 0.
  double noise_multiple = 5.0;
  /// The rest level is the mean of the resting rows of the last
  /// baseline_span_s (it follows slow ground-pressure drift) [s], > 0.
  double baseline_span_s = 60.0;
  /// An interval between usable rows longer than this is a gap (no data);
  /// 0 = automatic: max(10 x the median interval, 10 s) [s], >= 0.
  double gap_s = 0.0;
  /// A float may be interrupted by faster rows for at most this long [s], >= 0.
  double float_bridge_s = 10.0;
};

struct FlightEvents {
  std::optional<FlightEvent> launch;
  std::optional<FlightEvent> apogee;   ///< the maximum (burst or apogee, see apogee_kind)
  ApogeeKind apogee_kind = ApogeeKind::kApogee;
  /// The burst when apogee_kind is kBurst, else empty: the apogee row itself,
  /// or, when the highest row lies inside a float at the top, the last row
  /// of that float (the fall starts there).
  std::optional<FlightEvent> burst;
  std::optional<FlightEvent> landing;
  std::vector<FlightSegment> floats;   ///< level-flight segments in the air
  bool starts_in_flight = false;       ///< no pre-launch rest at the start of the log
  bool ends_in_flight = false;         ///< no post-landing rest at the end of the log
  std::vector<std::string> notes;      ///< why an event is missing, what was assumed

  // What the detectors measured (for the summary and the manifest).
  double launch_rest_height_m = kMissing;   ///< mean height of the pre-launch rest [m], NaN without a launch
  double landing_rest_height_m = kMissing;  ///< mean height of the post-landing rest [m], NaN without a landing
  double fall_rate_mps = kMissing;          ///< fastest descent within burst_window_s after the top (or after the float at the top) [m/s, positive down]
  double noise_sigma_m = kMissing;          ///< height noise estimated from second differences [m]
  double threshold_m = kMissing;            ///< departure threshold used [m]
  double sample_interval_s = kMissing;      ///< median interval between usable rows [s]
  double gap_s = kMissing;                  ///< gap threshold used [s]
  std::size_t gap_count = 0;                ///< intervals longer than gap_s
  double gap_total_s = 0.0;                 ///< their total length [s]
  std::size_t usable_rows = 0;              ///< rows the detectors used
  std::size_t spike_rows = 0;               ///< rows ignored as spikes (kFlagSpike)
};

/// True for a row the event detectors and the summary use: not flagged as a
/// spike and with a finite height.
bool usable_point(const FlightPoint& point);

/// The rows the detectors and the summary use, in order: usable_point() and
/// a time later than the previous used row's (a row whose time goes
/// backwards or repeats is skipped). Indices into series.points.
std::vector<std::size_t> usable_indices(const FlightSeries& series);

/// Finds launch, apogee or burst, landing and floats in `series` (see the
/// file comment for the precondition and docs/analysis-events.md for the
/// method). Never throws for data problems: a missing event is an empty
/// optional with a note. Throws baroz::Error (usage) for options outside
/// their documented ranges. O(n) time apart from the bounded refinement
/// windows; O(n) working memory in a few vectors, no per-row allocation.
FlightEvents detect_events(const FlightSeries& series, const EventOptions& options = {});

}  // namespace baroz

// References:
//   F. R. Hampel, "The influence curve and its role in robust estimation",
//     J. Amer. Statist. Assoc. 69 (1974) 383-393: the median absolute
//     deviation, scaled by 1.4826, as a robust estimate of a normal sigma
//     (used for the height noise from second differences).
