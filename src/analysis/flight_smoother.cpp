#include "baroz/analysis/flight_smoother.hpp"

#include <algorithm>
#include <cmath>

#include "baroz/core/error.hpp"
#include "baroz/core/robust_statistics.hpp"

namespace baroz {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

/// Positive intervals used for the nominal sampling interval.
constexpr std::size_t kRateIntervals = 16;
/// Fewer finite rows in a spike window: no decision (not a spike).
constexpr std::size_t kMinSpikeRows = 5;
/// At most this many rows of a spike window enter its statistics.
constexpr std::size_t kMaxSpikeRows = 64;
/// Fewer usable rows in a fit: NaN vspeed.
constexpr std::size_t kMinFitRows = 3;
/// The rows of a fit must span at least this fraction of its window.
constexpr double kMinFitSpanFraction = 0.25;
/// The running fit sums are recomputed from their rows after this many
/// updates or when the window has moved this many widths from their origin.
constexpr std::uint64_t kFitRecomputeUpdates = 4096;
constexpr double kFitRecomputeWidths = 2.0;

}  // namespace

FlightSmoother::FlightSmoother(const SmoothingOptions& options) : options_(options) {
  const auto positive = [](double x) { return std::isfinite(x) && x > 0.0; };
  if (!positive(options.spike_window_s))
    throw usage_error("spike window must be a positive duration");
  if (!positive(options.vspeed_window_s))
    throw usage_error("vspeed window must be a positive duration");
  if (!positive(options.spike_threshold)) throw usage_error("spike threshold must be positive");
  if (!std::isfinite(options.spike_floor_m) || options.spike_floor_m < 0.0)
    throw usage_error("spike floor must be a non-negative height");
  if (options.max_window_rows < kRateIntervals + 1)
    throw usage_error("max window rows must be at least 17");
  half_spike_s_ = 0.5 * options.spike_window_s;
  half_vspeed_s_ = 0.5 * options.vspeed_window_s;
  ring_.resize(64);
  mask_ = ring_.size() - 1;
  intervals_.reserve(kRateIntervals);
}

void FlightSmoother::fix_windows() {
  if (windows_fixed_) return;
  windows_fixed_ = true;
  nominal_interval_s_ = intervals_.empty() ? 0.0 : median_in_place(intervals_);
  const auto widened = [this](double window_s, std::size_t min_rows) {
    if (min_rows < 2) return window_s;
    return std::max(window_s, static_cast<double>(min_rows - 1) * nominal_interval_s_);
  };
  half_spike_s_ = 0.5 * widened(options_.spike_window_s, options_.spike_min_rows);
  half_vspeed_s_ = 0.5 * widened(options_.vspeed_window_s, options_.vspeed_min_rows);
  intervals_.clear();
  intervals_.shrink_to_fit();
}

void FlightSmoother::append(double time_s, double height_m) {
  if (end_ - base_ == ring_.size()) {  // grow by doubling, keeping sequence numbers
    std::vector<Row> bigger(ring_.size() * 2);
    const std::uint64_t bigger_mask = bigger.size() - 1;
    for (std::uint64_t s = base_; s < end_; ++s)
      bigger[static_cast<std::size_t>(s & bigger_mask)] = at(s);
    ring_.swap(bigger);
    mask_ = bigger_mask;
  }
  at(end_) = Row{end_, time_s, height_m, kNaN, kNaN, false};
  ++end_;
}

void FlightSmoother::push(double time_s, double height_m) {
  if (!std::isfinite(time_s)) {  // released alone: no window can hold it
    complete_segment();
    ++reversals_;
    append(time_s, height_m);
    spike_ = fit_ = segment_ = end_;
    trim();
    return;
  }
  if (end_ > segment_) {
    const double last = at(end_ - 1).time_s;
    if (time_s < last) {
      ++reversals_;
      complete_segment();
    } else if (end_ - fit_ >= options_.max_window_rows) {
      ++overflows_;
      complete_segment();
    } else if (!windows_fixed_ && time_s > last) {
      intervals_.push_back(time_s - last);
      if (intervals_.size() == kRateIntervals) fix_windows();
    }
  }
  append(time_s, height_m);
  if (windows_fixed_) advance();
  trim();
}

void FlightSmoother::advance() {
  // A decision for row c needs every row with t <= t_c + W/2; times never
  // decrease within a segment, so the newest row being later is enough.
  const double newest = at(end_ - 1).time_s;
  while (spike_ + 1 < end_ && newest > at(spike_).time_s + half_spike_s_) decide_spike(spike_++);
  // A fit needs the spike decision of every row in its window.
  while (fit_ < spike_ && at(spike_).time_s > at(fit_).time_s + half_vspeed_s_) fit(fit_++);
}

void FlightSmoother::complete_segment() {
  fix_windows();
  while (spike_ < end_) decide_spike(spike_++);
  while (fit_ < end_) fit(fit_++);
  segment_ = end_;
}

void FlightSmoother::finish() {
  complete_segment();
  trim();
}

void FlightSmoother::trim() {
  // Drop popped rows that no pending window can reach.
  while (base_ < out_) {
    // In the current segment, keep what the sliding windows still hold (all
    // of it before the segment's first decision, when their starts are stale).
    if (base_ >= segment_ && (base_ >= fit_lo_ || base_ >= spike_lo_)) break;
    ++base_;
  }
}

bool FlightSmoother::pop(SmoothedRow& out) {
  if (out_ >= fit_) return false;
  const Row& r = at(out_);
  out.index = r.index;
  out.time_s = r.time_s;
  out.height_m = r.height_m;
  out.spike = r.spike;
  out.vspeed_mps = r.vspeed_mps;
  out.smoothed_height_m = r.smoothed_m;
  ++out_;
  trim();
  return true;
}

void FlightSmoother::decide_spike(std::uint64_t c) {
  Row& row = at(c);
  row.spike = false;
  const double tc = row.time_s;
  // Slide the window [spike_lo_, spike_hi_) to the rows with |t - t_c| <= W_s/2
  // (rows before the segment or already dropped are out of reach).
  spike_lo_ = std::max(spike_lo_, std::max(segment_, base_));
  spike_hi_ = std::max(spike_hi_, spike_lo_);
  while (at(spike_lo_).time_s < tc - half_spike_s_) ++spike_lo_;  // stops at c at the latest
  if (spike_hi_ <= c) spike_hi_ = c + 1;
  while (spike_hi_ < end_ && at(spike_hi_).time_s <= tc + half_spike_s_) ++spike_hi_;
  if (!std::isfinite(row.height_m)) return;

  // The window's finite rows; in a window of more than kMaxSpikeRows rows
  // every step-th row counted from the centre (keeps the time span).
  const std::uint64_t rows = spike_hi_ - spike_lo_;
  const std::uint64_t step = rows > kMaxSpikeRows ? (rows + kMaxSpikeRows - 1) / kMaxSpikeRows : 1;
  scratch_t_.clear();
  scratch_h_.clear();
  std::size_t centre = 0;
  for (std::uint64_t s = c - (c - spike_lo_) / step * step; s < spike_hi_; s += step) {
    const Row& r = at(s);
    if (!std::isfinite(r.height_m)) continue;
    if (s == c) centre = scratch_t_.size();
    scratch_t_.push_back(r.time_s - tc);
    scratch_h_.push_back(r.height_m);
  }
  const std::size_t n = scratch_t_.size();
  if (n < kMinSpikeRows) return;

  // Local robust slope: median of the slopes of the pairs (k, k + m),
  // m = ceil(n/2) (Theil 1950, incomplete method); equal times skipped.
  const std::size_t m = n - n / 2;
  scratch_w_.clear();
  for (std::size_t k = 0; k + m < n; ++k) {
    const double dt = scratch_t_[k + m] - scratch_t_[k];
    if (dt > 0.0) scratch_w_.push_back((scratch_h_[k + m] - scratch_h_[k]) / dt);
  }
  const double slope = scratch_w_.empty() ? 0.0 : median_in_place(scratch_w_);

  // Hampel identifier on the residuals from the local line (Pearson et al.
  // 2016: x_k is an outlier when |x_k - m_k| > t S_k, m_k the window median,
  // S_k = 1.4826 MAD), with the floor as a lower bound of t S_k.
  scratch_w_.clear();
  for (std::size_t j = 0; j < n; ++j) scratch_w_.push_back(scratch_h_[j] - slope * scratch_t_[j]);
  const double centre_residual = scratch_w_[centre];
  if (options_.spike_floor_m > 0.0) {
    // Shortcut: when at most (n-1)/2 residuals lie below r_c - floor and at
    // most (n-1)/2 above r_c + floor, the median lies within the floor of r_c
    // and the row is no spike, whatever the MAD (the usual case).
    const double below = centre_residual - options_.spike_floor_m;
    const double above = centre_residual + options_.spike_floor_m;
    std::size_t n_below = 0, n_above = 0;
    for (const double r : scratch_w_) {
      n_below += r < below ? 1 : 0;
      n_above += r > above ? 1 : 0;
    }
    if (n_below <= (n - 1) / 2 && n_above <= (n - 1) / 2) return;
  }
  const double med = median_in_place(scratch_w_);
  for (double& r : scratch_w_) r = std::fabs(r - med);
  const double mad = median_in_place(scratch_w_);
  const double limit =
      std::max(options_.spike_threshold * kMadToSigma * mad, options_.spike_floor_m);
  row.spike = std::fabs(centre_residual - med) > limit;
}

void FlightSmoother::fit_add(const Row& r, double sign) {
  if (!usable(r)) return;
  const double u = r.time_s - ref_t_;
  const double g = r.height_m - ref_h_;
  n_ += sign;
  su_ += sign * u;
  sg_ += sign * g;
  suu_ += sign * u * u;
  sug_ += sign * u * g;
  ++fit_updates_;
}

void FlightSmoother::fit_recompute(double ref_time_s) {
  ref_t_ = ref_time_s;
  ref_h_ = 0.0;
  for (std::uint64_t s = fit_lo_; s < fit_hi_; ++s) {
    if (usable(at(s))) {
      ref_h_ = at(s).height_m;
      break;
    }
  }
  n_ = su_ = sg_ = suu_ = sug_ = 0.0;
  for (std::uint64_t s = fit_lo_; s < fit_hi_; ++s) fit_add(at(s), 1.0);
  fit_updates_ = 0;
}

void FlightSmoother::fit(std::uint64_t c) {
  Row& row = at(c);
  row.vspeed_mps = kNaN;
  row.smoothed_m = kNaN;
  const double tc = row.time_s;
  // Slide the window [fit_lo_, fit_hi_) to the rows with |t - t_c| <= W_v/2;
  // every row in it has its spike decision (advance() waits for that).
  if (fit_lo_ < segment_ || fit_hi_ < fit_lo_) {
    fit_lo_ = fit_hi_ = segment_;
    fit_recompute(tc);
    if (std::isfinite(row.height_m)) ref_h_ = row.height_m;  // the sums are empty
  }
  while (fit_hi_ < end_ && at(fit_hi_).time_s <= tc + half_vspeed_s_) fit_add(at(fit_hi_++), 1.0);
  while (fit_lo_ < fit_hi_ && at(fit_lo_).time_s < tc - half_vspeed_s_)
    fit_add(at(fit_lo_++), -1.0);
  if (n_ < 0.5) {  // no usable row in the window: restart the sums exactly
    n_ = su_ = sg_ = suu_ = sug_ = 0.0;
    ref_t_ = tc;
    if (std::isfinite(row.height_m)) ref_h_ = row.height_m;
    fit_updates_ = 0;
  } else if (fit_updates_ >= kFitRecomputeUpdates ||
             std::fabs(tc - ref_t_) > kFitRecomputeWidths * 2.0 * half_vspeed_s_) {
    fit_recompute(tc);
  }
  if (!std::isfinite(row.height_m) || n_ < static_cast<double>(kMinFitRows) - 0.5) return;

  // Time span of the usable rows (times are sorted within a segment).
  std::uint64_t first = fit_lo_, last = fit_hi_ - 1;
  while (!usable(at(first))) ++first;
  while (!usable(at(last))) --last;
  if (at(last).time_s - at(first).time_s < kMinFitSpanFraction * 2.0 * half_vspeed_s_) return;

  // Ordinary least squares, h = a + b (t - t_c):
  //   b = Sxy / Sxx, Sxx = S_uu - S_u^2 / n, Sxy = S_ug - S_u S_g / n.
  const double mean_u = su_ / n_;
  const double mean_g = sg_ / n_;
  const double sxx = suu_ - su_ * mean_u;
  const double sxy = sug_ - su_ * mean_g;
  if (!(sxx > 0.0)) return;
  const double slope = sxy / sxx;
  row.vspeed_mps = slope;
  // a = mean_h + b (t_c - mean_t): the line at the row's own time.
  row.smoothed_m = ref_h_ + mean_g + slope * ((tc - ref_t_) - mean_u);
}

void smooth_series(FlightSeries& series, const SmoothingOptions& options) {
  FlightSmoother smoother(options);
  SmoothedRow row;
  auto store = [&] {
    while (smoother.pop(row)) {
      FlightPoint& p = series.points[static_cast<std::size_t>(row.index)];
      p.flags =
          row.spike ? (p.flags | kFlagSpike) : (p.flags & ~static_cast<std::uint32_t>(kFlagSpike));
      p.vspeed_mps = static_cast<float>(row.vspeed_mps);
    }
  };
  for (const FlightPoint& p : series.points) {
    smoother.push(p.time_s, static_cast<double>(p.height_m));
    store();
  }
  smoother.finish();
  store();
}

}  // namespace baroz
