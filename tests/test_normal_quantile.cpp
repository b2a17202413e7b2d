// Inverse standard normal CDF and the two-sided coverage factor.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <numbers>
#include <random>
#include <string>

#include "baroz/core/error.hpp"
#include "baroz/uncertainty/normal_quantile.hpp"

namespace {

using Catch::Detail::Approx;

/// Relative accuracy promised by normal_quantile.hpp.
constexpr double kRelTol = 1e-12;

/// Phi(x) - p evaluated without cancellation (lower or upper tail), divided
/// by the density: the error of x implied by the residual.
double implied_error(double x, double p) {
  const double inv_sqrt2 = std::numbers::sqrt2 / 2;
  const double residual = p <= 0.5 ? 0.5 * std::erfc(-x * inv_sqrt2) - p
                                   : (1.0 - p) - 0.5 * std::erfc(x * inv_sqrt2);
  const double density =
      std::exp(-0.5 * x * x) / std::sqrt(2.0 * std::numbers::pi);
  return residual / density;
}

}  // namespace

TEST_CASE("coverage factors match the standard normal table",
          "[uncertainty][normal_quantile]") {
  // Source: NIST/SEMATECH e-Handbook of Statistical Methods, section
  // 1.3.6.7.1, critical values of the standard normal distribution
  // (two-sided 90 %, 95 %, 99 %: 1.645, 1.960, 2.576), to the table's digits.
  CHECK(std::fabs(baroz::two_sided_coverage_factor(0.90) - 1.645) < 5e-4);
  CHECK(std::fabs(baroz::two_sided_coverage_factor(0.95) - 1.960) < 5e-4);
  CHECK(std::fabs(baroz::two_sided_coverage_factor(0.99) - 2.576) < 5e-4);
  // Same source, area from 0 to z = 1.00: 0.34134, so +-1 sigma covers
  // 0.68268 (5 decimals; dz = 5e-6 / phi(1) = 2.1e-5).
  CHECK(std::fabs(baroz::two_sided_coverage_factor(0.68268) - 1.0) < 3e-5);

  // The remaining digits are from memory (they agree with the table above);
  // checked to the promised relative accuracy.
  CHECK(baroz::two_sided_coverage_factor(0.95) ==
        Approx(1.959963984540054).epsilon(kRelTol));
  // erf(1/sqrt 2) = 0.6826894921370859 (from memory): k = 1.
  CHECK(baroz::two_sided_coverage_factor(0.6826894921370859) ==
        Approx(1.0).epsilon(kRelTol));
  CHECK(baroz::two_sided_coverage_factor(0.99) ==
        Approx(2.5758293035489).epsilon(kRelTol));
  CHECK(baroz::two_sided_coverage_factor(0.90) ==
        Approx(1.6448536269514722).epsilon(kRelTol));
}

TEST_CASE("normal quantile matches the standard normal table",
          "[uncertainty][normal_quantile]") {
  // Source: NIST/SEMATECH e-Handbook of Statistical Methods, section
  // 1.3.6.7.1 (area from 0 to z, 5 decimals; these rows from memory):
  // z = 1.96 -> 0.47500, z = 2.58 -> 0.49506, z = 3.00 -> 0.49865.
  // Tolerance: half a unit of the 5th decimal divided by the density at z.
  CHECK(std::fabs(baroz::normal_quantile(0.5 + 0.47500) - 1.96) < 1e-4);
  CHECK(std::fabs(baroz::normal_quantile(0.5 + 0.49506) - 2.58) < 4e-4);
  CHECK(std::fabs(baroz::normal_quantile(0.5 + 0.49865) - 3.00) < 1.2e-3);
  CHECK(std::fabs(baroz::normal_quantile(0.5 - 0.47500) + 1.96) < 1e-4);
  CHECK(baroz::normal_quantile(0.5) == 0.0);
}

TEST_CASE("normal quantile round-trips through erfc",
          "[uncertainty][normal_quantile]") {
  std::mt19937_64 rng(2718);
  std::uniform_real_distribution<double> unit(0.0, 1.0);
  std::uniform_real_distribution<double> log_p(-300.0, std::log10(0.5));
  double worst = 0.0;
  double worst_p = 0.0;
  for (int i = 0; i < 200'000; ++i) {
    double p;
    switch (i % 3) {
      case 0: p = unit(rng); break;                      // central
      case 1: p = std::pow(10.0, log_p(rng)); break;     // lower tail
      default: p = 1.0 - std::pow(10.0, log_p(rng));     // upper tail
    }
    if (!(p > 0.0 && p < 1.0)) continue;
    const double x = baroz::normal_quantile(p);
    REQUIRE(std::isfinite(x));
    if (x == 0.0) continue;
    const double rel = std::fabs(implied_error(x, p) / x);
    if (rel > worst) {
      worst = rel;
      worst_p = p;
    }
  }
  INFO("worst relative error " << worst << " at p = " << worst_p);
  CHECK(worst < kRelTol);
}

TEST_CASE("normal quantile is odd about one half and monotonic",
          "[uncertainty][normal_quantile]") {
  std::mt19937_64 rng(31);
  std::uniform_real_distribution<double> upper(0.5, 1.0);
  for (int i = 0; i < 10'000; ++i) {
    const double p = upper(rng);  // 1 - p is exact for p >= 0.5
    CHECK(baroz::normal_quantile(1.0 - p) == -baroz::normal_quantile(p));
  }
  double previous = -std::numeric_limits<double>::infinity();
  bool increasing = true;
  for (int i = 1; i < 100'000; ++i) {
    const double x = baroz::normal_quantile(i / 100'000.0);
    if (!(x > previous)) increasing = false;
    previous = x;
  }
  CHECK(increasing);
}

TEST_CASE("normal quantile at and outside the ends of (0, 1)",
          "[uncertainty][normal_quantile]") {
  CHECK(baroz::normal_quantile(0.0) == -std::numeric_limits<double>::infinity());
  CHECK(baroz::normal_quantile(1.0) == std::numeric_limits<double>::infinity());
  CHECK(std::isnan(baroz::normal_quantile(-0.1)));
  CHECK(std::isnan(baroz::normal_quantile(1.1)));
  CHECK(std::isnan(baroz::normal_quantile(std::numeric_limits<double>::quiet_NaN())));
  const double tiny = baroz::normal_quantile(std::numeric_limits<double>::denorm_min());
  CHECK(std::isfinite(tiny));
  CHECK(tiny < -38.0);  // Phi(-38) ~ 2.9e-316 > denorm_min ~ 4.9e-324
}

TEST_CASE("coverage factor rejects confidences outside (0, 1)",
          "[uncertainty][normal_quantile]") {
  for (double c : {0.0, 1.0, -0.5, 1.5, 95.0,
                   std::numeric_limits<double>::quiet_NaN()}) {
    INFO("confidence " << c);
    try {
      (void)baroz::two_sided_coverage_factor(c);
      FAIL("no exception");
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kUsage);
      CHECK(std::string(e.what()).rfind("confidence must be greater than 0 and less than 1, got ", 0) == 0);
    }
  }
  // Small confidences keep their relative precision: k ~ c sqrt(pi/2).
  CHECK(baroz::two_sided_coverage_factor(1e-10) ==
        Approx(1e-10 * std::sqrt(std::numbers::pi / 2)).epsilon(1e-9));
}
