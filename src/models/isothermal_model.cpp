#include "baroz/models/isothermal_model.hpp"

#include <cmath>
#include <cstdint>
#include <limits>

#include "baroz/core/constants.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/standard_atmosphere.hpp"

namespace baroz {

namespace {
constexpr double kRPerG0 = constants::kRAir / constants::kG0;  // R*/(g0 M0) [m' K^-1]
constexpr double kR0 = constants::kR0;

bool same_datum(double a, double b) {
  return a == b || (std::isnan(a) && std::isnan(b));
}
}  // namespace

IsothermalModel::IsothermalModel(IsothermalTemperature temperature)
    : temperature_(temperature),
      cached_ref_pressure_pa_(std::numeric_limits<double>::quiet_NaN()),
      cached_datum_m_(std::numeric_limits<double>::quiet_NaN()),
      datum_follows_ref_(true),
      inverse_ref_pressure_(0.0),
      datum_geopotential_m_(0.0),
      datum_factor_(1.0),
      datum_slope_(0.0) {}

void IsothermalModel::update_reference(double p_ref_pa, double datum_geopotential_m) {
  cached_ref_pressure_pa_ = p_ref_pa;
  cached_datum_m_ = datum_geopotential_m;
  inverse_ref_pressure_ = 1.0 / p_ref_pa;
  datum_follows_ref_ = std::isnan(datum_geopotential_m);
  if (datum_follows_ref_) {
    // The standard atmosphere only places the column in the gravity field;
    // outside its range the nearest layer's formula is extended.
    const ussa76::Level level = ussa76::level_at_pressure(p_ref_pa);
    datum_geopotential_m_ = level.geopotential_m;
    datum_slope_ = -kRPerG0 * level.temperature_k / p_ref_pa;  // hydrostatic dH/dp
  } else {
    datum_geopotential_m_ = datum_geopotential_m;
    datum_slope_ = 0.0;
  }
  datum_factor_ = kR0 / (kR0 - datum_geopotential_m_);
}

HeightEval IsothermalModel::evaluate(double pressure_pa, double temperature_k,
                                     const ReferencePoint& ref) {
  HeightEval out;
  auto invalid = [&out](std::string_view reason) {
    out.valid = false;
    out.reason = reason;
    return out;
  };
  if (!(pressure_pa > 0.0) || !std::isfinite(pressure_pa)) return invalid(kReasonPressure);
  const double p_ref = ref.pressure_pa;
  if (!(p_ref > 0.0) || !std::isfinite(p_ref)) return invalid(kReasonReferencePressure);
  const double t_ref = ref.temperature_k;
  if (!(t_ref > 0.0) || !std::isfinite(t_ref)) return invalid(kReasonNoReferenceTemperature);

  double t_used = t_ref;
  if (temperature_ == IsothermalTemperature::kMean) {
    if (std::isnan(temperature_k)) return invalid(kReasonNoSampleTemperature);
    t_used = 0.5 * (t_ref + temperature_k);
    if (!(t_used > 0.0) || !std::isfinite(t_used)) return invalid(kReasonTemperature);
  }

  if (!(p_ref == cached_ref_pressure_pa_ &&
        same_datum(ref.datum_geopotential_m, cached_datum_m_))) {
    update_reference(p_ref, ref.datum_geopotential_m);
  }

  // Hypsometric equation: dH = (R* T / (g0 M0)) ln(p_ref / p).
  const double log_ratio = std::log(p_ref / pressure_pa);
  const double scale = kRPerG0 * t_used;  // scale height [m']
  const double dh_geo = scale * log_ratio;
  const double below_level = kR0 - datum_geopotential_m_ - dh_geo;
  if (!(below_level > 0.5 * kR0)) return invalid(kReasonTooHigh);

  // USSA76 eq. 18: h = Z(Hd + dH) - Z(Hd) = r0^2 dH / ((r0 - Hd - dH)(r0 - Hd)).
  const double level_factor = kR0 / below_level;
  const double zprime_level = level_factor * level_factor;  // dZ/dH at Hd + dH
  out.geopotential_m = dh_geo;
  out.height_m = level_factor * datum_factor_ * dh_geo;
  out.dh_dp = -(scale / pressure_pa) * zprime_level;
  out.dh_dpref = scale * inverse_ref_pressure_ * zprime_level;
  if (datum_follows_ref_) {
    // h = Z(Hd + dH) - Z(Hd) with Hd = H_std(p_ref): the datum term
    // dHd/dp_ref (Z'(Hd + dH) - Z'(Hd)).
    out.dh_dpref += datum_slope_ * (zprime_level - datum_factor_ * datum_factor_);
  }
  out.dh_dt = kRPerG0 * log_ratio * zprime_level;  // = (dH / T) Z'
  // Random errors (GUM eq. 10): T_ref the mean of N samples (variance 1/N
  // per unit sigma; N = 0: not measured, no random error).
  const std::uint32_t n_ref = ref.temperature_samples;
  const double ref_variance = n_ref > 0 ? 1.0 / static_cast<double>(n_ref) : 0.0;
  if (temperature_ == IsothermalTemperature::kReference) {
    out.dh_dt_random = std::fabs(out.dh_dt) * std::sqrt(ref_variance);
  } else {
    // T = (T_ref + T_sample)/2: each enters with dh_dt / 2; the sample is
    // one sample (variance 1).
    out.dh_dt_random = 0.5 * std::fabs(out.dh_dt) * std::sqrt(1.0 + ref_variance);
  }
  out.dh_dtmodel = 0.0;
  return out;
}

}  // namespace baroz
