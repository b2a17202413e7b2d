// Estimation of the clock offset of a base-station log against the flight
// log (`--base-offset auto`), from the segments where both sensors sit still
// together (pre-launch, post-landing).
//
// Method (docs/reference.md): both sensors then see the same weather, including
// the small micro-barometric fluctuations (a few Pa over minutes) that a
// steady drift lacks. For a candidate offset S the residuals
// e_i = p_flight(t_i) - k p_base(t_i - S) of each segment, minus their own mean
// (the sensors' offset may differ between segments), are summed in squares;
// S is the global minimum of that sum over every offset the base's span
// allows: a grid at half the base interval, then the vertex of a parabola
// fitted over +/- 3 sigma around the best grid point (the sum is rough on the
// scale of the base interval, from the base's own noise). Its 1-sigma uncertainty comes from the
// parabola's curvature, var(S) = 2 s^2 / SSE''(S), s^2 the residual variance
// (the Gauss-Newton covariance of a least-squares parameter). The estimate is
// refused when it cannot be trusted: too few samples, the minimum at the end
// of the allowed range, a flat minimum (sigma above the limit: no common
// fluctuation to align) or a second minimum as good within 3 sigma.
#pragma once

#include <cstddef>
#include <span>
#include <string>

#include "baroz/reference/base_series.hpp"
#include "baroz/reference/landing_detector.hpp"

namespace baroz {

struct ClockOffsetOptions {
  double max_abs_s = 6.0 * 3600.0;  ///< search no further than this
  double max_sigma_s = 10.0;        ///< refuse a less certain estimate
  std::size_t min_samples = 30;     ///< resting samples needed in all
};

struct ClockOffsetEstimate {
  bool ok = false;
  std::string why;             ///< the reason when !ok
  double offset_s = 0.0;       ///< seconds to add to the base's times
  double sigma_s = 0.0;        ///< 1-sigma uncertainty [s]
  std::size_t samples = 0;     ///< resting samples compared
  std::size_t segments = 0;
  double rms_pa = 0.0;         ///< residual rms at the optimum [Pa]
  double range_low_s = 0.0, range_high_s = 0.0;  ///< offsets searched
};

/// `segments`: resting samples of the flight log (each in time order);
/// `scale`: factor moving the base's pressure to the launch level.
ClockOffsetEstimate estimate_clock_offset(std::span<const std::span<const RestSample>> segments,
                                          const BaseSeries& base, double scale,
                                          const ClockOffsetOptions& options = {});

/// Sum of squared residuals at offset `offset_s` (each segment about its own
/// mean); NaN when a sample falls outside the base. For tests and the docs.
double clock_offset_sse(std::span<const std::span<const RestSample>> segments,
                        const BaseSeries& base, double scale, double offset_s);

}  // namespace baroz
