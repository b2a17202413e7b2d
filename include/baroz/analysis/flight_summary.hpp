// The flight summary: durations, the maximum height with its band, mean and
// extreme vertical rates, per-phase statistics and the time spent above given
// heights, computed from a height series and its events (events.hpp).
//
// All heights are metres above the series' reference (FlightPoint::height_m)
// whatever --height-unit the series file uses; rates are m/s; durations and
// elapsed times are seconds. Values that do not exist in the log are NaN,
// each with a note in FlightSummary::notes saying why (the JSON writer turns
// NaN into null). Definitions: docs/analysis-events.md, "Summary".
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_series.hpp"

namespace baroz {

struct SummaryOptions {
  /// Heights H [m] for which the time spent above H is reported, in the
  /// order given (any finite value; duplicates are kept).
  std::vector<double> above_m;
  /// Intervals between usable rows longer than this are gaps and are not
  /// counted in time_above [s]; 0 = the events' gap threshold
  /// (FlightEvents::gap_s).
  double gap_s = 0.0;
};

/// Statistics of one phase of the flight, between two events (or an event
/// and an end of the log).
struct PhaseStats {
  std::string name;                 ///< "pre_launch", "ascent", "descent", "post_landing" or "stationary"
  bool complete = true;             ///< false when a bound is an end of the log, not an event
  double start_s = kMissing;        ///< elapsed time of the first row [s]
  double end_s = kMissing;          ///< elapsed time of the last row [s]
  double duration_s = kMissing;     ///< end_s - start_s [s]
  double start_height_m = kMissing; ///< height at the start [m]
  double end_height_m = kMissing;   ///< height at the end [m]
  double min_height_m = kMissing;   ///< lowest usable row [m]
  double max_height_m = kMissing;   ///< highest usable row [m]
  double mean_rate_mps = kMissing;  ///< (end - start height) / duration [m/s], positive up
  double max_vspeed_mps = kMissing;  ///< largest vspeed [m/s], positive up; NaN without vspeed
  double min_vspeed_mps = kMissing;  ///< smallest vspeed [m/s], positive up (negative = descent)
  std::size_t rows = 0;             ///< usable rows in the phase
};

/// Time spent above one height.
struct TimeAbove {
  double height_m = 0.0;    ///< the height H [m]
  double duration_s = 0.0;  ///< total time with height > H [s], gaps excluded
};

struct FlightSummary {
  double duration_s = kMissing;         ///< span of the log: last - first row time [s]
  double flight_duration_s = kMissing;  ///< landing - launch [s]
  double max_height_m = kMissing;       ///< the apogee event's height [m]
  double max_height_low_m = kMissing;   ///< its band [m]
  double max_height_high_m = kMissing;
  double launch_height_m = kMissing;    ///< mean height of the pre-launch rest [m]
  double landing_height_m = kMissing;   ///< mean height of the post-landing rest [m]
  double mean_ascent_rate_mps = kMissing;   ///< (apogee - launch height) / (apogee - launch time) [m/s]
  double mean_descent_rate_mps = kMissing;  ///< (apogee - landing height) / (landing - apogee time) [m/s], positive
  double max_ascent_rate_mps = kMissing;    ///< largest vspeed of a usable row [m/s]
  double max_descent_rate_mps = kMissing;   ///< largest -vspeed of a usable row [m/s], positive
  std::vector<PhaseStats> phases;
  std::vector<TimeAbove> time_above;
  std::size_t rows = 0;          ///< rows of the series
  std::size_t usable_rows = 0;   ///< rows used (not spikes, finite height, time increasing)
  std::size_t spike_rows = 0;    ///< rows flagged as spikes
  std::vector<std::string> notes;  ///< the events' notes, then why each missing value is missing
};

/// Computes the summary of `series` with its `events` (from detect_events on
/// the same series). Throws baroz::Error (usage) when options.gap_s is
/// negative or a height in options.above_m is not finite.
FlightSummary summarize_flight(const FlightSeries& series, const FlightEvents& events,
                               const SummaryOptions& options = {});

}  // namespace baroz
