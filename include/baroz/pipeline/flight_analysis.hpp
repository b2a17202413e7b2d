// The analysis stage over a whole height series: smoothing (spike flags and
// vertical speed), events, and the summary, in that order.
#pragma once

#include "baroz/analysis/events.hpp"
#include "baroz/analysis/flight_series.hpp"
#include "baroz/analysis/flight_smoother.hpp"
#include "baroz/analysis/flight_summary.hpp"

namespace baroz {

struct AnalysisOptions {
  SmoothingOptions smoothing;
  EventOptions events;
  SummaryOptions summary;
};

struct FlightAnalysis {
  FlightEvents events;
  FlightSummary summary;
};

/// Smooths `series` in place (kFlagSpike and vspeed_mps of every point),
/// then finds the events and summarises the flight.
FlightAnalysis analyse_flight(FlightSeries& series, const AnalysisOptions& options);

}  // namespace baroz
