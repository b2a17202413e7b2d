#include "baroz/models/temperature_profile.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <utility>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/robust_statistics.hpp"
#include "baroz/models/standard_atmosphere.hpp"

namespace baroz {

namespace {

constexpr double kRPerG0 = constants::kRAir / constants::kG0;  // R*/(g0 M0) [m' K^-1]

// False for NaN.
bool plausible_temperature(double t_k) {
  return t_k >= TemperatureProfile::kMinTemperatureK && t_k <= TemperatureProfile::kMaxTemperatureK;
}

}  // namespace

// ---- TemperatureProfile ----------------------------------------------------

TemperatureProfile::TemperatureProfile(std::vector<ProfileNode> nodes)
    : TemperatureProfile(std::move(nodes), std::numeric_limits<double>::quiet_NaN(),
                         std::numeric_limits<double>::quiet_NaN()) {}

TemperatureProfile::TemperatureProfile(std::vector<ProfileNode> nodes, double covered_bottom_pa,
                                       double covered_top_pa) {
  if (nodes.empty()) throw input_error("temperature profile has no node");
  for (ProfileNode& node : nodes) {
    if (!(node.pressure_pa > 0.0) || !std::isfinite(node.pressure_pa)) {
      throw input_error(fmt::format("temperature profile: pressure {} Pa is not positive and finite",
                                    node.pressure_pa));
    }
    if (std::isnan(node.virtual_temperature_k)) node.virtual_temperature_k = node.temperature_k;
    if (!plausible_temperature(node.temperature_k)) {
      throw input_error(fmt::format(
          "temperature profile: temperature {} K at {:.4f} hPa is outside {} to {} K",
          node.temperature_k, node.pressure_pa / 100.0, kMinTemperatureK, kMaxTemperatureK));
    }
    if (!plausible_temperature(node.virtual_temperature_k)) {
      throw input_error(fmt::format(
          "temperature profile: virtual temperature {} K at {:.4f} hPa is outside {} to {} K",
          node.virtual_temperature_k, node.pressure_pa / 100.0, kMinTemperatureK,
          kMaxTemperatureK));
    }
    if (node.samples == 0) {
      throw input_error(fmt::format("temperature profile: the node at {:.4f} hPa has no sample",
                                    node.pressure_pa / 100.0));
    }
  }
  std::stable_sort(nodes.begin(), nodes.end(), [](const ProfileNode& a, const ProfileNode& b) {
    return a.pressure_pa > b.pressure_pa;
  });
  // Merge nodes of the same pressure (equal ln p in double precision) into
  // their mean, so that every segment has a positive width in ln p.
  nodes_.reserve(nodes.size());
  log_p_.reserve(nodes.size());
  inverse_samples_.reserve(nodes.size());
  for (std::size_t i = 0; i < nodes.size();) {
    const double log_p = std::log(nodes[i].pressure_pa);
    double sum_t = 0.0;
    double sum_tv = 0.0;
    double sum_inverse_samples = 0.0;
    std::size_t j = i;
    for (; j < nodes.size() && std::log(nodes[j].pressure_pa) == log_p; ++j) {
      sum_t += nodes[j].temperature_k;
      sum_tv += nodes[j].virtual_temperature_k;
      sum_inverse_samples += nodes[j].median ? median_variance_factor(nodes[j].samples)
                                             : 1.0 / static_cast<double>(nodes[j].samples);
    }
    const auto count = static_cast<double>(j - i);
    // The mean of k temperatures of variances sigma^2 v_j has the random
    // variance sigma^2 sum_j (1/k)^2 v_j: that of a mean of k^2 / sum(v_j)
    // samples. (One node keeps its own count and kind.)
    const double inverse_samples = sum_inverse_samples / (count * count);
    constexpr double kMaxSamples = std::numeric_limits<std::uint32_t>::max();
    const double samples = std::fmin(std::round(1.0 / inverse_samples), kMaxSamples);
    if (j == i + 1) {
      nodes_.push_back(nodes[i]);
    } else {
      nodes_.push_back(ProfileNode{nodes[i].pressure_pa, sum_t / count, sum_tv / count,
                                   static_cast<std::uint32_t>(std::fmax(samples, 1.0)), false});
    }
    log_p_.push_back(log_p);
    inverse_samples_.push_back(inverse_samples);
    i = j;
  }
  build(covered_bottom_pa, covered_top_pa);
}

void TemperatureProfile::build(double covered_bottom_pa, double covered_top_pa) {
  const std::size_t n = nodes_.size();
  node_h_.assign(n, 0.0);
  tv_slope_.assign(n > 0 ? n - 1 : 0, 0.0);
  t_slope_.assign(n > 0 ? n - 1 : 0, 0.0);
  for (std::size_t i = 0; i + 1 < n; ++i) {
    const ProfileNode& a = nodes_[i];
    const ProfileNode& b = nodes_[i + 1];
    const double width = log_p_[i] - log_p_[i + 1];  // ln(p_i / p_i+1) > 0
    // Hypsometric equation (W&H eq. 3.29) with T_v linear in ln p: the
    // trapezoid rule in ln p is exact.
    node_h_[i + 1] =
        node_h_[i] + kRPerG0 * 0.5 * (a.virtual_temperature_k + b.virtual_temperature_k) * width;
    tv_slope_[i] = (b.virtual_temperature_k - a.virtual_temperature_k) / width;
    t_slope_[i] = (b.temperature_k - a.temperature_k) / width;
  }
  // Random-error weights: a fully crossed node i has (D_i-1 + D_i)/2
  // (trapezoid rule), and the prefix sum of their squares over n.
  full_weight_.assign(n, 0.0);
  weight_prefix_.assign(n + 1, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    const double below = i > 0 ? log_p_[i - 1] - log_p_[i] : 0.0;
    const double above = i + 1 < n ? log_p_[i] - log_p_[i + 1] : 0.0;
    full_weight_[i] = 0.5 * (below + above);
    weight_prefix_[i + 1] =
        weight_prefix_[i] + full_weight_[i] * full_weight_[i] * inverse_samples_[i];
  }
  auto end_at = [this](std::size_t i) {
    const ussa76::Level level = ussa76::level_at_pressure(nodes_[i].pressure_pa);
    return End{log_p_[i],
               node_h_[i],
               nodes_[i].temperature_k,
               nodes_[i].virtual_temperature_k,
               level.geopotential_m,
               level.temperature_k};
  };
  bottom_ = end_at(0);
  top_ = end_at(n - 1);
  // fmax/fmin ignore a NaN bound: the node range.
  covered_bottom_pa_ = std::fmax(covered_bottom_pa, nodes_.front().pressure_pa);
  covered_top_pa_ = std::fmin(covered_top_pa, nodes_.back().pressure_pa);
}

ProfilePoint TemperatureProfile::extend(const End& end, double pressure_pa, double log_p) const {
  // Beyond an end node: T(p) = T_e + (T_std(p) - T_std(p_e)), integrated
  // exactly with the standard's hydrostatic relation dH_std = -(R/g0) T_std
  // d(ln p) (USSA76 eqs. 33a/33b are its exact integrals per layer):
  // H(p) = H_e + (H_std(p) - H_std(p_e)) + (R/g0) (T_v,e - T_std(p_e)) ln(p_e/p).
  const ussa76::Level level = ussa76::level_at_pressure(pressure_pa);
  const double offset_k = level.temperature_k - end.std_temperature_k;
  ProfilePoint out;
  out.temperature_k = end.temperature_k + offset_k;
  out.virtual_temperature_k = end.virtual_temperature_k + offset_k;
  out.geopotential_m = end.geopotential_m + (level.geopotential_m - end.std_geopotential_m) +
                       kRPerG0 * (end.virtual_temperature_k - end.std_temperature_k) *
                           (end.log_pressure - log_p);
  return out;
}

std::size_t TemperatureProfile::find_segment(double pressure_pa, std::size_t hint) const {
  // Segment i spans p_i >= p >= p_i+1, i = 0 .. n-2 (n >= 2 here).
  const std::size_t last = nodes_.size() - 2;
  auto holds = [this, pressure_pa](std::size_t i) {
    return pressure_pa <= nodes_[i].pressure_pa && pressure_pa >= nodes_[i + 1].pressure_pa;
  };
  if (hint > last) hint = last;
  if (holds(hint)) return hint;
  if (hint < last && holds(hint + 1)) return hint + 1;
  if (hint > 0 && holds(hint - 1)) return hint - 1;
  // The first node j >= 1 with p_j <= p; the segment is j - 1.
  std::size_t lo = 1;
  std::size_t hi = nodes_.size() - 1;
  while (lo < hi) {
    const std::size_t mid = lo + (hi - lo) / 2;
    if (nodes_[mid].pressure_pa <= pressure_pa) {
      hi = mid;
    } else {
      lo = mid + 1;
    }
  }
  return lo - 1;
}

ProfilePoint TemperatureProfile::geopotential_at(double pressure_pa) const {
  std::size_t hint = 0;
  return geopotential_at(pressure_pa, hint);
}

ProfilePoint TemperatureProfile::geopotential_at(double pressure_pa,
                                                 std::size_t& segment_hint) const {
  const double log_p = std::log(pressure_pa);
  ProfilePoint out;
  const std::size_t n = nodes_.size();
  if (pressure_pa > nodes_.front().pressure_pa) {
    out = extend(bottom_, pressure_pa, log_p);
    // The extension below node 0 follows T_v,0: W_0 = ln(p_0/p) < 0.
    out.weights = NodeWeights{0, log_p_[0] - log_p, 0.0};
  } else if (pressure_pa < nodes_.back().pressure_pa) {
    out = extend(top_, pressure_pa, log_p);
    // Every node fully crossed; the top one's half segment plus the
    // extension, which follows T_v,e: W_e = D_e-1/2 + ln(p_e/p).
    const double below = n > 1 ? 0.5 * (log_p_[n - 2] - log_p_[n - 1]) : 0.0;
    out.weights = NodeWeights{n - 1, below + (log_p_[n - 1] - log_p), 0.0};
  } else if (n == 1) {
    out.geopotential_m = 0.0;  // p is the single node's pressure
    out.temperature_k = nodes_.front().temperature_k;
    out.virtual_temperature_k = nodes_.front().virtual_temperature_k;
    out.weights = NodeWeights{0, 0.0, 0.0};
  } else {
    const std::size_t i = find_segment(pressure_pa, segment_hint);
    segment_hint = i;
    const double x = log_p_[i] - log_p;  // ln(p_i / p), 0 .. segment width
    const ProfileNode& a = nodes_[i];
    // Hypsometric equation integrated exactly over T_v = T_v,i + s_i x:
    // H = H_i + (R/g0) (T_v,i x + s_i x^2 / 2).
    out.virtual_temperature_k = a.virtual_temperature_k + tv_slope_[i] * x;
    out.temperature_k = a.temperature_k + t_slope_[i] * x;
    out.geopotential_m =
        node_h_[i] + kRPerG0 * x * (a.virtual_temperature_k + 0.5 * tv_slope_[i] * x);
    // The same integral as weights of the two nodes: T_v = T_v,i (1 - x/D)
    // + T_v,i+1 x/D integrates to T_v,i (x - x^2/(2D)) + T_v,i+1 x^2/(2D).
    const double width = log_p_[i] - log_p_[i + 1];
    const double below = i > 0 ? 0.5 * (log_p_[i - 1] - log_p_[i]) : 0.0;
    const double upper = 0.5 * x * x / width;
    out.weights = NodeWeights{i, below + x - upper, upper};
  }
  out.log_pressure = log_p;
  out.extrapolated = !(pressure_pa >= covered_top_pa_ && pressure_pa <= covered_bottom_pa_);
  return out;
}

double TemperatureProfile::weight_of(const NodeWeights& w, std::size_t j) const {
  if (j < w.node) return full_weight_[j];
  if (j == w.node) return w.at_node;
  if (j == w.node + 1) return w.at_next;
  return 0.0;
}

double TemperatureProfile::random_weight_sum(const ProfilePoint& a, const ProfilePoint& b) const {
  // Order the points so that lo.node <= hi.node. Nodes j < lo.node have
  // the full weight in both (difference 0); lo.node + 1 < j < hi.node have
  // it in hi only (the prefix sum); j > hi.node + 1 have 0 in both. The
  // nodes lo.node, lo.node + 1, hi.node, hi.node + 1 are summed explicitly.
  const NodeWeights& lo = a.weights.node <= b.weights.node ? a.weights : b.weights;
  const NodeWeights& hi = a.weights.node <= b.weights.node ? b.weights : a.weights;
  const std::size_t n = nodes_.size();
  double sum = 0.0;
  if (hi.node > lo.node + 2) sum += weight_prefix_[hi.node] - weight_prefix_[lo.node + 2];
  auto add = [&](std::size_t j) {
    const double d = weight_of(hi, j) - weight_of(lo, j);
    sum += d * d * inverse_samples_[j];
  };
  for (std::size_t j = lo.node; j <= lo.node + 1 && j < n; ++j) add(j);
  for (std::size_t j = std::max(hi.node, lo.node + 2); j <= hi.node + 1 && j < n; ++j) add(j);
  return sum;
}

double TemperatureProfile::random_weight_sum(double pressure_a_pa, double pressure_b_pa) const {
  return random_weight_sum(geopotential_at(pressure_a_pa), geopotential_at(pressure_b_pa));
}

// ---- legs -------------------------------------------------------------------

std::string_view profile_leg_name(ProfileLeg leg) {
  switch (leg) {
    case ProfileLeg::kAscent:
      return "ascent";
    case ProfileLeg::kDescent:
      return "descent";
    case ProfileLeg::kAll:
      return "all";
  }
  return "unknown";
}

std::optional<ProfileLeg> parse_profile_leg(std::string_view name) {
  for (ProfileLeg leg : {ProfileLeg::kAscent, ProfileLeg::kDescent, ProfileLeg::kAll}) {
    if (name == profile_leg_name(leg)) return leg;
  }
  return std::nullopt;
}

// ---- ProfileBuilder -----------------------------------------------------------

namespace {

// Weighted median of (value, weight) pairs (sorted in place): the value where
// the cumulative weight reaches half the total; the mean of the two values
// around it when it reaches exactly half (the ordinary median for equal
// weights).
double weighted_median(std::vector<std::pair<double, double>>& values) {
  std::sort(values.begin(), values.end(),
            [](const auto& a, const auto& b) { return a.first < b.first; });
  double total = 0.0;
  for (const auto& v : values) total += v.second;
  const double half = 0.5 * total;
  double cumulative = 0.0;
  for (std::size_t i = 0; i < values.size(); ++i) {
    cumulative += values[i].second;
    if (cumulative == half && i + 1 < values.size()) {
      return 0.5 * (values[i].first + values[i + 1].first);
    }
    if (cumulative >= half) return values[i].first;
  }
  return values.back().first;
}

}  // namespace

void ProfileBuilder::LayerSamples::add(const Entry& entry) {
  // Thinning clock: keep the arrivals at multiples of the stride.
  if (arrivals % stride == 0) {
    values.push_back(entry);
    if (values.size() == kLayerCapacity) {
      // Full: keep the values at even positions (arrivals at multiples of
      // 2 stride) and accept every (2 stride)-th arrival from now on.
      std::size_t kept = 0;
      for (std::size_t i = 0; i < values.size(); i += 2) values[kept++] = values[i];
      values.resize(kept);
      stride *= 2;
    }
  }
  ++arrivals;
}

ProfileBuilder::ProfileBuilder(const ProfileOptions& options) : options_(options) {
  if (!(options.layer_m >= kMinLayerM && options.layer_m <= kMaxLayerM)) {
    throw usage_error(fmt::format("profile layer thickness must be {} to {} m, got {}", kMinLayerM,
                                  kMaxLayerM, options.layer_m));
  }
}

ProfileBuilder::Released ProfileBuilder::classify(std::size_t j) const {
  const Raw& raw = ring_[j % kPressureWindow];
  // Running median of the raw pressures j-2 .. j+2 (truncated at the ends).
  const double median = window_median(j >= 2 ? j - 2 : 0, std::min(j + 2, count_ - 1));
  double pressure = raw.pressure_pa;
  double h_std = ussa76::geopotential_at_pressure(pressure);
  if (median != pressure) {
    // A spike: further from the median than kSpikeThresholdM of standard
    // geopotential; it takes the median's pressure.
    const double h_median = ussa76::geopotential_at_pressure(median);
    if (std::fabs(h_std - h_median) > kSpikeThresholdM) {
      pressure = median;
      h_std = h_median;
    }
  }
  // Fixed pressure layers: k layer_m <= H_std(p) < (k+1) layer_m.
  const int layer = static_cast<int>(std::floor(h_std / options_.layer_m));
  return Released{layer, Entry{raw.temperature_k, raw.virtual_temperature_k, std::log(pressure)},
                  pressure};
}

double ProfileBuilder::window_median(std::size_t first, std::size_t last) const {
  std::array<double, kPressureWindow> window{};
  std::size_t n = 0;
  for (std::size_t j = first; j <= last; ++j) {
    // Insertion sort of at most 5 values.
    const double p = ring_[j % kPressureWindow].pressure_pa;
    std::size_t k = n++;
    while (k > 0 && window[k - 1] > p) {
      window[k] = window[k - 1];
      --k;
    }
    window[k] = p;
  }
  return n % 2 == 1 ? window[n / 2] : 0.5 * (window[n / 2 - 1] + window[n / 2]);
}

void ProfileBuilder::add(double pressure_pa, double temperature_k,
                         double virtual_temperature_k) {
  ++seen_;
  if (std::isnan(temperature_k)) {
    ++skipped_no_temperature_;
    return;
  }
  const double tv = std::isnan(virtual_temperature_k) ? temperature_k : virtual_temperature_k;
  if (!ussa76::pressure_in_range(pressure_pa) || !plausible_temperature(temperature_k) ||
      !plausible_temperature(tv)) {
    ++skipped_out_of_range_;
    return;
  }
  ring_[count_ % kPressureWindow] = Raw{pressure_pa, temperature_k, tv};
  ++count_;
  // Sample count_ - 3 now has its 2 successors: classify and release it.
  if (count_ >= 3) release(classify(count_ - 3));
}

ProfileBuilder::LayerSamples& ProfileBuilder::layer_in(Accumulator& accumulator, int layer) {
  const auto [it, inserted] = accumulator.try_emplace(layer);
  if (inserted) {
    // "after" is emptied at every new top and refilled by the samples below
    // it: a layer it regains that "before" holds is no new node of the
    // ascent or of both legs (counting it made a rebuild every few samples
    // of a noisy climb), but is one of the descent leg.
    const Accumulator& other = &accumulator == &before_ ? after_ : before_;
    if (other.count(layer) == 0) ++revision_union_;
    if (&accumulator == &after_) ++revision_after_;
  }
  return it->second;
}

void ProfileBuilder::release(const Released& sample) {
  if (sample.pressure_pa < top_pressure_pa_) {
    // A new top: everything after the old top is still before this one.
    for (const auto& [layer, samples] : after_) {
      LayerSamples& target = layer_in(before_, layer);
      // Each stored value stands for `stride` samples: feed it that often
      // through the target's thinning clock, which keeps the weights.
      for (const Entry& entry : samples.values) {
        for (std::size_t c = 0; c < samples.stride; ++c) target.add(entry);
      }
      target.samples += samples.samples;
      target.version = ++version_clock_;
    }
    after_.clear();
    before_samples_ += after_samples_;
    after_samples_ = 0;
    top_pressure_pa_ = sample.pressure_pa;
    LayerSamples& target = layer_in(before_, sample.layer);
    target.add(sample.entry);
    ++target.samples;
    target.version = ++version_clock_;
    ++before_samples_;
  } else {
    LayerSamples& target = layer_in(after_, sample.layer);
    target.add(sample.entry);
    ++target.samples;
    target.version = ++version_clock_;
    ++after_samples_;
  }
}

ProfileBuilder::Tail ProfileBuilder::pending_tail() const {
  // Classify the samples still waiting for their successors, with the
  // truncated window, exactly as release() would, without changing state.
  Tail tail;
  tail.top_pressure_pa = top_pressure_pa_;
  const std::size_t first_pending = count_ >= 3 ? count_ - 2 : 0;
  for (std::size_t j = first_pending; j < count_; ++j) {
    const Released sample = classify(j);
    if (sample.pressure_pa < tail.top_pressure_pa) {
      tail.merged = true;
      for (const Released& earlier : tail.after) tail.before.push_back(earlier);
      tail.after = Pending{};
      tail.before.push_back(sample);
      tail.top_pressure_pa = sample.pressure_pa;
    } else {
      tail.after.push_back(sample);
    }
  }
  return tail;
}

std::size_t ProfileBuilder::samples_used() const {
  const Tail tail = pending_tail();
  // As build(): a pending new top moves "after" to "before".
  const std::size_t before =
      before_samples_ + (tail.merged ? after_samples_ : 0) + tail.before.size();
  const std::size_t after = (tail.merged ? 0 : after_samples_) + tail.after.size();
  switch (options_.leg) {
    case ProfileLeg::kAscent:
      return before;
    case ProfileLeg::kDescent:
      return after;
    case ProfileLeg::kAll:
      return before + after;
  }
  return 0;
}

ProfileBuilder::LegSources ProfileBuilder::leg_sources() const {
  // As release() would have them after the pending tail (a pending new top
  // moves "after" to "before").
  const Tail tail = pending_tail();
  const bool use_before = options_.leg != ProfileLeg::kDescent;
  const bool use_after = options_.leg != ProfileLeg::kAscent;
  LegSources sources;
  sources.first = use_before ? &before_ : nullptr;
  sources.second = (use_before && tail.merged) || (use_after && !tail.merged) ? &after_ : nullptr;
  if (use_before)
    for (const Released& sample : tail.before) sources.pending.push_back(sample);
  if (use_after)
    for (const Released& sample : tail.after) sources.pending.push_back(sample);
  return sources;
}

std::vector<int> ProfileBuilder::layer_keys(const LegSources& sources) {
  std::vector<int> keys;
  for (const Accumulator* accumulator : {sources.first, sources.second}) {
    if (!accumulator) continue;
    for (const auto& entry : *accumulator) keys.push_back(entry.first);
  }
  for (const Released& sample : sources.pending) keys.push_back(sample.layer);
  std::sort(keys.begin(), keys.end());
  keys.erase(std::unique(keys.begin(), keys.end()), keys.end());
  return keys;
}

std::size_t ProfileBuilder::layers() const {
  return layer_keys(leg_sources()).size();  // (not a per-sample call)
}

std::size_t ProfileBuilder::revision() const {
  // Layers opened by released samples (in either accumulator; for the
  // descent leg, in "after"), plus those the pending tail would open (a
  // layer in neither accumulator).
  const Tail tail = pending_tail();
  std::array<int, kPressureWindow> opened{};
  std::size_t n = 0;
  for (const Pending* side : {&tail.before, &tail.after}) {
    for (const Released& sample : *side) {
      if (before_.count(sample.layer) > 0 || after_.count(sample.layer) > 0) continue;
      if (std::find(opened.begin(), opened.begin() + static_cast<std::ptrdiff_t>(n),
                    sample.layer) == opened.begin() + static_cast<std::ptrdiff_t>(n)) {
        opened[n++] = sample.layer;
      }
    }
  }
  return (options_.leg == ProfileLeg::kDescent ? revision_after_ : revision_union_) + n;
}

double ProfileBuilder::top_pressure_pa() const {
  const double top = pending_tail().top_pressure_pa;
  return std::isinf(top) ? std::numeric_limits<double>::quiet_NaN() : top;
}

std::size_t ProfileBuilder::stored_values() const {
  std::size_t n = count_ >= 3 ? 2 : count_;  // the pending tail
  for (const Accumulator* accumulator : {&before_, &after_}) {
    for (const auto& entry : *accumulator) n += entry.second.values.size();
  }
  return n;
}

TemperatureProfile ProfileBuilder::build() const {
  const LegSources sources = leg_sources();
  const Accumulator* first = sources.first;
  const Accumulator* second = sources.second;
  const Pending& pending = sources.pending;
  const std::vector<int> keys = layer_keys(sources);
  if (keys.empty()) {
    throw input_error(fmt::format("profile leg '{}' has no usable temperature sample",
                                  profile_leg_name(options_.leg)));
  }

  auto find = [](const Accumulator* accumulator, int layer) -> const LayerSamples* {
    if (!accumulator) return nullptr;
    const auto it = accumulator->find(layer);
    return it == accumulator->end() ? nullptr : &it->second;
  };
  // The values of one layer with their weights (a stored value stands for
  // `stride` samples, a pending one for itself), then the medians of each
  // channel.
  std::vector<std::pair<Entry, double>> entries;
  std::vector<std::pair<double, double>> scratch;
  auto median_of = [&](double Entry::*channel) {
    scratch.clear();
    for (const auto& [entry, weight] : entries) scratch.emplace_back(entry.*channel, weight);
    return weighted_median(scratch);
  };
  constexpr std::size_t kMaxSamples = std::numeric_limits<std::uint32_t>::max();
  std::vector<ProfileNode> nodes;
  nodes.reserve(keys.size());
  for (int layer : keys) {
    const LayerSamples* b = find(first, layer);
    const LayerSamples* a = find(second, layer);
    const bool has_pending = std::any_of(pending.begin(), pending.end(),
                                         [layer](const Released& r) { return r.layer == layer; });
    const std::uint64_t b_version = b ? b->version : 0;
    const std::uint64_t a_version = a ? a->version : 0;
    // A layer whose sources have not changed since the last build keeps its
    // node: a causal rebuild recomputes only the layers the new samples
    // reached (cost O(layers) plus those layers' values, not every value).
    const auto cached = node_cache_.find(layer);
    if (!has_pending && cached != node_cache_.end() && cached->second.before_version == b_version &&
        cached->second.after_version == a_version) {
      nodes.push_back(cached->second.node);
      continue;
    }
    entries.clear();
    for (const LayerSamples* source : {b, a}) {
      if (!source) continue;
      for (const Entry& entry : source->values)
        entries.emplace_back(entry, static_cast<double>(source->stride));
    }
    for (const Released& sample : pending)
      if (sample.layer == layer) entries.emplace_back(sample.entry, 1.0);
    // One node per layer: the medians of T, T_v and ln p.
    // `samples`: the values the medians are of (thinned-out samples do not
    // enter them, so they do not average the random error down).
    const ProfileNode node{std::exp(median_of(&Entry::log_pressure)),
                           median_of(&Entry::temperature_k),
                           median_of(&Entry::virtual_temperature_k),
                           static_cast<std::uint32_t>(std::min(entries.size(), kMaxSamples)), true};
    nodes.push_back(node);
    if (has_pending) {
      node_cache_.erase(layer);  // the pending samples will be released into it
    } else {
      node_cache_[layer] = CachedNode{b_version, a_version, node};
    }
  }
  // Covered: from the lower bound of the lowest layer to the upper bound of
  // the highest one.
  const double covered_bottom =
      ussa76::pressure_at(options_.layer_m * static_cast<double>(keys.front()));
  const double covered_top =
      ussa76::pressure_at(options_.layer_m * static_cast<double>(keys.back() + 1));
  return TemperatureProfile(std::move(nodes), covered_bottom, covered_top);
}

}  // namespace baroz
