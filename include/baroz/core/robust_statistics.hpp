// Robust statistics shared by the reference detector and the analysis stage.
#pragma once

#include <algorithm>
#include <cstddef>
#include <limits>
#include <numbers>
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

/// Variance of the median of n independent normal values of unit variance
/// (the median as median_in_place() takes it). Exact for n = 1 (1) and
/// n = 2 (the mean of two, 1/2); for n >= 3 the approximation
/// pi / (2n + pi - 2), which tends to Laplace's asymptotic pi / (2n)
/// (Kendall & Stuart, The Advanced Theory of Statistics, vol. 1, the
/// large-sample variance of the median 1 / (4 n f(m)^2); from memory) and
/// meets the exact value at n = 1. Simulated (tests/test_temperature_random
/// .cpp): within 2 % for odd n; above the truth for even n >= 4 (by 16 % at
/// n = 4, 7 % at n = 10), so the band errs wide there. 0 for n = 0.
inline double median_variance_factor(std::size_t n) {
  if (n == 0) return 0.0;
  if (n == 2) return 0.5;
  return std::numbers::pi / (2.0 * static_cast<double>(n) + std::numbers::pi - 2.0);
}

}  // namespace baroz
