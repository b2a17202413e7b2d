#include "baroz/uncertainty/error_budget.hpp"

#include <cmath>

#include "baroz/uncertainty/normal_quantile.hpp"

namespace baroz {

std::string_view error_term_name(ErrorTerm term) {
  switch (term) {
    case ErrorTerm::kSampleNoise: return "sigma_p";
    case ErrorTerm::kSensorOffset: return "sigma_p_abs";
    case ErrorTerm::kReference: return "sigma_ref";
    case ErrorTerm::kTemperature: return "sigma_t";
    case ErrorTerm::kTemperatureRandom: return "sigma_t_random";
    case ErrorTerm::kDrift: return "drift_sigma";
    case ErrorTerm::kTemperatureModel: return "sigma_t_model";
    case ErrorTerm::kCount: break;
  }
  return "unknown";
}

ErrorBudget::ErrorBudget(const ErrorBudgetOptions& options)
    : options_(options), k_(two_sided_coverage_factor(options.confidence)) {}

HeightSigma ErrorBudget::evaluate(const HeightEval& e, const BudgetInputs& in) const {
  // First-order (linearised) propagation: sigma_h,i = |dh/dx_i| sigma_x,i.
  // The terms are independent, so the variances add (GUM, JCGM 100:2008,
  // eq. 10). The sensor's offset enters the sample and, when the reference
  // comes from the same sensor, the reference too: one term with the sum of
  // both derivatives (fully correlated inputs, GUM eq. 13 with r = 1).
  HeightSigma s;
  auto set = [&](ErrorTerm t, double v) { s.term_m[static_cast<std::size_t>(t)] = std::fabs(v); };
  set(ErrorTerm::kSampleNoise, e.dh_dp * options_.sigma_p_pa);
  // A profile built from the same sensor moves with the offset too.
  set(ErrorTerm::kSensorOffset,
      (e.dh_dp + (in.offset_common ? e.dh_dpref : 0.0) + e.dh_dpprofile) * options_.sigma_p_abs_pa);
  set(ErrorTerm::kReference, e.dh_dpref * in.reference_sigma_pa);
  set(ErrorTerm::kTemperature, e.dh_dt * options_.sigma_t_k);
  set(ErrorTerm::kTemperatureRandom, e.dh_dt_random * options_.sigma_t_random_k);
  set(ErrorTerm::kDrift, e.dh_dpref * in.drift_pa);
  set(ErrorTerm::kTemperatureModel, e.dh_dtmodel * options_.sigma_t_model_k);
  double v = 0.0;
  for (double t : s.term_m) v += t * t;
  s.total_m = std::sqrt(v);
  return s;
}

}  // namespace baroz
