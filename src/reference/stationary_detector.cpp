#include "baroz/reference/stationary_detector.hpp"

#include <algorithm>
#include <cmath>

#include "baroz/core/robust_statistics.hpp"

namespace baroz {

double StationaryDetector::baseline() const {
  // An empty span (a long gap after a transient): the last resting value.
  return span_count_ > 0 ? span_sum_ / static_cast<double>(span_count_) : last_resting_pa_;
}

double StationaryDetector::threshold() {
  return std::max(options_.min_departure_pa, options_.noise_multiple * sigma_);
}

void StationaryDetector::include(std::size_t i, bool use) {
  included_[i] = use ? 1 : 0;
  if (use) {
    last_resting_pa_ = pressures_[i];
    span_sum_ += pressures_[i];
    ++span_count_;
  }
}

void StationaryDetector::update_noise() {
  // Robust noise from first differences of the last (up to) 256 resting samples.
  std::vector<double> d;
  const std::size_t begin = window_end_ > 257 ? window_end_ - 257 : 0;
  std::size_t prev = SIZE_MAX;
  for (std::size_t i = begin; i < window_end_; ++i) {
    if (!included_[i]) continue;
    if (prev != SIZE_MAX) d.push_back(std::fabs(pressures_[i] - pressures_[prev]));
    prev = i;
  }
  if (d.size() < 8) return;
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  // MAD of differences (their median is ~0): sigma_diff = 1.4826 MAD, and
  // differences of independent samples have sqrt(2) times the sample noise.
  sigma_ = kMadToSigma * d[d.size() / 2] / std::sqrt(2.0);
}

bool StationaryDetector::feed(TimeNs t, double p) {
  if (result_.decided) return true;
  const std::size_t i = times_.size();
  times_.push_back(t);
  pressures_.push_back(p);
  included_.push_back(0);
  if (i == 0) {
    include(0, true);
    window_end_ = 1;
    return false;
  }
  // Keep the baseline span to the last baseline_span_s of resting samples.
  const auto span_ns = static_cast<TimeNs>(options_.baseline_span_s * 1e9);
  while (span_begin_ + 1 < window_end_ && t - times_[span_begin_] > span_ns) {
    if (included_[span_begin_]) {
      span_sum_ -= pressures_[span_begin_];
      --span_count_;
    }
    ++span_begin_;
  }
  if (window_end_ >= noise_updated_at_ + 16) {
    update_noise();
    noise_updated_at_ = window_end_;
  }
  const double b = baseline();
  const double delta = threshold();
  const double d = p - b;

  if (!candidate_) {
    if (std::fabs(d) <= delta) {
      include(i, true);
      window_end_ = i + 1;
      return false;
    }
    candidate_ = true;
    candidate_index_ = i;
    candidate_sign_ = d > 0 ? 1 : -1;
    return false;
  }
  // A pending departure: sustained, or a transient?
  const bool beyond = d * candidate_sign_ > delta / 2.0;
  if (!beyond) {
    // Transient: the excursion's samples join the window but not the mean.
    for (std::size_t j = candidate_index_; j <= i; ++j)
      include(j, std::fabs(pressures_[j] - b) <= delta);
    window_end_ = i + 1;
    candidate_ = false;
    return false;
  }
  if (static_cast<double>(t - times_[candidate_index_]) < options_.sustain_s * 1e9) return false;

  // Launch confirmed: cut the window back to where the departure began.
  const double quiet = std::max(2.0 * sigma_, delta / 5.0);
  std::size_t end = window_end_;
  while (end > 1 && included_[end - 1] &&
         (pressures_[end - 1] - b) * candidate_sign_ > quiet)
    --end;
  window_end_ = end;
  result_.decided = true;
  result_.launch_found = true;
  result_.window_end = end;
  result_.used = 0;
  for (std::size_t j = 0; j < end; ++j) result_.used += included_[j];
  result_.noise_sigma_pa = sigma_;
  result_.threshold_pa = delta;
  return true;
}

void StationaryDetector::finish() {
  if (result_.decided) return;
  // No launch: everything fed is resting, a pending excursion included.
  if (candidate_) {
    const double b = baseline();
    const double delta = threshold();
    for (std::size_t j = candidate_index_; j < times_.size(); ++j)
      include(j, std::fabs(pressures_[j] - b) <= delta);
    candidate_ = false;
  }
  window_end_ = times_.size();
  result_.decided = true;
  result_.launch_found = false;
  result_.window_end = window_end_;
  result_.used = 0;
  for (std::size_t j = 0; j < window_end_; ++j) result_.used += included_[j];
  result_.noise_sigma_pa = sigma_;
  result_.threshold_pa = std::max(options_.min_departure_pa, options_.noise_multiple * sigma_);
}

}  // namespace baroz
