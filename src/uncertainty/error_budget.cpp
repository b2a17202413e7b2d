#include "baroz/uncertainty/error_budget.hpp"

#include <cmath>

#include "baroz/uncertainty/normal_quantile.hpp"

namespace baroz {

std::string_view error_term_name(ErrorTerm term) {
  switch (term) {
    case ErrorTerm::kSampleNoise: return "sigma_p";
    case ErrorTerm::kReference: return "sigma_ref";
    case ErrorTerm::kTemperature: return "sigma_t";
    case ErrorTerm::kTemperatureModel: return "sigma_t_model";
    case ErrorTerm::kDrift: return "drift_sigma";
    case ErrorTerm::kCount: break;
  }
  return "unknown";
}

ErrorBudget::ErrorBudget(const ErrorBudgetOptions& options)
    : options_(options), k_(two_sided_coverage_factor(options.confidence)) {}

HeightSigma ErrorBudget::evaluate(const HeightEval& e, double reference_age_s) const {
  // First-order (linearised) propagation: sigma_h,i = |dh/dx_i| sigma_x,i.
  // The terms are independent, so the variances add (GUM, JCGM 100:2008, eq. 10).
  HeightSigma s;
  s.term_m[0] = std::fabs(e.dh_dp) * options_.sigma_p_pa;
  s.term_m[1] = std::fabs(e.dh_dpref) * options_.sigma_ref_pa;
  s.term_m[2] = std::fabs(e.dh_dt) * options_.sigma_t_k;
  s.term_m[3] = std::fabs(e.dh_dtmodel) * options_.sigma_t_model_k;
  s.term_m[4] = std::fabs(e.dh_dpref) * options_.drift_sigma_pa_per_s * reference_age_s;
  double v = 0.0;
  for (double t : s.term_m) v += t * t;
  s.total_m = std::sqrt(v);
  return s;
}

}  // namespace baroz
