// Locale-independent ASCII helpers shared by the parsers (unit names, time
// zones, option values). Never consult the C locale.
#pragma once

#include <cstddef>
#include <string_view>

namespace baroz {

constexpr char ascii_lower(char c) noexcept {
  return (c >= 'A' && c <= 'Z') ? static_cast<char>(c - 'A' + 'a') : c;
}

/// ASCII case-insensitive equality; `lower` must already be lower case.
/// Non-ASCII bytes (the UTF-8 of "°") compare exactly.
constexpr bool iequals(std::string_view text, std::string_view lower) noexcept {
  if (text.size() != lower.size()) return false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    if (ascii_lower(text[i]) != lower[i]) return false;
  }
  return true;
}

}  // namespace baroz
