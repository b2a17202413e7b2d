// Robust statistics shared by the reference detector and the analysis stage.
#pragma once

#include <algorithm>
#include <cstddef>
#include <limits>
#include <span>

namespace baroz {

/// Consistency constant of the median absolute deviation for normally
/// distributed data: sigma = kMadToSigma * MAD, kMadToSigma = 1/Phi^-1(3/4)
/// (Hampel 1974; the value to four digits, from memory).
inline constexpr double kMadToSigma = 1.4826;

/// Median of `values` (the mean of the two middle values for an even
/// count); reorders them. NaN for an empty span.
inline double median_in_place(std::span<double> values) {
  if (values.empty()) return std::numeric_limits<double>::quiet_NaN();
  const auto mid = values.begin() + static_cast<std::ptrdiff_t>(values.size() / 2);
  std::nth_element(values.begin(), mid, values.end());
  const double upper = *mid;
  if (values.size() % 2 == 1) return upper;
  const double lower = *std::max_element(values.begin(), mid);
  return lower + 0.5 * (upper - lower);
}

}  // namespace baroz
