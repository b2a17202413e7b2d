// Fast, exactly rounded, locale-independent fixed-point number writers for
// the CSV and NDJSON hot paths.
//
// All functions write into a caller-provided buffer (no allocation) and
// return the pointer one past the last character written; no terminating
// NUL is written. The buffer must hold at least the documented maximum.
#pragma once

#include <cstddef>
#include <cstdint>

namespace baroz {

/// Largest number of decimals accepted by write_fixed / write_elapsed_ns.
inline constexpr int kMaxFixedDecimals = 9;

/// Buffer size that is always enough for write_fixed: sign, 309 integer
/// digits (DBL_MAX ~ 1.8e308), the point and 9 decimals.
inline constexpr std::size_t kMaxFixedChars = 1 + 309 + 1 + kMaxFixedDecimals;

/// Buffer size that is always enough for write_int (sign + 19 digits).
inline constexpr std::size_t kMaxIntChars = 20;

/// Buffer size that is always enough for write_elapsed_ns: sign, 10 integer
/// digits (INT64 ns ~ 9.2e9 s), the point and 9 decimals.
inline constexpr std::size_t kMaxElapsedChars = 1 + 10 + 1 + kMaxFixedDecimals;

/// True if `value` may be given to write_fixed (finite). NaN and infinity are
/// never written by baroz (empty CSV field, `null` in JSON).
bool is_writable(double value) noexcept;

/// Writes `value` in fixed notation with exactly `decimals` digits after the
/// point (no point when `decimals` is 0), e.g. (123.4567, 3) -> "123.457".
///
/// The text is identical to
///   std::to_chars(first, last, value, std::chars_format::fixed, decimals)
/// i.e. the exact binary value rounded half to even at the last digit,
/// except that a result that would read as negative zero ("-0.000") is
/// written without the sign ("0.000").
///
/// `value`: finite (precondition, asserted in debug builds; see is_writable).
/// `decimals`: 0..kMaxFixedDecimals (asserted).
/// `out`: room for kMaxFixedChars characters (for |value| < 1e15 with up to
/// 9 decimals, 27 are enough).
char* write_fixed(char* out, double value, int decimals) noexcept;

/// Writes a signed integer in decimal, e.g. -42 -> "-42". `out`: room for
/// kMaxIntChars characters.
char* write_int(char* out, long long value) noexcept;

/// Writes a duration or time given as integer nanoseconds as seconds with
/// `decimals` digits after the point, computed exactly from the integer and
/// rounded half to even at the cut: 1500000 ns, 3 -> "0.002"; 2500000 ns,
/// 3 -> "0.002"; -1234567890 ns, 2 -> "-1.23". A result that rounds to zero
/// is written without a sign.
///
/// `ns`: any value [ns]. `decimals`: 0..kMaxFixedDecimals (asserted).
/// `out`: room for kMaxElapsedChars characters.
char* write_elapsed_ns(char* out, std::int64_t ns, int decimals) noexcept;

}  // namespace baroz
