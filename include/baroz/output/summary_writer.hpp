// Writers of the flight summary: JSON (`baroz summary`, `baroz height
// --summary FILE`) and an aligned plain-text table (`baroz summary --text`).
//
// The JSON keys, the meaning of each value and its unit are documented in
// docs/summary.schema.json (JSON Schema draft 2020-12) and
// docs/analysis-events.md; the names pinned by the product specification
// (launch_time, burst_time / apogee_time, landing_time, each *_elapsed_s,
// max_height_m, max_height_low_m, max_height_high_m, mean_ascent_rate_mps,
// mean_descent_rate_mps, duration_s, notes) are kept exactly.
#pragma once

#include <string>

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_series.hpp"
#include "baroz/analysis/flight_summary.hpp"

namespace baroz {

/// The summary as pretty-printed JSON (RFC 8259, 2-space indent), ending
/// with a newline. Times are RFC 3339 UTC strings with millisecond precision
/// when series.absolute_time, else numbers of seconds on the log's clock
/// (start_time_ns / 1e9 + elapsed). Heights are metres, rates m/s (descent
/// rates positive), durations seconds, all rounded to 0.001; a missing
/// value is null and `notes` says why. `apogee_time` is always written (the
/// top, burst or not); `burst_time` is the same instant when the top was a
/// burst, else null.
std::string summary_json(const FlightSeries& series, const FlightEvents& events,
                         const FlightSummary& summary);

/// The summary as an aligned plain-text table (ASCII only; a non-ASCII byte
/// of the source name or a note becomes '?'), ending with a newline. Same
/// values and rounding as the JSON; a missing value is shown as "-".
std::string summary_text(const FlightSeries& series, const FlightEvents& events,
                         const FlightSummary& summary);

}  // namespace baroz
