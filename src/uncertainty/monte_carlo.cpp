#include "baroz/uncertainty/monte_carlo.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <tuple>
#include <utility>

#include "baroz/uncertainty/normal_quantile.hpp"

namespace baroz {
namespace {

/// The splitmix64 increment, 2^64 / golden ratio (Steele, Lea & Flood 2014).
constexpr std::uint64_t kGolden = 0x9e3779b97f4a7c15ULL;
// Arbitrary odd constants that keep the hash domains (seed, row, the
// systematic stream) apart.
constexpr std::uint64_t kSeedTag = 0x6261726f7a2d6d63ULL;
constexpr std::uint64_t kRowTag = 0x726f772d6b657931ULL;
constexpr std::uint64_t kSystematicTag = 0x7379732d64726177ULL;

/// The splitmix64 finaliser: a bijection of the 64-bit integers with full
/// avalanche.
constexpr std::uint64_t mix(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

/// Output i (1, 2, ...) of the splitmix64 sequence started at `state`.
constexpr std::uint64_t splitmix64(std::uint64_t state, std::uint64_t i) {
  return mix(state + i * kGolden);
}

/// The top 53 bits as a uniform in (0, 1]: never 0, so the log is finite.
double unit_interval(std::uint64_t bits) {
  return static_cast<double>((bits >> 11) + 1) * 0x1.0p-53;
}

/// Two independent standard normals from the Box-Muller transform of the
/// uniforms of outputs i and i + 1 of the sequence at `state`.
std::pair<double, double> normal_pair(std::uint64_t state, std::uint64_t i) {
  const double u1 = unit_interval(splitmix64(state, i));
  const double u2 = unit_interval(splitmix64(state, i + 1));
  const double r = std::sqrt(-2.0 * std::log(u1));
  const double angle = 2.0 * std::numbers::pi * u2;
  return {r * std::cos(angle), r * std::sin(angle)};
}

/// The value at fractional position h (0 <= h <= n - 1) of the sorted order
/// of the n values at `x` (reordered), interpolating linearly between the
/// order statistics floor(h) and floor(h) + 1: Hyndman & Fan definition 7
/// when h = (n - 1) p. The lowest `start` values must already be the `start`
/// smallest, in place. Leaves x[j] as the j-th order statistic (j = floor(h)),
/// and stores j in *j_out when given.
double order_statistic(double* x, std::size_t n, std::size_t start, double h, std::size_t* j_out) {
  std::size_t j = static_cast<std::size_t>(std::floor(h));
  if (j > n - 1) j = n - 1;
  const double g = h - static_cast<double>(j);
  if (j >= start) std::nth_element(x + start, x + j, x + n);
  if (j_out) *j_out = j;
  const double xj = x[j];
  if (g <= 0.0 || j + 1 >= n) return xj;
  const double xj1 = *std::min_element(x + j + 1, x + n);
  return xj + g * (xj1 - xj);
}

}  // namespace

MonteCarlo::MonteCarlo(const ErrorBudgetOptions& options)
    : options_(options),
      lower_probability_(0.5 * (1.0 - options.confidence)),
      upper_probability_(0.5 * (1.0 + options.confidence)) {
  (void)two_sided_coverage_factor(options.confidence);  // validates: throws outside (0, 1)
  const std::size_t n = options.monte_carlo_runs;
  systematic_.resize(n);
  run_keys_.resize(n);
  const std::uint64_t seed_key = mix(options.seed ^ kSeedTag);
  for (std::size_t k = 0; k < n; ++k) {
    const std::uint64_t run_key = splitmix64(seed_key, static_cast<std::uint64_t>(k) + 1);
    run_keys_[k] = run_key;
    const std::uint64_t state = mix(run_key ^ kSystematicTag);
    MonteCarloSystematicDraw& d = systematic_[k];
    std::tie(d.offset, d.reference) = normal_pair(state, 1);
    std::tie(d.temperature, d.model) = normal_pair(state, 3);
    d.drift = normal_pair(state, 5).first;
  }
}

MonteCarloBand MonteCarlo::band(const PerturbedHeight& height, double pressure_pa,
                                double reference_pa, const HeightEval& nominal,
                                const BudgetInputs& inputs, std::uint64_t row) const {
  return band(height, pressure_pa, reference_pa, nominal, inputs, row, scratch_);
}

MonteCarloBand MonteCarlo::band(const PerturbedHeight& height, double pressure_pa,
                                double reference_pa, const HeightEval& nominal,
                                const BudgetInputs& inputs, std::uint64_t row,
                                std::vector<double>& scratch) const {
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  const std::size_t n = runs();
  if (scratch.size() < n) scratch.resize(n);
  const ErrorBudgetOptions& o = options_;
  const std::uint64_t row_key = mix(row ^ kRowTag);
  const double offset_to_reference = inputs.offset_common ? 1.0 : 0.0;

  std::size_t m = 0;
  double sum = 0.0;
  for (std::size_t k = 0; k < n; ++k) {
    const MonteCarloSystematicDraw& s = systematic_[k];
    const auto [noise_p, noise_t] = normal_pair(mix(run_keys_[k] ^ row_key), 1);
    const double offset = s.offset * o.sigma_p_abs_pa;
    const double p = pressure_pa + offset + noise_p * o.sigma_p_pa;
    const double p_ref = reference_pa + offset_to_reference * offset +
                         s.reference * inputs.reference_sigma_pa + s.drift * inputs.drift_pa;
    const double h = height(p, p_ref);
    if (!std::isfinite(h)) continue;
    const double deviation = (h - nominal.height_m) + nominal.dh_dpprofile * offset +
                             nominal.dh_dt * (s.temperature * o.sigma_t_k) +
                             nominal.dh_dtmodel * (s.model * o.sigma_t_model_k) +
                             nominal.dh_dt_random * (noise_t * o.sigma_t_random_k);
    scratch[m++] = deviation;
    sum += deviation;
  }

  MonteCarloBand band{kNaN, kNaN, kNaN, m};
  if (m == 0) return band;
  if (m > 1) {
    // Two passes (mean, then squares about it): no cancellation.
    const double mean = sum / static_cast<double>(m);
    double squares = 0.0;
    for (std::size_t i = 0; i < m; ++i) squares += (scratch[i] - mean) * (scratch[i] - mean);
    band.sigma_m = std::sqrt(squares / static_cast<double>(m - 1));
  }
  // Type-7 positions in the order of all n runs. A failed run is counted in
  // the tail that widens the band: at -infinity for the lower limit, at
  // +infinity for the upper one. Its height is unknown, and it fails because
  // it went past the model's edge, so neither limit can be drawn in by it.
  // A limit whose position falls among the failed runs is left NaN.
  const std::size_t failed = n - m;
  const double h_low =
      static_cast<double>(n - 1) * lower_probability_ - static_cast<double>(failed);
  const double h_high = static_cast<double>(n - 1) * upper_probability_;
  const double last = static_cast<double>(m - 1);
  std::size_t j_low = 0;
  std::size_t start_high = 0;
  if (h_low >= 0.0 && h_low <= last) {
    band.low_m = nominal.height_m + order_statistic(scratch.data(), m, 0, h_low, &j_low);
    // x[0..j_low] are now the j_low + 1 smallest: the upper selection only
    // needs the rest when its position is beyond them.
    start_high = j_low + 1;
  }
  if (h_high <= last)
    band.high_m =
        nominal.height_m + order_statistic(scratch.data(), m, start_high, h_high, nullptr);
  return band;
}

}  // namespace baroz
