// The analysis stage's input: a computed height series held compactly in
// memory (32 bytes a row), as the height job hands it over. Smoothing,
// vertical speed, events, the summary and the plot all read this type.
#pragma once

#include <cstdint>
#include <limits>
#include <string>
#include <utility>
#include <vector>

#include "baroz/core/sample.hpp"

namespace baroz {

/// One row of a height series. Heights are geometric metres above the
/// reference (height_m of the series), always in metres whatever
/// --height-unit the series file uses. NaN where unknown.
struct FlightPoint {
  double time_s = 0.0;          ///< elapsed seconds since the series' first row
  float height_m = 0.0f;        ///< height above the reference [m]
  float low_m = 0.0f;           ///< lower edge of the band [m]
  float high_m = 0.0f;          ///< upper edge of the band [m]
  float temperature_c = std::numeric_limits<float>::quiet_NaN();  ///< air temperature [degC], NaN when unknown
  float vspeed_mps = std::numeric_limits<float>::quiet_NaN();  ///< vertical speed [m/s], NaN until estimated
  std::uint32_t flags = 0;      ///< SampleFlag bits (kFlagSpike set by the spike filter)
};

/// A whole series with what is needed to label it.
/// The error budget at one row: each term's 1-sigma height contribution.
struct BudgetAt {
  bool set = false;
  double elapsed_s = kMissing;
  double height_m = kMissing;
  double sigma_m = kMissing;                                  ///< total 1 sigma
  std::vector<std::pair<std::string, double>> terms;          ///< (term name, 1 sigma [m])
};

struct FlightSeries {
  std::string source;               ///< input name, as in messages
  bool absolute_time = false;       ///< times are UTC (start_time_ns since the epoch)
  TimeNs start_time_ns = 0;         ///< time of the first row (epoch ns when absolute_time)
  double elevation_m = kMissing;    ///< site elevation above MSL when known (--elevation), else NaN
  std::string model;                ///< height model used ("profile", ...)
  double confidence = 0.95;         ///< coverage of the band [0..1]
  std::vector<FlightPoint> points;  ///< in input order (time normally increasing)
  BudgetAt budget_at_max;           ///< at the row of the largest height
  BudgetAt budget_at_end;           ///< at the last row
};

}  // namespace baroz
