// `--ref-gnss`: the altitude of the launch point above MSL from the logged
// GNSS altitude, by a robust fit: the median of (GNSS altitude - barometric
// height) over the low part of the flight, where the barometric height's own
// error is small beside the GNSS vertical error. The barometric series is
// never replaced: only its datum comes from GNSS, so altitude_m can be written.
#pragma once

#include <cstddef>
#include <vector>

#include "baroz/core/sample.hpp"

namespace baroz {

/// A sample with a GNSS altitude, kept by the first pass.
struct GnssPair {
  TimeNs time_ns = 0;
  double pressure_pa = kMissing;
  double temperature_k = kMissing;
  double gnss_alt_m = kMissing;
};

struct GnssFit {
  double datum_m = kMissing;         ///< launch point's altitude above MSL [m]
  double spread_m = kMissing;        ///< 1.4826 MAD of the differences [m]
  double standard_error_m = kMissing;///< of the median, 1.2533 spread / sqrt(n_eff)
  std::size_t pairs = 0;             ///< differences used
  double effective_pairs = 0.0;      ///< n / (1 + 2 sum of the autocorrelations)
  double below_m = 0.0;              ///< the low part: barometric height at most this
};

/// Robust fit of the datum from `differences` = GNSS altitude - height, in
/// time order (GNSS errors are correlated over tens of seconds: the
/// standard error counts the effective number of independent differences).
/// Reorders them. NaN datum when empty.
GnssFit fit_gnss_datum(std::vector<double>& differences, double below_m);

}  // namespace baroz
