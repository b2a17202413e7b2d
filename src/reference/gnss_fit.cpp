#include "baroz/reference/gnss_fit.hpp"

#include <algorithm>
#include <cmath>

#include "baroz/core/robust_statistics.hpp"

namespace baroz {

GnssFit fit_gnss_datum(std::vector<double>& d, double below_m) {
  GnssFit fit;
  fit.below_m = below_m;
  fit.pairs = d.size();
  if (d.empty()) return fit;
  // Effective number of independent differences, n / (1 + 2 sum rho_k),
  // the autocorrelations summed up to the first lag where they fall below
  // 0.05 (the initial-positive-sequence rule; e.g. Wilks, Statistical Methods
  // in the Atmospheric Sciences, sec. 5.2.4, from memory). Computed before
  // the median reorders them.
  const std::size_t n = d.size();
  double mean = 0.0;
  for (double x : d) mean += x;
  mean /= static_cast<double>(n);
  double c0 = 0.0;
  for (double x : d) c0 += (x - mean) * (x - mean);
  double rho_sum = 0.0;
  const std::size_t max_lag = std::min<std::size_t>(n / 4, 2000);
  for (std::size_t k = 1; c0 > 0.0 && k <= max_lag; ++k) {
    double ck = 0.0;
    for (std::size_t i = 0; i + k < n; ++i) ck += (d[i] - mean) * (d[i + k] - mean);
    const double rho = ck / c0;
    if (rho < 0.05) break;
    rho_sum += rho;
  }
  fit.effective_pairs =
      std::clamp(static_cast<double>(n) / (1.0 + 2.0 * rho_sum), 1.0, static_cast<double>(n));
  fit.datum_m = median_in_place(d);
  for (double& x : d) x = std::fabs(x - fit.datum_m);
  fit.spread_m = kMadToSigma * median_in_place(d);
  // Asymptotic efficiency of the median for normal errors: its standard error
  // is sqrt(pi/2) sigma / sqrt(n) (from memory; any statistics text).
  fit.standard_error_m = 1.2533 * fit.spread_m / std::sqrt(fit.effective_pairs);
  return fit;
}

}  // namespace baroz
