// The caution every output a person may act on carries: --help, the README
// and the plot footer (product specification, "Cautions").
#pragma once

#include <string_view>

namespace baroz {

inline constexpr std::string_view kCaution =
    "Caution: barometric heights are estimates. They are not certified for navigation or "
    "separation from terrain, obstacles or aircraft; follow local aviation rules and licensed "
    "practice, and never use this output as the sole altitude source for flight-critical "
    "decisions.";

}  // namespace baroz
