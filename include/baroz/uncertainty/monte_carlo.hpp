// The Monte Carlo cross-check of the uncertainty band (`--monte-carlo N`).
//
// The linear budget (error_budget.hpp) propagates each term through the
// model's first derivatives. Here the same terms are drawn N times and the
// perturbed pressures go through the model itself, so the band shows the
// model's non-linearity (large at low pressure, where h ~ ln p).
//
// Run k (0..N-1) of one row:
//   systematic draws, a function of (seed, k) only, the same for every row,
//   so that run k is one coherent realisation of the whole flight:
//     d_abs ~ N(0, sigma_p_abs)           sensor offset
//     d_ref ~ N(0, 1) * reference_sigma   reference error (the row's sigma)
//     b_t   ~ N(0, sigma_t)               temperature bias
//     b_m   ~ N(0, sigma_t_model)         model temperature offset
//     z_dr  ~ N(0, 1)                     drift, scaled by the row's drift_pa
//   random draws, a function of (seed, k, row):
//     e_p   ~ N(0, sigma_p)               pressure noise
//     e_t   ~ N(0, sigma_t_random)        temperature noise
//   h_k = height(p + d_abs + e_p, p_ref + [offset_common] d_abs + d_ref + z_dr drift_pa)
//         + dh_dt b_t + dh_dtmodel b_m + dh_dt_random e_t + dh_dpprofile d_abs.
// The temperature terms are added linearly: for these models the
// geopotential is exactly linear in each temperature (dZ = (R/g0) T dln p),
// so only the pressures need the model. So is the offset's shift of a
// profile built from the same sensor (dh_dpprofile): a shift of the nodes
// by d_abs is a small change of where each temperature sits.
//
// The band is nominal.height_m plus the empirical quantiles (1-P)/2 and
// (1+P)/2 (P = confidence) of the deviations h_k - nominal.height_m, with
// linear interpolation between order statistics: Hyndman & Fan (1996)
// definition 7 (R's default), Q(p) = x_(j) + g (x_(j+1) - x_(j)) with
// j = floor((n-1) p) (0-based), g = (n-1) p - j.
//
// A run fails when the model gives no height for its perturbed pressures
// (beyond the model's range, or a pressure <= 0 at the top of the
// atmosphere). Its height is unknown, so it is counted in the tail that
// widens the band: below every valid run for the lower limit, above every
// valid run for the upper one. The limits stay conservative; one whose
// order statistic falls among the failed runs cannot be drawn and is NaN
// (more than about (1 - P) / 2 of the runs failed). The caller then falls
// back to the linear band (the height job flags the row linear_band).
//
// Random numbers are counter-based (a splitmix64 hash of seed, run, row and
// stream), so a row's band does not depend on the order in which rows are
// evaluated or on threads. Normals come from the Box-Muller transform of
// two uniforms in (0, 1]; no <random> distribution is used (their output is
// implementation-defined). Bands are bit-identical for one build; across
// platforms they may differ in the last bits with the C library's log, sin
// and cos.
#pragma once

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <vector>

#include "baroz/models/height_model.hpp"
#include "baroz/uncertainty/error_budget.hpp"

namespace baroz {

struct MonteCarloBand {
  double low_m = 0.0;          ///< lower band limit, height above the reference [m]
  double high_m = 0.0;         ///< upper band limit [m]
  double sigma_m = 0.0;        ///< sample standard deviation (n - 1) of the valid runs' heights [m]
  std::size_t valid_runs = 0;  ///< runs that gave a finite height (see "A run fails")

  /// Both limits drawn: false when too many runs failed for one of them.
  bool complete() const { return !std::isnan(low_m) && !std::isnan(high_m); }
};

/// Height above the reference [m] for a perturbed sample pressure and
/// reference pressure [Pa], with everything else as for the nominal row;
/// NaN when the model gives no height (non-finite results are skipped).
using PerturbedHeight = std::function<double(double pressure_pa, double reference_pa)>;

/// Draws of one run that are common to every row (unit normals; scaled by
/// the options or the row's inputs when used).
struct MonteCarloSystematicDraw {
  double offset = 0.0;       ///< sensor offset, times sigma_p_abs
  double reference = 0.0;    ///< reference error, times BudgetInputs::reference_sigma_pa
  double temperature = 0.0;  ///< temperature bias, times sigma_t
  double model = 0.0;        ///< model temperature offset, times sigma_t_model
  double drift = 0.0;        ///< drift, times BudgetInputs::drift_pa
};

class MonteCarlo {
 public:
  /// Uses monte_carlo_runs, seed, the sigmas and confidence of `options`.
  /// Throws baroz::Error (ExitCode::kUsage) when confidence is not in (0, 1).
  /// Precomputes the runs' systematic draws (40 bytes a run).
  explicit MonteCarlo(const ErrorBudgetOptions& options);

  /// The band of one row. `height` is called once per run, in the order
  /// k = 0..N-1; `pressure_pa`, `reference_pa` and `nominal` are the row's
  /// unperturbed values (nominal.height_m = height(pressure_pa, reference_pa)
  /// in exact arithmetic), `row` its index (any value unique to the row).
  /// No valid run: all NaN; one valid run: sigma_m NaN; a limit that the
  /// failed runs leave undetermined: NaN (see "A run fails").
  /// Uses a scratch buffer held by the object: allocates on the first call
  /// only, and an instance must not be shared between threads (copy it).
  MonteCarloBand band(const PerturbedHeight& height, double pressure_pa, double reference_pa,
                      const HeightEval& nominal, const BudgetInputs& inputs,
                      std::uint64_t row) const;
  /// As above with a caller-owned scratch buffer (resized to N as needed):
  /// safe to call concurrently on one instance with distinct buffers.
  MonteCarloBand band(const PerturbedHeight& height, double pressure_pa, double reference_pa,
                      const HeightEval& nominal, const BudgetInputs& inputs, std::uint64_t row,
                      std::vector<double>& scratch) const;

  std::size_t runs() const { return systematic_.size(); }
  const ErrorBudgetOptions& options() const { return options_; }
  /// Run k's row-independent unit normals (k < runs()).
  const MonteCarloSystematicDraw& systematic_draw(std::size_t k) const { return systematic_[k]; }

 private:
  ErrorBudgetOptions options_;
  double lower_probability_;  // (1 - P) / 2
  double upper_probability_;  // (1 + P) / 2
  std::vector<MonteCarloSystematicDraw> systematic_;
  std::vector<std::uint64_t> run_keys_;  // hash of (seed, k), for the random draws
  mutable std::vector<double> scratch_;
};

}  // namespace baroz

// References:
//   R. J. Hyndman, Y. Fan, "Sample quantiles in statistical packages",
//     The American Statistician 50 (1996) 361-365: definition 7.
//   G. E. P. Box, M. E. Muller, "A note on the generation of random normal
//     deviates", Ann. Math. Statist. 29 (1958) 610-611.
//   G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number
//     generators", OOPSLA 2014 (splitmix64 and its finaliser).
//   JCGM 101:2008 (GUM Supplement 1), propagation of distributions by a
//     Monte Carlo method; coverage interval from the probabilistically
//     symmetric quantiles (section 7.7).
