#include "baroz/pipeline/flight_analysis.hpp"

namespace baroz {

FlightAnalysis analyse_flight(FlightSeries& series, const AnalysisOptions& options) {
  smooth_series(series, options.smoothing);
  FlightAnalysis out;
  out.events = detect_events(series, options.events);
  out.summary = summarize_flight(series, out.events, options.summary);
  return out;
}

}  // namespace baroz
