// One decoded log sample: what the reader hands to the rest of the pipeline.
#pragma once

#include <cstdint>
#include <limits>
#include <string_view>

namespace baroz {

/// Time as integer nanoseconds: since the Unix epoch (UTC) for absolute times,
/// since the log's zero for relative times. Never a double.
using TimeNs = std::int64_t;

inline constexpr double kMissing = std::numeric_limits<double>::quiet_NaN();

/// Per-sample flags written to the `flags` column. A flag never drops a row.
enum SampleFlag : std::uint32_t {
  kFlagNone = 0,
  kFlagTimeBackwards = 1u << 0,  ///< time earlier than the previous sample's
  kFlagTimeDuplicate = 1u << 1,  ///< time equal to the previous sample's
  kFlagGap = 1u << 2,            ///< interval more than twice the nominal rate
  kFlagNoTemperature = 1u << 3,  ///< the temperature field was empty
  kFlagNoHumidity = 1u << 4,     ///< the humidity field was empty
  kFlagNoGnss = 1u << 5,         ///< a GNSS field (lat, lon, gnss_alt) was empty
  kFlagReferenceWindow = 1u << 6,///< the sample lies in the reference window
  kFlagExtrapolated = 1u << 7,   ///< the model was used outside its valid range
  kFlagSpike = 1u << 8,          ///< the spike filter found an outlier (row kept)
  kFlagNoBase = 1u << 9,         ///< outside the base-station log's span (nearest value held)
  kFlagLinearBand = 1u << 10,    ///< --monte-carlo left a limit undrawn: the linear band
};

/// Names of the flags as written in the `flags` column, in bit order.
inline constexpr std::string_view kFlagNames[] = {
    "time_backwards", "time_duplicate", "gap",          "no_temperature",
    "no_humidity",    "no_gnss",        "ref_window",   "extrapolated",
    "spike",          "no_base",        "linear_band"};

/// A sample in SI units. Optional quantities are NaN when missing.
struct Sample {
  TimeNs time_ns = 0;             ///< see TimeNs
  double pressure_pa = kMissing;  ///< static air pressure [Pa]
  double temperature_k = kMissing;///< air temperature [K]
  double humidity_pct = kMissing; ///< relative humidity over water [%]
  double lat_deg = kMissing;      ///< latitude [deg], WGS 84
  double lon_deg = kMissing;      ///< longitude [deg], WGS 84
  double gnss_alt_m = kMissing;   ///< GNSS altitude [m] as logged
  std::uint32_t flags = kFlagNone;
  std::uint64_t line = 0;         ///< physical 1-based line of the record
  std::uint64_t record = 0;       ///< 1-based data record number
  std::string_view time_text;     ///< the time field as given (valid until the next read)
  std::string_view raw;           ///< the record's text (valid until the next read)
};

}  // namespace baroz
