// The uncertainty stage: a budget of named error terms, each propagated
// linearly through the model's partial derivatives to a 1-sigma height
// contribution, combined in quadrature (the terms are independent) and
// expanded to a band at the requested confidence.
//
// Derivation and the origin of each default: docs/uncertainty.md.
#pragma once

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string_view>

#include "baroz/models/height_model.hpp"

namespace baroz {

/// The budget's terms, in the order of the --sigma-columns. Every consumer
/// iterates over the array.
enum class ErrorTerm : std::uint8_t {
  kSampleNoise,        ///< --sigma-p: random error of each pressure sample
  kSensorOffset,       ///< --sigma-p-abs: the sensor's absolute offset (common to the
                       ///< reference when it comes from the same sensor)
  kReference,          ///< --sigma-ref: the reference pressure's own error
  kTemperature,        ///< --sigma-t: systematic temperature bias
  kTemperatureRandom,  ///< --sigma-t-random: per-sample random temperature error
  kDrift,              ///< --drift-sigma: ground-pressure drift since the reference
  kTemperatureModel,   ///< --sigma-t-model: real atmosphere vs the standard one
  kCount
};

inline constexpr std::size_t kErrorTermCount = static_cast<std::size_t>(ErrorTerm::kCount);

/// Option-style names: "sigma_p", "sigma_p_abs", "sigma_ref", "sigma_t",
/// "sigma_t_random", "drift_sigma", "sigma_t_model".
std::string_view error_term_name(ErrorTerm term);

struct ErrorBudgetOptions {
  /// 1-sigma values, SI units. Defaults and their origin: docs/uncertainty.md.
  double sigma_p_pa = 5.0;                      ///< 0.05 hPa
  double sigma_p_abs_pa = 50.0;                 ///< 0.5 hPa
  /// nullopt: by reference (0.1 hPa for --ref-pressure and --qnh; the
  /// standard error of the window mean for a reference from the log).
  std::optional<double> sigma_ref_pa;
  double sigma_t_k = 0.5;                       ///< systematic, 0.5 K
  double sigma_t_random_k = 0.2;                ///< random per sample, 0.2 K
  double sigma_t_model_k = 5.0;                 ///< 5 K
  double drift_sigma_pa_per_s = 50.0 / 3600.0;  ///< 0.5 hPa per hour
  double confidence = 0.95;                     ///< two-sided coverage of the band
  std::size_t monte_carlo_runs = 0;             ///< --monte-carlo N (0: linear)
  std::uint64_t seed = 1;                       ///< --seed
};

/// What the reference manager says about one row's reference, for the budget.
struct BudgetInputs {
  double reference_sigma_pa = 0.0;  ///< sigma of p_ref's own error [Pa] (resolved default)
  bool offset_common = true;        ///< p_ref comes from the same sensor (offset cancels)
  double drift_pa = 0.0;            ///< 1-sigma error of p_ref from drift at this row [Pa]
};

struct HeightSigma {
  std::array<double, kErrorTermCount> term_m{};  ///< 1-sigma contribution per term [m]
  double total_m = 0.0;                          ///< root sum of squares [m]
};

class ErrorBudget {
 public:
  explicit ErrorBudget(const ErrorBudgetOptions& options);
  /// 1-sigma contributions of each term for one evaluated sample.
  HeightSigma evaluate(const HeightEval& eval, const BudgetInputs& inputs) const;
  /// Half-width of the band = coverage factor k * total sigma.
  double coverage_factor() const { return k_; }
  const ErrorBudgetOptions& options() const { return options_; }

 private:
  ErrorBudgetOptions options_;
  double k_ = 1.959963984540054;
};

}  // namespace baroz
