// `baroz inspect` as a library function: what the reader and the validator
// find in a log (layout, columns and units, rate, time span, gaps, rejects,
// ranges, the stationary pre-launch segment) without computing heights.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>

#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/pipeline/diagnostics.hpp"
#include "baroz/reference/reference.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

struct InspectOptions {
  ReaderOptions reader;
  ColumnOptions columns;
  bool decimal_comma = false;
  ValidationOptions validation;
  ReferenceOptions reference;  ///< for the pre-launch window (auto)
};

struct InspectReport {
  std::string source;
  std::string sha256;
  std::uint64_t bytes = 0;
  LogLayout layout;
  ColumnMap columns;
  bool absolute_time = false;
  std::uint64_t rows_read = 0, rows_usable = 0, rows_rejected = 0, blank_lines = 0;
  std::array<std::uint64_t, static_cast<std::size_t>(RejectReason::kCount)> rejected_by_reason{};
  TimeNs first_time_ns = 0, last_time_ns = 0, nominal_interval_ns = 0;
  std::uint64_t gaps = 0, time_backwards = 0, time_duplicates = 0;
  TimeNs longest_gap_ns = 0;
  double min_pressure_pa = kMissing, max_pressure_pa = kMissing;
  double min_temperature_k = kMissing, max_temperature_k = kMissing;
  std::uint64_t missing_temperature = 0, missing_humidity = 0, missing_gnss = 0;
  std::optional<Reference> reference;  ///< the auto window, when one was found
  std::string reference_error;         ///< why no window could be found
};

/// Reads the whole log. Row problems go to `diagnostics`; setup problems
/// (no header, no pressure column, ...) throw baroz::Error.
InspectReport run_inspect_job(ByteSource& input, const InspectOptions& options,
                              Diagnostics& diagnostics);

}  // namespace baroz
