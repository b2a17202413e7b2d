// A rejected row, as a value: what the reader, the validator or the model
// stage could not use, with where it was and why. Never an exception.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

namespace baroz {

/// Why a row was rejected. Codes (reject_code) are stable identifiers used in
/// --error-format json and in the documentation.
enum class RejectReason : std::uint8_t {
  kNotANumber,
  kMissingField,
  kNonFinite,
  kPressureNotPositive,
  kPressureOutOfRange,
  kTemperatureOutOfRange,
  kHumidityOutOfRange,
  kPositionOutOfRange,
  kBadTime,
  kExtraFields,
  kBadQuote,
  kUnterminatedQuote,
  kTooLong,
  kBadJson,
  kBadEncoding,
  kNoTemperature,     ///< the model needs this row's temperature and it is missing
  kOutsideModel,      ///< the model cannot give a height for this pressure
  kOutsideBase,       ///< no base-station pressure at this time (--outside-base reject)
  kCount
};

/// Stable snake_case code, e.g. "not_a_number".
std::string_view reject_code(RejectReason reason);

/// One rejected row. `message` is the text after "FILE:LINE: ", e.g.
/// `column 'pressure': "10O3.2" is not a number`.
struct RowProblem {
  RejectReason reason = RejectReason::kNotANumber;
  std::uint64_t line = 0;        ///< physical 1-based line
  std::uint64_t record = 0;      ///< 1-based data record number
  std::string column;            ///< column name involved, empty if none
  std::int64_t field = -1;       ///< 0-based field index involved, -1 if none
  std::string message;
  std::string_view raw;          ///< the record's text (valid until the next read)
};

}  // namespace baroz
