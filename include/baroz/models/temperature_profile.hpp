// A measured (virtual) temperature profile as a function of pressure, with
// the geopotential it implies (hypsometric equation), and the builder that
// makes one robustly from a log's samples in one pass.
//
// TemperatureProfile: nodes sorted by decreasing pressure (increasing
// height), each with air temperature T and virtual temperature T_v;
// both are linear in ln p between nodes. The geopotential of a pressure,
// relative to the first (highest-pressure) node, is the exact integral of
// that piecewise-linear T_v (hypsometric equation, W&H eq. 3.29):
//   dH = (R/g0) T_v d(ln(1/p)),   R = R*/M0 (USSA76), g0 = 9.80665
//   H(p) = H_i + (R/g0) (T_v,i x + s_i x^2 / 2),   x = ln(p_i/p),
//   s_i = (T_v,i+1 - T_v,i) / ln(p_i/p_i+1)         (p_i >= p >= p_i+1)
// which at the nodes is the trapezoid rule in ln p:
//   H_i+1 = H_i + (R/g0) (T_v,i + T_v,i+1)/2 ln(p_i/p_i+1).
// Beyond the end nodes the temperature follows the U.S. Standard Atmosphere
// 1976 with the offset it has at the end node e:
//   T(p) = T_e + (T_std(p) - T_std(p_e)) (T_v alike),
// integrated exactly through the standard's own hydrostatic relation
// (dH_std = -(R/g0) T_std d(ln p), exact in every standard layer):
//   H(p) = H_e + (H_std(p) - H_std(p_e)) + (R/g0) (T_v,e - T_std(p_e)) ln(p_e/p).
// The derivation, the discretisation error and the validity are in
// docs/profile-model.md.
//
// Random temperature errors. H is linear in the node values T_v,i:
//   H(p) = (R/g0) sum_i W_i(p) T_v,i + (terms free of the nodes),
// W_i(p) the weight of node i in the integral of T_v d(ln(1/p)) from node 0
// to p. Within segment k (nodes k, k+1, ln-p width D_k) at x = ln(p_k/p):
//   W_j = (D_j-1 + D_j)/2 (j < k, fully crossed; D_-1 = 0),
//   W_k = D_k-1/2 + x - x^2/(2 D_k),   W_k+1 = x^2/(2 D_k),   W_j = 0 (j > k+1).
// Beyond an end node e the extension's temperature follows T_v,e (a shift of
// T_v,e shifts it alike), so W_e grows by ln(p_e/p) (negative below node 0).
// Node i's temperature, the mean of n_i samples with independent errors of
// sigma, has the variance sigma^2 v_i, v_i = 1/n_i (GUM JCGM 100:2008
// 4.2.3); a median's (ProfileBuilder's nodes) has v_i =
// median_variance_factor(n_i), about pi/(2 n_i) (robust_statistics.hpp).
// So the variance of H(p) - H(p_ref) is (R/g0)^2 sigma^2 S (GUM eq. 10) with
//   S(p_ref, p) = sum_i (W_i(p) - W_i(p_ref))^2 v_i,
// computed in O(1) from the weights of the two points (ProfilePoint::weights)
// and a prefix sum of W_j^2 v_j over fully crossed nodes
// (random_weight_sum()). The error is in T; T_v = T (1 + 0.61 q) carries it
// with the factor T_v/T <= 1.02, taken as 1.
//
// ProfileBuilder: fixed pressure layers (boundaries at the standard
// atmosphere's pressures of multiples of `layer_m` geopotential metres), one
// node per populated layer at the medians of T, T_v and ln p of the layer's
// samples; ascent, descent or both legs separated at the minimum
// pressure; bounded memory. See the class comment.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <map>
#include <optional>
#include <string_view>
#include <utility>
#include <vector>

namespace baroz {

/// One node of a temperature profile.
struct ProfileNode {
  double pressure_pa = 0.0;     ///< pressure [Pa], > 0
  double temperature_k = 0.0;   ///< air temperature T [K]
  /// Virtual temperature T_v [K]; NaN: no humidity known, T_v = T.
  double virtual_temperature_k = std::numeric_limits<double>::quiet_NaN();
  /// Number of samples the node's temperature is the mean (or, with
  /// `median`, the median) of, >= 1. 1 for a node that is one measurement (a
  /// --profile table row) or not a measurement.
  std::uint32_t samples = 1;
  /// The temperature is the median of the samples (ProfileBuilder's nodes):
  /// its random variance is median_variance_factor(samples) of one sample's
  /// instead of 1 / samples.
  bool median = false;
};

/// Where a pressure sits among the weights of the nodes in the integral of
/// T_v d(ln(1/p)) from node 0 to it (see the file comment): node j has the
/// weight of a fully crossed node for j < node, `at_node` for j = node,
/// `at_next` for j = node + 1, and 0 above. Weights are in ln p.
struct NodeWeights {
  std::size_t node = 0;
  double at_node = 0.0;
  double at_next = 0.0;
};

/// The profile at one pressure.
struct ProfilePoint {
  double geopotential_m = 0.0;         ///< H(p) - H(node 0) [m'] (> 0 above node 0)
  double temperature_k = 0.0;          ///< T at p [K] (interpolated or extended)
  double virtual_temperature_k = 0.0;  ///< T_v at p [K] (interpolated or extended)
  double log_pressure = 0.0;           ///< ln(p / 1 Pa)
  bool extrapolated = false;           ///< p outside the covered pressure range
  NodeWeights weights;                 ///< the nodes' weights in the geopotential
};

/// A temperature profile over pressure (see the file comment). Immutable;
/// cheap to evaluate (one log; one log and one exp beyond the end nodes).
class TemperatureProfile {
 public:
  /// Plausible range of node temperatures and virtual temperatures [K].
  static constexpr double kMinTemperatureK = 150.0;
  static constexpr double kMaxTemperatureK = 350.0;

  /// Profile through `nodes` (any order; sorted by decreasing pressure).
  /// Nodes with the same pressure (equal ln p in double precision)
  /// are merged into one with the mean T and T_v (and the sample count
  /// whose random error is that of the mean: k^2 / sum(1/n_j) for k nodes,
  /// rounded in nodes(), exact in random_weight_sum()). The covered range (for
  /// the `extrapolated` flag) is the node range. Throws baroz::Error
  /// (input) when there is no node, a pressure is not positive and finite,
  /// a temperature or virtual temperature is outside
  /// [kMinTemperatureK, kMaxTemperatureK], or a node has 0 samples.
  explicit TemperatureProfile(std::vector<ProfileNode> nodes);
  /// As above, with the covered range [covered_top_pa, covered_bottom_pa]
  /// [Pa] given (widened to contain the node range): the range the data
  /// supports, e.g. the bounds of the end layers of ProfileBuilder.
  TemperatureProfile(std::vector<ProfileNode> nodes, double covered_bottom_pa,
                     double covered_top_pa);

  /// The nodes, by decreasing pressure.
  const std::vector<ProfileNode>& nodes() const { return nodes_; }
  std::size_t size() const { return nodes_.size(); }
  /// Pressure of the first node (highest pressure, lowest level) [Pa].
  double bottom_pressure_pa() const { return nodes_.front().pressure_pa; }
  /// Pressure of the last node (lowest pressure, highest level) [Pa].
  double top_pressure_pa() const { return nodes_.back().pressure_pa; }
  /// Covered range [Pa]: covered_top_pa() <= p <= covered_bottom_pa() is not
  /// extrapolated.
  double covered_bottom_pa() const { return covered_bottom_pa_; }
  double covered_top_pa() const { return covered_top_pa_; }
  /// Geopotential of node `i` relative to node 0 [m'].
  double node_geopotential_m(std::size_t i) const { return node_h_[i]; }

  /// The profile at pressure `pressure_pa` [Pa] (> 0 and finite; meaningful
  /// within the standard atmosphere's range, 0.3734 Pa to 1776.87 hPa, see
  /// standard_atmosphere.hpp). Binary search for the segment.
  ProfilePoint geopotential_at(double pressure_pa) const;
  /// The same, starting the search at segment `segment_hint` and storing
  /// the segment found there (O(1) for samples in order).
  ProfilePoint geopotential_at(double pressure_pa, std::size_t& segment_hint) const;

  /// S = sum_i (W_i(b) - W_i(a))^2 / n_i over the nodes (see the file
  /// comment) for two points of this profile [(ln p)^2]: (R/g0) sqrt(S) is
  /// the geopotential error of H(b) - H(a) per kelvin of independent
  /// random error of one sample. O(1); symmetric; 0 for a == b.
  double random_weight_sum(const ProfilePoint& a, const ProfilePoint& b) const;
  /// The same between two pressures [Pa] (two binary searches).
  double random_weight_sum(double pressure_a_pa, double pressure_b_pa) const;

 private:
  // Standard-atmosphere terms at an end node for the extension.
  struct End {
    double log_pressure = 0.0;  // ln p_e
    double geopotential_m = 0.0;  // H_e [m'] (relative to node 0)
    double temperature_k = 0.0;   // T_e
    double virtual_temperature_k = 0.0;  // T_v,e
    double std_geopotential_m = 0.0;  // H_std(p_e) [m']
    double std_temperature_k = 0.0;   // T_std(p_e) [K]
  };
  void build(double covered_bottom_pa, double covered_top_pa);
  ProfilePoint extend(const End& end, double pressure_pa, double log_p) const;
  std::size_t find_segment(double pressure_pa, std::size_t hint) const;
  // W_j at the point of weights `w`.
  double weight_of(const NodeWeights& w, std::size_t j) const;

  std::vector<ProfileNode> nodes_;      // decreasing pressure; T_v filled in
  std::vector<double> log_p_;           // ln p_i
  std::vector<double> node_h_;          // H_i [m'], node_h_[0] = 0
  std::vector<double> tv_slope_;        // s_i = dT_v/dx on segment i [K]
  std::vector<double> t_slope_;         // dT/dx on segment i [K]
  std::vector<double> inverse_samples_;  // v_i: 1/n_i, or a median's factor (exact when merged)
  std::vector<double> full_weight_;      // W_i of a fully crossed node: (D_i-1 + D_i)/2
  std::vector<double> weight_prefix_;    // sum_{j<i} full_weight_j^2 / n_j (n + 1 values)
  End bottom_;
  End top_;
  double covered_bottom_pa_ = 0.0;
  double covered_top_pa_ = 0.0;
};

/// Which part of a flight the builder takes its samples from.
enum class ProfileLeg {
  kAscent,   ///< samples up to the top (minimum spike-checked pressure)
  kDescent,  ///< samples after the top
  kAll,      ///< every sample
};
/// "ascent", "descent" or "all".
std::string_view profile_leg_name(ProfileLeg leg);
/// The leg of a name (exact, lower-case match); nullopt otherwise.
std::optional<ProfileLeg> parse_profile_leg(std::string_view name);

/// Options of ProfileBuilder.
struct ProfileOptions {
  ProfileLeg leg = ProfileLeg::kAscent;
  /// Layer thickness [m'] (geopotential metres of the standard atmosphere),
  /// 1 to 1000.
  double layer_m = 50.0;
};

/// Builds a TemperatureProfile from a log's samples, in time order, in one
/// pass with bounded memory.
///
/// - Pressure spikes: each sample's pressure is compared with the median of
///   the 5 raw pressures centred on it (2 before, 2 after; fewer at the ends
///   of the stream). When the two differ by more than kSpikeThresholdM of
///   standard geopotential (250 m') the sample is a spike and takes the
///   median's pressure; otherwise it keeps its own. On a monotonic ascent or
///   descent the median is the sample's own pressure; a spike of 1 or 2
///   consecutive samples is replaced by a neighbour's pressure, so it
///   neither misplaces the sample's temperature nor becomes the top, while a
///   real top (a turning point a few samples wide) is kept exactly. A
///   sample is classified when the two after it have arrived; build()
///   classifies the (at most 2) pending ones itself.
/// - Legs: the top is the minimum (spike-checked) pressure so far. Samples
///   go to an "after the top" accumulator; when a sample sets a new minimum,
///   "after" is merged into "before" and the sample joins "before". The
///   ascent is "before" (up to and including the top), the descent "after".
/// - Layers: layer k holds the samples with
///   k layer_m <= H_std(p) < (k+1) layer_m (H_std the standard atmosphere's
///   geopotential altitude), i.e. fixed pressure bounds, about layer_m thick
///   at any level. A populated layer gives one node: the medians of T, of
///   T_v and of ln p of its samples (robust to spikes and noise), with
///   `samples` the number of values that median is of (after thinning); the
///   profile's covered range is the pressure range of the populated
///   layers' bounds. Empty layers are spanned by the interpolation.
/// - Bounded memory: a layer of one accumulator keeps at most
///   kLayerCapacity samples. When full it keeps every other one (those
///   arrived at even positions) and from then on accepts every 2nd arriving
///   sample (then every 4th, ...): a deterministic uniform thinning in time.
///   Each kept value then stands for `stride` samples; medians are weighted
///   by that (merging "after" into "before" keeps the weights). Memory is at
///   most 24 bytes x kLayerCapacity per populated layer and accumulator
///   (48 KiB), and about 24 bytes per sample below that.
/// - Skipped samples (counted): NaN temperature (no_temperature); pressure
///   not in the standard atmosphere's range, or T or T_v not finite or
///   outside [150, 350] K (out_of_range). A NaN T_v means T_v = T.
///
/// Cost: add() is O(log layers) amortised (a map lookup, one log and one exp
/// for H_std; ~0.5 us). build() is O(m log m) in the number m of stored
/// values (it sorts each layer's values; ~1.6 ms for a 32 km ascent of 6400
/// samples); in causal use rebuild when revision() changes, not for every
/// sample. layers() is O(layers) and copies nothing.
class ProfileBuilder {
 public:
  /// Values kept per layer and accumulator before thinning.
  static constexpr std::size_t kLayerCapacity = 2048;
  /// Width of the running-median pressure filter [samples].
  static constexpr std::size_t kPressureWindow = 5;
  /// Distance from the running median beyond which a pressure is a spike
  /// [m' of standard geopotential].
  static constexpr double kSpikeThresholdM = 250.0;
  static constexpr double kMinLayerM = 1.0;
  static constexpr double kMaxLayerM = 1000.0;

  /// Throws baroz::Error (usage) when options.layer_m is not within
  /// [kMinLayerM, kMaxLayerM].
  explicit ProfileBuilder(const ProfileOptions& options = {});

  /// Adds the next sample in time order: pressure [Pa], air temperature
  /// [K] (NaN: none, skipped), virtual temperature [K] (NaN: = T).
  void add(double pressure_pa, double temperature_k, double virtual_temperature_k);

  /// The profile of the chosen leg from everything added so far; callable
  /// repeatedly (causal use). Throws baroz::Error (input) when the leg has
  /// no usable temperature sample.
  TemperatureProfile build() const;

  const ProfileOptions& options() const { return options_; }
  /// Samples passed to add().
  std::size_t samples_seen() const { return seen_; }
  /// Samples skipped for a missing (NaN) temperature.
  std::size_t samples_skipped_no_temperature() const { return skipped_no_temperature_; }
  /// Samples skipped for a pressure, T or T_v out of range.
  std::size_t samples_skipped_out_of_range() const { return skipped_out_of_range_; }
  /// Usable samples in the chosen leg (the profile is made of these).
  std::size_t samples_used() const;
  /// Populated layers (= nodes of build()) of the chosen leg.
  std::size_t layers() const;
  /// The top so far: minimum (spike-checked) pressure [Pa]; NaN before any
  /// usable sample.
  double top_pressure_pa() const;
  /// Values currently stored (memory accounting; 24 bytes each).
  std::size_t stored_values() const;
  /// A counter that changes whenever a sample (also one of the pending
  /// tail) opens a layer that was not populated before, i.e. whenever the
  /// profile of the chosen leg may gain a node: a layer new to both legs'
  /// samples (ascent, all), or new to the samples after the top (descent).
  /// Causal use: rebuild when it has changed, e.g.
  ///   if (builder.revision() != seen) { model.set_profile(builder.build()); seen = builder.revision(); }
  /// Cheap (the pending tail of at most 2 samples is classified); no
  /// allocation.
  std::size_t revision() const;

 private:
  struct Raw {
    double pressure_pa;
    double temperature_k;
    double virtual_temperature_k;
  };
  struct Entry {
    double temperature_k;
    double virtual_temperature_k;
    double log_pressure;
  };
  // The bounded samples of one layer of one accumulator.
  struct LayerSamples {
    std::vector<Entry> values;
    std::size_t stride = 1;    // samples each stored value stands for
    std::size_t arrivals = 0;  // weighted arrivals so far (thinning clock)
    std::size_t samples = 0;   // samples represented
    std::uint64_t version = 0;  // the builder's version_clock_ at the last change (0: never)
    void add(const Entry& entry);
  };
  // A layer's node as the last build() made it, from the layer's sources at
  // these versions (0: the source had no such layer).
  struct CachedNode {
    std::uint64_t before_version = 0;
    std::uint64_t after_version = 0;
    ProfileNode node;
  };
  using Accumulator = std::map<int, LayerSamples>;
  // A classified sample not yet in an accumulator (the pending tail).
  struct Released {
    int layer;
    Entry entry;
    double pressure_pa;  // spike-checked pressure [Pa]
  };
  // At most 2 released samples, without allocation.
  struct Pending {
    std::array<Released, 2> items{};
    std::size_t count = 0;
    const Released* begin() const { return items.data(); }
    const Released* end() const { return items.data() + count; }
    std::size_t size() const { return count; }
    void push_back(const Released& sample) { items[count++] = sample; }
  };
  struct Tail {
    bool merged = false;  // a pending sample set a new top: "after" joins "before"
    Pending before;
    Pending after;
    double top_pressure_pa = std::numeric_limits<double>::infinity();
  };

  // Spike check, layer and entry of sample j (a sequence number in the ring).
  Released classify(std::size_t j) const;
  // Median of the raw pressures of samples first..last (sequence numbers,
  // all within the ring).
  double window_median(std::size_t first, std::size_t last) const;
  void release(const Released& sample);
  // The layer of an accumulator, created (and counted for revision()) if new.
  LayerSamples& layer_in(Accumulator& accumulator, int layer);
  Tail pending_tail() const;
  // What the chosen leg's profile is made of now: up to two accumulators
  // and the pending samples it takes.
  struct LegSources {
    const Accumulator* first = nullptr;   // "before" (ascent, all)
    const Accumulator* second = nullptr;  // "after" (descent, all; ascent on a pending new top)
    Pending pending;
  };
  LegSources leg_sources() const;
  // The populated layers of `sources`, ascending.
  static std::vector<int> layer_keys(const LegSources& sources);

  ProfileOptions options_;
  // Ring of the last kPressureWindow usable raw samples; count_ of them so far.
  std::array<Raw, kPressureWindow> ring_{};
  std::size_t count_ = 0;
  Accumulator before_;
  Accumulator after_;
  std::size_t before_samples_ = 0;
  std::size_t after_samples_ = 0;
  double top_pressure_pa_ = std::numeric_limits<double>::infinity();
  std::size_t seen_ = 0;
  std::size_t skipped_no_temperature_ = 0;
  std::size_t skipped_out_of_range_ = 0;
  std::size_t revision_union_ = 0;   // layers new to before_ and after_ together
  std::size_t revision_after_ = 0;   // layers new to after_ (refilled after each top)
  std::uint64_t version_clock_ = 0;  // stamps LayerSamples::version, never reused
  // Nodes of unchanged layers, reused by the next build() (a cache: build()
  // stays const; the builder is not shared between threads).
  mutable std::map<int, CachedNode> node_cache_;
};

}  // namespace baroz

// References
// - J. M. Wallace and P. V. Hobbs, Atmospheric Science, 2nd ed., 2006,
//   eqs. 3.29-3.30 (hypsometric equation; numbering from memory).
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: Table 4 (layers),
//   eqs. 33a/33b (hydrostatic layer formulas used for the extension).
// - U.S. Federal Meteorological Handbook No. 3, Appendix D.2 (layer-by-layer
//   thickness from the mean virtual temperature).
