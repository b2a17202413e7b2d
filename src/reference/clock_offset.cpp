#include "baroz/reference/clock_offset.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

#include <fmt/format.h>

namespace baroz {

double clock_offset_sse(std::span<const std::span<const RestSample>> segments,
                        const BaseSeries& base, double scale, double offset_s) {
  const auto shift = static_cast<TimeNs>(std::llround(offset_s * 1e9));
  const auto b = base.samples();
  double total = 0.0;
  for (const auto& seg : segments) {
    if (seg.empty()) continue;
    // Merge walk: the segment's times are increasing, so is the cursor.
    std::size_t j = 0;
    double sum = 0.0, sum2 = 0.0;
    for (const RestSample& s : seg) {
      const TimeNs t = s.time_ns - shift;
      if (t < b.front().time_ns || t > b.back().time_ns)
        return std::numeric_limits<double>::quiet_NaN();
      while (j + 2 < b.size() && b[j + 1].time_ns <= t) ++j;
      if (b[j].time_ns > t) j = 0;  // times not in order: restart (rare)
      while (j + 2 < b.size() && b[j + 1].time_ns <= t) ++j;
      const BaseSample& lo = b[j];
      const BaseSample& hi = b[j + 1];
      const double span = static_cast<double>(hi.time_ns - lo.time_ns);
      const double w = span > 0.0 ? static_cast<double>(t - lo.time_ns) / span : 0.0;
      const double pb = lo.pressure_pa + w * (hi.pressure_pa - lo.pressure_pa);
      const double e = s.pressure_pa - scale * pb;
      sum += e;
      sum2 += e * e;
    }
    const double n = static_cast<double>(seg.size());
    total += sum2 - sum * sum / n;
  }
  return total;
}

ClockOffsetEstimate estimate_clock_offset(std::span<const std::span<const RestSample>> segments,
                                          const BaseSeries& base, double scale,
                                          const ClockOffsetOptions& options) {
  ClockOffsetEstimate est;
  TimeNs t_min = std::numeric_limits<TimeNs>::max(), t_max = std::numeric_limits<TimeNs>::min();
  for (const auto& seg : segments) {
    if (seg.empty()) continue;
    ++est.segments;
    est.samples += seg.size();
    for (const auto& s : seg) {
      t_min = std::min(t_min, s.time_ns);
      t_max = std::max(t_max, s.time_ns);
    }
  }
  if (est.samples < options.min_samples) {
    est.why = fmt::format("only {} resting samples of the flight log to compare (at least {} "
                          "needed)",
                          est.samples, options.min_samples);
    return est;
  }
  // Offsets for which every resting sample falls inside the base's span.
  const double lo = std::max(static_cast<double>(t_max - base.last_ns()) * 1e-9, -options.max_abs_s);
  const double hi = std::min(static_cast<double>(t_min - base.first_ns()) * 1e-9, options.max_abs_s);
  est.range_low_s = lo;
  est.range_high_s = hi;
  if (!(hi > lo)) {
    est.why = fmt::format("the base log does not cover the flight log's resting segments for "
                          "any clock offset within {:.0f} s",
                          options.max_abs_s);
    return est;
  }
  auto sse = [&](double s) { return clock_offset_sse(segments, base, scale, s); };
  const double step = std::max(base.interval_s() / 2.0, 0.05);
  const auto n_grid = static_cast<std::size_t>(std::floor((hi - lo) / step)) + 1;
  std::vector<double> grid(n_grid);
  std::size_t best = 0;
  for (std::size_t i = 0; i < n_grid; ++i) {
    grid[i] = sse(lo + static_cast<double>(i) * step);
    if (!(grid[i] >= grid[best])) best = i;
  }
  if (n_grid < 3 || best == 0 || best + 1 == n_grid) {
    est.why = "the best match lies at the end of the offsets the base log's span allows";
    return est;
  }
  const double s_grid = lo + static_cast<double>(best) * step;
  const auto dof = static_cast<double>(est.samples - est.segments - 1);
  // The sum is rough on the scale of the base interval (noise in the base
  // samples being interpolated), so its curvature and its minimum are taken
  // from a parabola fitted over a wider span +/- w, widened to 3 sigma.
  double s_hat = s_grid, curvature = 0.0, f0 = sse(s_grid);
  double w = std::max(5.0 * base.interval_s(), 5.0);
  for (int pass = 0; pass < 4; ++pass) {
    constexpr int kPoints = 41;
    double m[5] = {0, 0, 0, 0, 0}, v[3] = {0, 0, 0};  // sums of x^k and x^k y
    int used = 0;
    for (int k = 0; k < kPoints; ++k) {
      const double x = -w + 2.0 * w * k / (kPoints - 1);
      const double y = sse(s_grid + x);
      if (!std::isfinite(y)) continue;
      ++used;
      double xp = 1.0;
      for (int q = 0; q < 5; ++q) {
        if (q < 3) v[q] += xp * y;
        m[q] += xp;
        xp *= x;
      }
    }
    if (used < 5) break;
    // Normal equations for y = c0 + c1 x + c2 x^2 (Cramer's rule).
    const double A[3][3] = {{m[0], m[1], m[2]}, {m[1], m[2], m[3]}, {m[2], m[3], m[4]}};
    auto det3 = [](const double M[3][3]) {
      return M[0][0] * (M[1][1] * M[2][2] - M[1][2] * M[2][1]) -
             M[0][1] * (M[1][0] * M[2][2] - M[1][2] * M[2][0]) +
             M[0][2] * (M[1][0] * M[2][1] - M[1][1] * M[2][0]);
    };
    const double d = det3(A);
    double B1[3][3], B2[3][3];
    for (int r = 0; r < 3; ++r)
      for (int q = 0; q < 3; ++q) {
        B1[r][q] = q == 1 ? v[r] : A[r][q];
        B2[r][q] = q == 2 ? v[r] : A[r][q];
      }
    const double c1 = det3(B1) / d, c2 = det3(B2) / d;
    curvature = 2.0 * c2;
    if (!(curvature > 0.0)) break;
    const double vertex = -c1 / (2.0 * c2);
    s_hat = std::fabs(vertex) <= w ? s_grid + vertex : s_grid;
    f0 = std::min(f0, sse(s_hat));
    const double sigma = std::sqrt(2.0 * std::max(f0 / dof, 1e-12) / curvature);
    if (w >= 3.0 * sigma || 3.0 * sigma > 4.0 * options.max_sigma_s) break;
    w = 3.0 * sigma;
  }
  const double s2 = std::max(f0 / dof, 1e-12);
  est.offset_s = s_hat;
  est.rms_pa = std::sqrt(sse(s_hat) / static_cast<double>(est.samples));
  est.sigma_s = curvature > 0.0 && std::isfinite(curvature) ? std::sqrt(2.0 * s2 / curvature)
                                                            : std::numeric_limits<double>::infinity();
  if (!(est.sigma_s <= options.max_sigma_s)) {
    est.why = fmt::format("the resting segments show too little pressure variation common to "
                          "both sensors to align them (best {:+.1f} s, sigma {:.1f} s above the "
                          "{:.0f} s limit)",
                          s_hat, est.sigma_s, options.max_sigma_s);
    return est;
  }
  // A second local minimum as good (within 3 sigma in the chi-square sense)?
  const double far = std::max(3.0 * step, 5.0 * est.sigma_s);
  for (std::size_t i = 1; i + 1 < n_grid; ++i) {
    const double s = lo + static_cast<double>(i) * step;
    if (std::fabs(s - s_hat) <= far) continue;
    if (!(grid[i] <= grid[i - 1] && grid[i] <= grid[i + 1])) continue;
    if ((grid[i] - f0) / s2 < 9.0) {
      est.why = fmt::format("two clock offsets match about equally well ({:+.1f} s and {:+.1f} s)",
                            s_hat, s);
      return est;
    }
  }
  est.ok = true;
  return est;
}

}  // namespace baroz
