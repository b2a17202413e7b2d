#include "baroz/models/profile_model.hpp"

#include <cmath>
#include <limits>
#include <utility>

#include "baroz/core/constants.hpp"
#include "baroz/models/standard_atmosphere.hpp"

namespace baroz {

namespace {
constexpr double kRPerG0 = constants::kRAir / constants::kG0;  // R/g0 [m' K^-1]

bool same_datum(double a, double b) {
  return a == b || (std::isnan(a) && std::isnan(b));
}
}  // namespace

ProfileModel::ProfileModel(TemperatureProfile profile, GravityFrame frame)
    : profile_(std::move(profile)),
      frame_(frame),
      min_pressure_pa_(ussa76::min_pressure_pa()),
      max_pressure_pa_(ussa76::max_pressure_pa()),
      cached_ref_pressure_pa_(std::numeric_limits<double>::quiet_NaN()),
      cached_datum_m_(std::numeric_limits<double>::quiet_NaN()) {}

void ProfileModel::set_profile(TemperatureProfile profile) {
  profile_ = std::move(profile);
  segment_hint_ = 0;
  ref_segment_hint_ = 0;
  cached_ref_pressure_pa_ = std::numeric_limits<double>::quiet_NaN();  // H(p_ref) changed
  if (from_sensor_) build_shifted();
}

void ProfileModel::set_profile_from_sensor(bool on) {
  from_sensor_ = on;
  cached_ref_pressure_pa_ = std::numeric_limits<double>::quiet_NaN();
  if (on) {
    build_shifted();
  } else {
    shifted_.clear();
  }
}

void ProfileModel::build_shifted() {
  const std::vector<ProfileNode>& nodes = profile_.nodes();
  double lowest = nodes.front().pressure_pa;
  for (const ProfileNode& node : nodes) lowest = std::fmin(lowest, node.pressure_pa);
  shift_pa_ = std::fmin(1.0, 1e-4 * lowest);
  shifted_.clear();
  for (double sign : {1.0, -1.0}) {
    std::vector<ProfileNode> moved = nodes;
    for (ProfileNode& node : moved) node.pressure_pa += sign * shift_pa_;
    shifted_.emplace_back(std::move(moved), profile_.covered_bottom_pa() + sign * shift_pa_,
                          profile_.covered_top_pa() + sign * shift_pa_);
  }
  shifted_hint_[0] = shifted_hint_[1] = 0;
  shifted_ref_hint_[0] = shifted_ref_hint_[1] = 0;
}

bool ProfileModel::update_reference(double p_ref_pa, double datum_geopotential_m) {
  if (!(p_ref_pa >= min_pressure_pa_ && p_ref_pa <= max_pressure_pa_)) {
    cached_ref_pressure_pa_ = std::numeric_limits<double>::quiet_NaN();
    return false;
  }
  const ProfilePoint ref = profile_.geopotential_at(p_ref_pa, ref_segment_hint_);
  ref_geopotential_m_ = ref.geopotential_m;
  ref_log_pressure_ = ref.log_pressure;
  ref_slope_ = kRPerG0 * ref.virtual_temperature_k / p_ref_pa;  // -dH/dp at p_ref (hydrostatic)
  ref_extrapolated_ = ref.extrapolated;
  ref_point_ = ref;
  for (std::size_t k = 0; k < shifted_.size(); ++k)
    shifted_ref_geopotential_m_[k] =
        shifted_[k].geopotential_at(p_ref_pa, shifted_ref_hint_[k]).geopotential_m;
  if (std::isnan(datum_geopotential_m)) {
    // The standard atmosphere only places the column in the gravity field.
    const ussa76::Level level = ussa76::level_at_pressure(p_ref_pa);
    datum_geopotential_m_ = level.geopotential_m;
    datum_slope_ = -kRPerG0 * level.temperature_k / p_ref_pa;  // hydrostatic dH_std/dp
  } else {
    datum_geopotential_m_ = datum_geopotential_m;
    datum_slope_ = 0.0;
  }
  datum_zprime_ = frame_.geometric_per_geopotential(datum_geopotential_m_);
  cached_ref_pressure_pa_ = p_ref_pa;
  cached_datum_m_ = datum_geopotential_m;
  return true;
}

HeightEval ProfileModel::evaluate(double pressure_pa, double /*temperature_k*/,
                                  const ReferencePoint& ref) {
  return evaluate(pressure_pa, ref, true);
}

HeightEval ProfileModel::evaluate_height(double pressure_pa, double /*temperature_k*/,
                                         const ReferencePoint& ref) {
  return evaluate(pressure_pa, ref, false);
}

HeightEval ProfileModel::evaluate(double pressure_pa, const ReferencePoint& ref, bool derivatives) {
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

  // Hypsometric equation through the profile: dH = H(p) - H(p_ref).
  const ProfilePoint point = profile_.geopotential_at(pressure_pa, segment_hint_);
  const double dh_geo = point.geopotential_m - ref_geopotential_m_;
  const double level = datum_geopotential_m_ + dh_geo;
  const double zprime_level = frame_.geometric_per_geopotential(level);  // dZ/dH at Hd + dH
  out.geopotential_m = dh_geo;
  // USSA76 eq. 18 (or its WGS 84 form): h = Z(Hd + dH) - Z(Hd).
  out.height_m = frame_.geometric_height_difference(datum_geopotential_m_, dh_geo);
  out.extrapolated = point.extrapolated || ref_extrapolated_;
  if (!derivatives) return out;

  // Hydrostatic equation: dH/dp = -R T_v(p) / (g0 p).
  out.dh_dp = -(kRPerG0 * point.virtual_temperature_k / pressure_pa) * zprime_level;
  out.dh_dpref = ref_slope_ * zprime_level + datum_slope_ * (zprime_level - datum_zprime_);
  // A uniform offset dT of the profile adds (R/g0) dT ln(p_ref/p) to dH.
  out.dh_dt = kRPerG0 * (ref_log_pressure_ - point.log_pressure) * zprime_level;
  // Independent random errors: (R/g0) sqrt(sum_i (W_i(p) - W_i(p_ref))^2 / n_i)
  // (GUM eq. 10; the error in T passes to T_v with T_v/T ~ 1, taken as 1).
  out.dh_dt_random =
      kRPerG0 * std::sqrt(profile_.random_weight_sum(ref_point_, point)) * zprime_level;
  out.dh_dtmodel = 0.0;
  if (!shifted_.empty()) {
    // Central difference in the nodes' common shift (p, p_ref, Hd fixed).
    double dh_shifted[2];
    for (std::size_t k = 0; k < 2; ++k)
      dh_shifted[k] = shifted_[k].geopotential_at(pressure_pa, shifted_hint_[k]).geopotential_m -
                      shifted_ref_geopotential_m_[k];
    out.dh_dpprofile = (dh_shifted[0] - dh_shifted[1]) / (2.0 * shift_pa_) * zprime_level;
  }
  return out;
}

}  // namespace baroz
