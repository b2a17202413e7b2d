// Inverse standard normal CDF: Acklam's rational approximation refined by
// one Halley step; see normal_quantile.hpp.
#include "baroz/uncertainty/normal_quantile.hpp"

#include <cmath>
#include <limits>
#include <numbers>

#include <fmt/format.h>

#include "baroz/core/error.hpp"

namespace baroz {
namespace {

// Acklam (2003): coefficients of the rational approximations.
constexpr double kA[6] = {-3.969683028665376e+01, 2.209460984245205e+02,
                          -2.759285104469687e+02, 1.383577518672690e+02,
                          -3.066479806614716e+01, 2.506628277459239e+00};
constexpr double kB[5] = {-5.447609879822406e+01, 1.615858368580409e+02,
                          -1.556989798598866e+02, 6.680131188771972e+01,
                          -1.328068155288572e+01};
constexpr double kC[6] = {-7.784894002430293e-03, -3.223964580411365e-01,
                          -2.400758277161838e+00, -2.549732539343734e+00,
                          4.374664141464968e+00,  2.938163982698783e+00};
constexpr double kD[4] = {7.784695709041462e-03, 3.224671290700398e-01,
                          2.445134137142996e+00, 3.754408661907416e+00};
// Acklam (2003): boundary between the central and the tail approximation.
constexpr double kPLow = 0.02425;

constexpr double kInvSqrt2 = std::numbers::sqrt2 / 2.0;  // 1/sqrt(2), exact halving

double sqrt_two_pi() {
  static const double value = std::sqrt(2.0 * std::numbers::pi);
  return value;
}

/// Halley's step for f(x) = Phi(x) - p, given the residual e = f(x) and
/// u = e / phi(x): f' = phi, f'' = -x phi, so
/// x - (f/f') / (1 - f f'' / (2 f'^2)) = x - u / (1 + x u / 2). (Acklam 2003)
double halley(double x, double u) { return x - u / (1.0 + x * u / 2.0); }

/// Quantile for p = 0.5 + s with |s| <= 0.5 - kPLow, from s itself (so that
/// small s keeps its relative precision).
double central_quantile(double s) {
  const double r = s * s;
  // Acklam (2003), central region.
  const double x =
      (((((kA[0] * r + kA[1]) * r + kA[2]) * r + kA[3]) * r + kA[4]) * r + kA[5]) * s /
      (((((kB[0] * r + kB[1]) * r + kB[2]) * r + kB[3]) * r + kB[4]) * r + 1.0);
  // Phi(x) - p = erf(x / sqrt 2) / 2 - s: no cancellation against 0.5.
  const double e = 0.5 * std::erf(x * kInvSqrt2) - s;
  const double u = e * sqrt_two_pi() * std::exp(0.5 * x * x);  // e / phi(x)
  return halley(x, u);
}

/// Quantile for a lower-tail probability 0 < q < kPLow (x < -1.97).
double lower_tail_quantile(double q) {
  const double r = std::sqrt(-2.0 * std::log(q));
  // Acklam (2003), lower region.
  const double x =
      (((((kC[0] * r + kC[1]) * r + kC[2]) * r + kC[3]) * r + kC[4]) * r + kC[5]) /
      ((((kD[0] * r + kD[1]) * r + kD[2]) * r + kD[3]) * r + 1.0);
  // Phi(x) = erfc(-x / sqrt 2) / 2, accurate in relative terms in the tail.
  const double e = 0.5 * std::erfc(-x * kInvSqrt2) - q;
  // e / phi(x) = (e / q) * q sqrt(2 pi) exp(x^2 / 2), with q exp(x^2/2)
  // formed in logarithms: exp(x^2/2) alone overflows for |x| > 37.7.
  const double u = (e / q) * sqrt_two_pi() * std::exp(std::log(q) + 0.5 * x * x);
  return halley(x, u);
}

}  // namespace

double normal_quantile(double p) {
  if (!(p >= 0.0 && p <= 1.0)) return std::numeric_limits<double>::quiet_NaN();
  if (p == 0.0) return -std::numeric_limits<double>::infinity();
  if (p == 1.0) return std::numeric_limits<double>::infinity();
  // Symmetry Phi^-1(p) = -Phi^-1(1 - p); 1 - p is exact for p >= 0.5.
  if (p > 0.5) return -normal_quantile(1.0 - p);
  if (p < kPLow) return lower_tail_quantile(p);
  return central_quantile(p - 0.5);  // exact for p >= 0.25, else within 2^-55
}

double two_sided_coverage_factor(double confidence) {
  if (!(confidence > 0.0 && confidence < 1.0)) {
    throw usage_error(fmt::format(
        "confidence must be greater than 0 and less than 1, got {}", confidence));
  }
  // k = Phi^-1((1 + c) / 2), from the tail probability (1 - c) / 2 (exact
  // for c >= 0.5) or from s = c / 2 (exact) for small c, never forming the
  // rounded 1 + c.
  if (confidence < 0.5) return central_quantile(0.5 * confidence);
  return -normal_quantile(0.5 * (1.0 - confidence));
}

}  // namespace baroz
