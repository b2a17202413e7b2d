#include "baroz/reference/gnss_fit.hpp"

#include <cmath>

#include "baroz/core/robust_statistics.hpp"

namespace baroz {

GnssFit fit_gnss_datum(std::vector<double>& d, double below_m) {
  GnssFit fit;
  fit.below_m = below_m;
  fit.pairs = d.size();
  if (d.empty()) return fit;
  fit.datum_m = median_in_place(d);
  for (double& x : d) x = std::fabs(x - fit.datum_m);
  fit.spread_m = kMadToSigma * median_in_place(d);
  // Asymptotic efficiency of the median for normal errors: its standard error
  // is sqrt(pi/2) sigma / sqrt(n) (from memory; any statistics text). GNSS
  // errors are correlated over tens of seconds, so this is a lower bound.
  fit.standard_error_m =
      1.2533 * fit.spread_m / std::sqrt(static_cast<double>(fit.pairs));
  return fit;
}

}  // namespace baroz
