// The writer stage for the height series: CSV or NDJSON rows with exactly the
// pinned columns, in the pinned order, numbers exactly rounded and never NaN.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/core/sample.hpp"
#include "baroz/core/units.hpp"
#include "baroz/output/byte_sink.hpp"

namespace baroz {

enum class OutputFormat { kCsv, kNdjson };

struct SeriesOptions {
  OutputFormat format = OutputFormat::kCsv;
  LengthUnit height_unit = LengthUnit::kMetre;  ///< kMetre or kFoot
  int height_decimals = 3;       ///< 0.001 m (or ft)
  int pressure_decimals = 4;     ///< 0.0001 hPa
  int temperature_decimals = 3;  ///< 0.001 degC
  int elapsed_decimals = 3;      ///< 0.001 s
  bool altitude = false;         ///< write altitude_m (height above MSL)
  bool vspeed = false;           ///< write vspeed_mps
  int vspeed_decimals = 3;       ///< 0.001 m/s
  bool geopotential = false;     ///< write geopotential_height_m
  bool gnss_alt = false;         ///< write gnss_alt_m
  /// --sigma-columns: one column "<name>_m" per budget term (its 1-sigma
  /// contribution), in this order; empty: none.
  std::vector<std::string> sigma_columns;
  bool flags = true;             ///< write flags
  bool line_buffered = false;    ///< flush after every row
};

/// A column as described in the manifest (UDUNITS unit, CF standard name).
struct ColumnInfo {
  std::string name;
  std::string units;          ///< UDUNITS-2 string, "" for text
  std::string standard_name;  ///< CF standard name, "" where none exists
  std::string description;
};

/// One output row; values in SI (Pa, K, m), NaN where unknown.
struct SeriesRow {
  std::string_view time_text;
  TimeNs elapsed_ns = 0;
  double pressure_pa = kMissing;
  double temperature_k = kMissing;
  double height_m = kMissing;
  double height_low_m = kMissing;
  double height_high_m = kMissing;
  double altitude_m = kMissing;
  double vspeed_mps = kMissing;
  double geopotential_m = kMissing;
  double gnss_alt_m = kMissing;
  const double* sigma_m = nullptr;  ///< one value per SeriesOptions::sigma_columns [m]
  std::uint32_t flags = 0;
};

class SeriesWriter {
 public:
  SeriesWriter(ByteSink& sink, const SeriesOptions& options, bool time_is_number);
  ~SeriesWriter();
  SeriesWriter(const SeriesWriter&) = delete;
  SeriesWriter& operator=(const SeriesWriter&) = delete;

  /// The columns in order (also the CSV header).
  const std::vector<ColumnInfo>& columns() const { return columns_; }
  void write_header();
  void write_row(const SeriesRow& row);
  /// Writes what is buffered to the sink.
  void flush();

 private:
  void reserve(std::size_t bytes);
  char* number(char* p, double value, int decimals, double scale);
  ByteSink& sink_;
  SeriesOptions options_;
  bool time_is_number_ = false;
  std::vector<ColumnInfo> columns_;
  std::vector<std::string> keys_;  ///< NDJSON: "\"name\":" prefixes
  std::vector<char> buffer_;
  std::size_t used_ = 0;
};

/// Writes the flag names of `flags` joined by '|' (CSV) into `out`.
std::string flags_text(std::uint32_t flags);

}  // namespace baroz
