// Strict, locale-independent number parsing (see number_parse.hpp).
#include "baroz/core/number_parse.hpp"

#include <cmath>
#include <system_error>

#include <fast_float/fast_float.h>

namespace baroz {

namespace {

constexpr bool is_blank(char c) noexcept { return c == ' ' || c == '\t'; }

}  // namespace

ParsedNumber parse_number(std::string_view field, bool decimal_comma) {
  const char* first = field.data();
  const char* last = first + field.size();

  // Fast path: most fields have no surrounding blanks, so the trimming loops
  // run only when the first or last character is one.
  if (first == last) return {NumberStatus::kEmpty, 0.0};
  if (is_blank(*first) || is_blank(last[-1])) {
    while (first != last && is_blank(*first)) ++first;
    while (last != first && is_blank(last[-1])) --last;
    if (first == last) return {NumberStatus::kEmpty, 0.0};
  }

  // fast_float follows std::from_chars and rejects a leading '+'; accept one
  // here, but not a second sign after it ("+-1", "++1").
  if (*first == '+') {
    ++first;
    if (first == last || *first == '+' || *first == '-') {
      return {NumberStatus::kNotANumber, 0.0};
    }
  }

  // The decimal separator is a parse option of fast_float, so a decimal
  // comma needs no copy of the field; a '.' is then simply not consumed and
  // the field is rejected, as is a second ','.
  const fast_float::parse_options options(fast_float::chars_format::general,
                                          decimal_comma ? ',' : '.');
  double value = 0.0;
  const fast_float::from_chars_result result =
      fast_float::from_chars_advanced(first, last, value, options);
  if (result.ptr != last) return {NumberStatus::kNotANumber, 0.0};
  if (result.ec != std::errc()) {
    // Whole field consumed but out of range: only an overflow can get here.
    if (result.ec == std::errc::result_out_of_range) return {NumberStatus::kNonFinite, value};
    return {NumberStatus::kNotANumber, 0.0};
  }
  // "nan", "inf", "infinity" (any case, optional sign) and overflow to +-inf.
  if (!std::isfinite(value)) return {NumberStatus::kNonFinite, value};
  return {NumberStatus::kOk, value};
}

}  // namespace baroz
