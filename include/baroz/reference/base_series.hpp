// A ground base-station log as the reference manager uses it: pressure (and
// temperature) against time on the base's own clock, interpolated linearly at
// any time of the flight log.
//
// Linear interpolation suffices for barometric weather: between samples dt
// apart its error is at most |p''| dt^2 / 8. Synoptic and tidal changes have
// |p''| ~ 1e-6 Pa/s^2 (negligible at any logging rate); the fastest common
// signals, micro-barometric waves of ~5 Pa and ~5 min period, have ~2e-3
// Pa/s^2: 0.3 mPa at 1 s, 0.9 Pa at one sample a minute, below the noise of
// a base barometer. A smoother interpolant cannot recover what the base's
// rate aliased (docs/reference.md).
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "baroz/core/sample.hpp"

namespace baroz {

struct BaseSample {
  TimeNs time_ns = 0;               ///< on the base's clock
  double pressure_pa = kMissing;
  double temperature_k = kMissing;  ///< NaN when the base has no temperature
};

/// What the base gives at one time.
struct BaseValue {
  double pressure_pa = kMissing;
  double temperature_k = kMissing;
  bool inside = false;       ///< the time lies within the base's span
  double outside_s = 0.0;    ///< outside: seconds beyond the nearest end (nearest value held)
};

class BaseSeries {
 public:
  /// Sorts the samples by time (stable). Throws baroz::Error (input) when
  /// there are fewer than two.
  explicit BaseSeries(std::vector<BaseSample> samples);

  std::span<const BaseSample> samples() const { return samples_; }
  TimeNs first_ns() const { return samples_.front().time_ns; }
  TimeNs last_ns() const { return samples_.back().time_ns; }
  /// Median interval between samples [s].
  double interval_s() const { return interval_s_; }
  /// The base sensor's noise [Pa], robustly from first differences
  /// (1.4826 MAD / sqrt 2; the weather changes little between samples).
  double noise_sigma_pa() const { return noise_sigma_pa_; }
  /// Mean temperature [K], NaN without a temperature column.
  double mean_temperature_k() const { return mean_temperature_k_; }

  /// Linear interpolation at time `t_ns` on the base's clock; outside the
  /// span the nearest end's value with inside = false.
  BaseValue at(TimeNs t_ns) const;

 private:
  std::vector<BaseSample> samples_;
  double interval_s_ = 0.0;
  double noise_sigma_pa_ = 0.0;
  double mean_temperature_k_ = kMissing;
};

}  // namespace baroz
