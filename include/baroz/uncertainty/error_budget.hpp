// The uncertainty stage: a budget of named error terms, each propagated
// linearly through the model's partial derivatives to a 1-sigma height
// contribution, combined in quadrature (the terms are independent) and
// expanded to a band at the requested confidence.
//
// Derivation and the origin of each default: docs/uncertainty.md.
#pragma once

#include <array>
#include <cstddef>
#include <string_view>

#include "baroz/models/height_model.hpp"

namespace baroz {

/// The budget's terms. New terms are added before kCount; every consumer
/// iterates over the array.
enum class ErrorTerm : std::uint8_t {
  kSampleNoise,       ///< --sigma-p: random error of each pressure sample
  kReference,         ///< --sigma-ref: error of the reference pressure
  kTemperature,       ///< --sigma-t: error of the temperature the model uses
  kTemperatureModel,  ///< --sigma-t-model: real atmosphere vs the standard one
  kDrift,             ///< --drift-sigma: ground-pressure drift since the reference was valid
  kCount
};
inline constexpr std::size_t kErrorTermCount = static_cast<std::size_t>(ErrorTerm::kCount);

/// Option-style names: "sigma_p", "sigma_ref", "sigma_t", "sigma_t_model",
/// "drift_sigma".
std::string_view error_term_name(ErrorTerm term);

struct ErrorBudgetOptions {
  /// 1-sigma values, SI units. Defaults: docs/uncertainty.md.
  double sigma_p_pa = 5.0;          ///< 0.05 hPa
  double sigma_ref_pa = 10.0;       ///< 0.10 hPa
  double sigma_t_k = 0.5;           ///< 0.5 K
  double sigma_t_model_k = 5.0;     ///< 5 K
  double drift_sigma_pa_per_s = 50.0 / 3600.0;  ///< 0.5 hPa per hour
  double confidence = 0.95;         ///< two-sided coverage of the band
};

struct HeightSigma {
  std::array<double, kErrorTermCount> term_m{};  ///< 1-sigma contribution per term [m]
  double total_m = 0.0;                          ///< root sum of squares [m]
};

class ErrorBudget {
 public:
  explicit ErrorBudget(const ErrorBudgetOptions& options);
  /// 1-sigma contributions of each term for one evaluated sample.
  /// `reference_age_s`: time since the reference pressure was last known
  /// for this sample (e.g. beyond the end of a base-station log); the drift
  /// term grows linearly with it.
  HeightSigma evaluate(const HeightEval& eval, double reference_age_s = 0.0) const;
  /// Half-width of the band = coverage factor k * total sigma.
  double coverage_factor() const { return k_; }
  const ErrorBudgetOptions& options() const { return options_; }

 private:
  ErrorBudgetOptions options_;
  double k_ = 1.959963984540054;
};

}  // namespace baroz
