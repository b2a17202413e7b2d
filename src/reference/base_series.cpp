#include "baroz/reference/base_series.hpp"

#include <algorithm>
#include <cmath>

#include "baroz/core/error.hpp"
#include "baroz/core/robust_statistics.hpp"

namespace baroz {

BaseSeries::BaseSeries(std::vector<BaseSample> samples) : samples_(std::move(samples)) {
  if (samples_.size() < 2) throw input_error("a base-station log needs at least two samples");
  std::stable_sort(samples_.begin(), samples_.end(),
                   [](const BaseSample& a, const BaseSample& b) { return a.time_ns < b.time_ns; });
  std::vector<double> d;
  d.reserve(samples_.size() - 1);
  for (std::size_t i = 1; i < samples_.size(); ++i)
    d.push_back(static_cast<double>(samples_[i].time_ns - samples_[i - 1].time_ns) * 1e-9);
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  interval_s_ = d[d.size() / 2];
  for (std::size_t i = 1; i < samples_.size(); ++i)
    d[i - 1] = std::fabs(samples_[i].pressure_pa - samples_[i - 1].pressure_pa);
  noise_sigma_pa_ = kMadToSigma * median_in_place(d) / std::sqrt(2.0);
  double sum = 0.0;
  std::size_t n = 0;
  for (const auto& s : samples_)
    if (!std::isnan(s.temperature_k)) {
      sum += s.temperature_k;
      ++n;
    }
  if (n > 0) mean_temperature_k_ = sum / static_cast<double>(n);
}

BaseValue BaseSeries::at(TimeNs t) const {
  BaseValue v;
  if (t <= samples_.front().time_ns || t >= samples_.back().time_ns) {
    const bool before = t <= samples_.front().time_ns;
    const BaseSample& s = before ? samples_.front() : samples_.back();
    v.pressure_pa = s.pressure_pa;
    v.temperature_k = s.temperature_k;
    v.inside = t == s.time_ns;
    v.outside_s = v.inside ? 0.0 : std::fabs(static_cast<double>(t - s.time_ns)) * 1e-9;
    return v;
  }
  auto hi = std::upper_bound(samples_.begin(), samples_.end(), t,
                             [](TimeNs x, const BaseSample& s) { return x < s.time_ns; });
  auto lo = hi - 1;
  v.inside = true;
  const double span = static_cast<double>(hi->time_ns - lo->time_ns);
  const double w = span > 0.0 ? static_cast<double>(t - lo->time_ns) / span : 0.0;
  v.pressure_pa = lo->pressure_pa + w * (hi->pressure_pa - lo->pressure_pa);
  if (std::isnan(lo->temperature_k) || std::isnan(hi->temperature_k))
    v.temperature_k = std::isnan(lo->temperature_k) ? hi->temperature_k : lo->temperature_k;
  else
    v.temperature_k = lo->temperature_k + w * (hi->temperature_k - lo->temperature_k);
  return v;
}

}  // namespace baroz
