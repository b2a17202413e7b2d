// Strict, locale-independent parsing of numeric fields with fast_float.
//
// This is the hot path of every reader (one call per numeric field), so it
// never allocates, never consults the C or C++ locale, and takes a fast path
// when the field has no surrounding blanks.
#pragma once

#include <string_view>

namespace baroz {

enum class NumberStatus {
  kOk,
  kEmpty,       ///< the field is empty (after trimming spaces)
  kNotANumber,  ///< fast_float did not consume the whole field
  kNonFinite,   ///< nan, inf, or a value that overflows a double
};

struct ParsedNumber {
  NumberStatus status = NumberStatus::kEmpty;
  double value = 0.0;  ///< the number when status is kOk, else 0 (kEmpty, kNotANumber) or +-inf/nan (kNonFinite)
};

/// Parses a whole field as a decimal number. Leading and trailing ASCII
/// spaces and tabs are trimmed; a leading '+' is accepted; everything else
/// must be consumed by fast_float (general format: fixed or exponent).
/// With `decimal_comma`, a single ',' is read as the decimal separator
/// (and '.' is then not accepted). Never allocates.
///
/// Accepted: "12", "-3.25", "+0.5", ".5", "5.", "1e5", "1.5E-3", " 7 ".
/// kEmpty: "", "   ". kNonFinite: "nan", "-inf", "+Infinity" (any case, any
/// sign), and values beyond the double range such as "1e400" (values below
/// the smallest subnormal become 0 and are kOk).
/// kNotANumber: "0x10", "1,5" (without `decimal_comma`), "10O3.2", "1.2.3",
/// "+", "-", ".", "+-1", "1e", "1 2", "inf x".
ParsedNumber parse_number(std::string_view field, bool decimal_comma = false);

}  // namespace baroz
