#include "baroz/models/standard_model.hpp"

#include <cmath>
#include <limits>

#include "baroz/core/constants.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/standard_atmosphere.hpp"

namespace baroz {

namespace {
constexpr double kRPerG0 = constants::kRAir / constants::kG0;  // R/g0 [m' K^-1]
constexpr double kR0 = constants::kR0;

bool same_datum(double a, double b) {
  return a == b || (std::isnan(a) && std::isnan(b));
}
}  // namespace

StandardModel::StandardModel()
    : min_pressure_pa_(ussa76::min_pressure_pa()),
      max_pressure_pa_(ussa76::max_pressure_pa()),
      cached_ref_pressure_pa_(std::numeric_limits<double>::quiet_NaN()),
      cached_datum_m_(std::numeric_limits<double>::quiet_NaN()),
      datum_follows_ref_(true),
      ref_geopotential_m_(0.0),
      ref_slope_(0.0),
      ref_log_ratio_(0.0),
      datum_geopotential_m_(0.0),
      datum_factor_(1.0),
      dh_dpref_follow_(0.0) {}

bool StandardModel::update_reference(double p_ref_pa, double datum_geopotential_m) {
  if (!(p_ref_pa >= min_pressure_pa_ && p_ref_pa <= max_pressure_pa_)) {
    cached_ref_pressure_pa_ = std::numeric_limits<double>::quiet_NaN();
    return false;
  }
  if (p_ref_pa != cached_ref_pressure_pa_) {
    const ussa76::Level level = ussa76::level_at_pressure(p_ref_pa);
    ref_geopotential_m_ = level.geopotential_m;
    ref_slope_ = kRPerG0 * level.temperature_k / p_ref_pa;  // -dH/dp at p_ref (hydrostatic)
    ref_log_ratio_ = level.log_pressure_ratio;
  }
  cached_ref_pressure_pa_ = p_ref_pa;
  cached_datum_m_ = datum_geopotential_m;
  datum_follows_ref_ = std::isnan(datum_geopotential_m);
  datum_geopotential_m_ = datum_follows_ref_ ? ref_geopotential_m_ : datum_geopotential_m;
  datum_factor_ = kR0 / (kR0 - datum_geopotential_m_);
  dh_dpref_follow_ = ref_slope_ * datum_factor_ * datum_factor_;
  return true;
}

HeightEval StandardModel::evaluate(double pressure_pa, double /*temperature_k*/,
                                   const ReferencePoint& ref) {
  HeightEval out;
  if (!(pressure_pa >= min_pressure_pa_ && pressure_pa <= max_pressure_pa_)) {
    out.valid = false;
    out.reason = kReasonPressureRange;
    return out;
  }
  if (!(ref.pressure_pa == cached_ref_pressure_pa_ &&
        same_datum(ref.datum_geopotential_m, cached_datum_m_)) &&
      !update_reference(ref.pressure_pa, ref.datum_geopotential_m)) {
    out.valid = false;
    out.reason = kReasonReferenceRange;
    return out;
  }

  const ussa76::Level level = ussa76::level_at_pressure(pressure_pa);
  const double dh_geo = level.geopotential_m - ref_geopotential_m_;  // [m'] above the reference
  // USSA76 eq. 18: h = Z(Hd + dH) - Z(Hd) = r0^2 dH / ((r0 - Hd - dH)(r0 - Hd)).
  const double level_factor = kR0 / (kR0 - datum_geopotential_m_ - dh_geo);
  const double zprime_level = level_factor * level_factor;  // dZ/dH at Hd + dH
  out.geopotential_m = dh_geo;
  out.height_m = level_factor * datum_factor_ * dh_geo;

  // Hydrostatic equation: dH/dp = -R T_M / (g0 p).
  out.dh_dp = -(kRPerG0 * level.temperature_k / pressure_pa) * zprime_level;
  // Exact for both datum cases (see the header).
  out.dh_dpref = datum_follows_ref_ ? dh_dpref_follow_ : ref_slope_ * zprime_level;
  out.dh_dt = 0.0;
  // Hypsometric equation with T(p) + dT: d(dH)/d(dT) = (R/g0) ln(p_ref/p),
  // ln(p_ref/p) = ln(p_ref/P0) - ln(p/P0), both already known.
  out.dh_dtmodel = kRPerG0 * (ref_log_ratio_ - level.log_pressure_ratio) * zprime_level;
  return out;
}

}  // namespace baroz
