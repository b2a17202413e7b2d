// The `profile` height model: layered hypsometric integration over a
// measured (virtual) temperature profile (temperature_profile.hpp).
//
// Geopotential height above the reference [m']:
//   dH = H(p) - H(p_ref),   H(p) = (R/g0) integral of T_v d(ln(1/p))
// through the profile (R = R*/M0 of USSA76, g0 = 9.80665; hypsometric
// equation, W&H eq. 3.29), so the height is a function of pressure alone and
// ascent and descent agree at the same pressure. Geometric height:
//   h = Z(Hd + dH) - Z(Hd)   (GravityFrame: USSA76 eq. 18 or WGS 84)
// with Hd = ref.datum_geopotential_m, or the standard atmosphere's
// H_std(p_ref) when that is NaN. Neither the sample temperature nor
// ref.temperature_k is used: the temperature is the profile's.
//
// Partial derivatives (of the geometric height h; Z' = dZ/dH of the frame,
// T_v(p) the profile's virtual temperature at p, hydrostatic
// dH/dp = -R T_v(p) / (g0 p), exact for the piecewise-linear profile and its
// extension):
// - dh_dp      = -(R T_v(p) / (g0 p)) Z'(Hd + dH).
// - dh_dpref   = +(R T_v(p_ref) / (g0 p_ref)) Z'(Hd + dH), plus, when the
//   datum is NaN (Hd = H_std(p_ref) moves with p_ref),
//   dHd/dp_ref (Z'(Hd + dH) - Z'(Hd)) with dHd/dp_ref = -R T_std(p_ref)/(g0 p_ref)
//   (relative size ~3e-7 per km of height; included so the derivative is exact).
// - dh_dt      = (R/g0) ln(p_ref / p) Z'(Hd + dH): derivative with respect to a
//   uniform offset of the whole measured profile (T and T_v of every node,
//   and so of the extension), i.e. a temperature-sensor bias; the datum is
//   held fixed.
// - dh_dt_random = (R/g0) sqrt(S(p_ref, p)) Z'(Hd + dH): independent random
//   errors of unit sigma in the samples behind the nodes (node i the median
//   of n_i of them): dh/dT_i = (R/g0) (W_i(p) - W_i(p_ref)) Z', summed in
//   quadrature with weight 1/n_i (GUM JCGM 100:2008 eq. 10), S and W_i as in
//   temperature_profile.hpp (T_v/T taken as 1). Errors average within a
//   layer and add in quadrature across layers: for L equal layers of n
//   samples dh_dt_random / dh_dt ~ 1/sqrt(n L).
// - dh_dtmodel = 0 (the profile is the measurement, not a model assumption).
// - dh_dpprofile: with set_profile_from_sensor(true) (a profile built from
//   the log itself), the derivative of h with respect to one shift d of
//   every node pressure (p_i -> p_i + d), with p and p_ref fixed: a sensor
//   offset moves the nodes with the samples, and h changes by
//   (dh_dp + dh_dpref + dh_dpprofile) d, not by the first two alone. To
//   first order dH changes by -(R/g0) d sum_k dT_v,k (1/p_k + 1/p_k+1)/2
//   over the crossed segments (each segment's temperature slides to lower
//   ln p); for a lapse of 6.5 K/km that is ~+25 % of the endpoint terms at 5
//   km (docs/uncertainty.md, "The sensor's absolute offset"). Computed as a
//   central difference through two copies of the profile with every node
//   shifted by +-d0, d0 = min(1 Pa, 1e-4 x the lowest node pressure)
//   (truncation O(d0^2/p^2) < 1e-8 relative); 0 otherwise.
//
// extrapolated: p or p_ref outside the profile's covered pressure range
// (TemperatureProfile::covered_*); the height there uses the standard
// atmosphere's lapse rates from the end node (see temperature_profile.hpp).
// Valid range: p and p_ref within the standard atmosphere's range
// [ussa76::min_pressure_pa(), ussa76::max_pressure_pa()] = [0.37338 Pa,
// 1776.87 hPa], which the extension uses; otherwise valid = false with a
// reason. (Within it the extended T_v stays positive for any profile whose
// nodes are within 150..350 K: T_std spans 186.9..320.7 K there.)
//
// Cost: one log and one sqrt per sample (plus one log and one exp beyond the
// end nodes); the segment search starts at the last sample's segment (O(1)
// for samples in order, O(log n) otherwise); dh_dt_random is O(1). The
// reference terms are cached while p_ref, the datum and the profile are
// unchanged. No allocation in evaluate(); the instance is not thread-safe
// (caches).
#pragma once

#include <cstddef>
#include <vector>

#include "baroz/models/height_model.hpp"
#include "baroz/models/normal_gravity.hpp"
#include "baroz/models/temperature_profile.hpp"

namespace baroz {

class ProfileModel final : public HeightModel {
 public:
  /// Reason when the sample pressure is outside the valid range.
  static constexpr std::string_view kReasonPressureRange =
      "pressure outside the profile model's range (0.3734 Pa to 1776.87 hPa)";
  /// Reason when the reference pressure is outside the valid range.
  static constexpr std::string_view kReasonReferenceRange =
      "reference pressure outside the profile model's range (0.3734 Pa to 1776.87 hPa)";

  /// The model through `profile`, converting to geometric height with
  /// `frame`.
  explicit ProfileModel(TemperatureProfile profile,
                        GravityFrame frame = GravityFrame::standard());

  ModelKind kind() const override { return ModelKind::kProfile; }
  bool needs_sample_temperature() const override { return false; }
  /// `pressure_pa` [Pa]; `temperature_k` is ignored; `ref.temperature_k` is
  /// ignored; see the file comment for the rest.
  HeightEval evaluate(double pressure_pa, double temperature_k, const ReferencePoint& ref) override;
  /// The height without dh_dt_random and dh_dpprofile (no lookups in the
  /// shifted copies): for the Monte Carlo runs.
  HeightEval evaluate_height(double pressure_pa, double temperature_k,
                             const ReferencePoint& ref) override;

  /// Replaces the profile (causal use: a profile rebuilt as data arrive);
  /// the next evaluate() uses it.
  void set_profile(TemperatureProfile profile);
  const TemperatureProfile& profile() const { return profile_; }
  /// The profile's pressures come from the same sensor as the samples (a
  /// profile built from the log): evaluate() then reports dh_dpprofile
  /// (two more profile lookups a sample). Off by default (a --profile table
  /// from another instrument).
  void set_profile_from_sensor(bool on);
  bool profile_from_sensor() const { return from_sensor_; }
  const GravityFrame& frame() const { return frame_; }

 private:
  HeightEval evaluate(double pressure_pa, const ReferencePoint& ref, bool derivatives);
  // Refreshes the per-reference cache; false when p_ref is out of range.
  bool update_reference(double p_ref_pa, double datum_geopotential_m);

  // The profile with every node pressure shifted by +shift_pa_ and -shift_pa_.
  void build_shifted();

  TemperatureProfile profile_;
  GravityFrame frame_;
  bool from_sensor_ = false;
  double shift_pa_ = 0.0;
  std::vector<TemperatureProfile> shifted_;  // [0]: +shift, [1]: -shift (from_sensor_ only)
  std::size_t shifted_hint_[2] = {0, 0};
  std::size_t shifted_ref_hint_[2] = {0, 0};
  double shifted_ref_geopotential_m_[2] = {0.0, 0.0};  // H(p_ref) through each shifted copy
  double min_pressure_pa_;
  double max_pressure_pa_;
  std::size_t segment_hint_ = 0;      // segment of the last sample
  std::size_t ref_segment_hint_ = 0;  // segment of the last p_ref
  // Everything that depends only on the reference and the profile, valid
  // while p_ref, the datum and the profile stay the same between calls.
  double cached_ref_pressure_pa_;  // p_ref of the cache (NaN: empty)
  double cached_datum_m_;          // ref.datum_geopotential_m of the cache (may be NaN)
  double ref_geopotential_m_ = 0.0;  // H(p_ref) through the profile [m']
  double ref_log_pressure_ = 0.0;    // ln(p_ref / 1 Pa)
  double ref_slope_ = 0.0;           // R T_v(p_ref) / (g0 p_ref) [m' Pa^-1]
  ProfilePoint ref_point_;           // the profile at p_ref (node weights for dh_dt_random)
  bool ref_extrapolated_ = false;    // p_ref outside the covered range
  double datum_geopotential_m_ = 0.0;  // Hd [m']
  double datum_zprime_ = 1.0;          // Z'(Hd)
  double datum_slope_ = 0.0;           // dHd/dp_ref (datum NaN), else 0 [m' Pa^-1]
};

}  // namespace baroz

// References
// - J. M. Wallace and P. V. Hobbs, Atmospheric Science, 2nd ed., 2006,
//   eqs. 3.29-3.30 (hypsometric equation; numbering from memory).
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: eq. 18 (H <-> Z),
//   constants R*, M0, g0.
// - NIMA TR8350.2 (WGS 84) via normal_gravity.hpp (latitude-dependent H <-> Z).
