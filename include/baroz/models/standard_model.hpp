// The `standard` height model: height above the reference from the U.S.
// Standard Atmosphere 1976 (see standard_atmosphere.hpp).
//
// Geopotential height above the reference: dH = H(p) - H(p_ref), H the
// standard atmosphere's geopotential altitude of a pressure [m'].
// Geometric height: h = Z(Hd + dH) - Z(Hd) [m] (USSA76 eq. 18), the column
// placed at the datum level Hd = ref.datum_geopotential_m, or Hd = H(p_ref)
// when that is NaN. The sample temperature is not used.
//
// Partial derivatives (of the geometric height h; Z'(H) = dZ/dH = r0^2/(r0-H)^2;
// hydrostatic equation dH/dp = -R T_M(H(p)) / (g0 p)):
// - dh_dp      = -(R T_M(H(p)) / (g0 p)) Z'(Hd + dH).
// - dh_dpref, datum given (Hd fixed):
//                = +(R T_M(H(p_ref)) / (g0 p_ref)) Z'(Hd + dH).
//   dh_dpref, datum NaN (Hd = H(p_ref) moves with p_ref, h = Z(H(p)) - Z(H(p_ref))):
//                = +(R T_M(H(p_ref)) / (g0 p_ref)) Z'(H(p_ref)).
//   Both are exact; they differ only by the factor Z'(level)/Z'(ref), i.e. by
//   ~3e-7 per kilometre of height.
// - dh_dt      = 0.
// - dh_dtmodel = (R/g0) ln(p_ref/p) Z'(Hd + dH): derivative with respect to a
//   uniform offset dT of the standard temperature as a function of pressure,
//   T(p) = T_M(H(p)) + dT, over the column between p_ref and p (hypsometric
//   equation), the datum Hd held fixed.
//
// Valid range: both p and p_ref within [ussa76::min_pressure_pa(),
// ussa76::max_pressure_pa()] = [0.37338 Pa, 1776.87 hPa], i.e. geopotential
// altitudes -5000 m' to 84852 m' (the product's accepted pressures, up to
// 1500 hPa = -3435 m', lie inside). Otherwise valid = false with a reason.
//
// Cost: one log and one exp (one log in an isothermal layer) and two
// divisions per sample; everything that depends on the reference (H(p_ref)
// and the datum terms) is cached while p_ref and the datum are unchanged
// between calls. No allocation. The instance is not thread-safe (cache).
#pragma once

#include "baroz/models/height_model.hpp"

namespace baroz {

class StandardModel final : public HeightModel {
 public:
  /// Reason when the sample pressure is outside the valid range.
  static constexpr std::string_view kReasonPressureRange =
      "pressure outside the standard atmosphere's range (0.3734 Pa to 1776.87 hPa)";
  /// Reason when the reference pressure is outside the valid range.
  static constexpr std::string_view kReasonReferenceRange =
      "reference pressure outside the standard atmosphere's range (0.3734 Pa to 1776.87 hPa)";

  StandardModel();

  ModelKind kind() const override { return ModelKind::kStandard; }
  bool needs_sample_temperature() const override { return false; }
  /// `pressure_pa` [Pa]; `temperature_k` is ignored; `ref.temperature_k` is
  /// ignored; see the file comment for the rest.
  HeightEval evaluate(double pressure_pa, double temperature_k, const ReferencePoint& ref) override;

 private:
  // Refreshes the per-reference cache for (p_ref, datum); false when p_ref
  // is outside the valid range (the cache is then left empty).
  bool update_reference(double p_ref_pa, double datum_geopotential_m);

  double min_pressure_pa_;
  double max_pressure_pa_;
  // Everything that depends only on the reference, valid while p_ref and the
  // datum stay the same between calls.
  double cached_ref_pressure_pa_;  // p_ref of the cache (NaN: empty)
  double cached_datum_m_;          // ref.datum_geopotential_m of the cache (may be NaN)
  bool datum_follows_ref_;         // the cached datum is NaN: Hd = H(p_ref)
  double ref_geopotential_m_;      // H(p_ref) [m']
  double ref_slope_;               // R T_M(H(p_ref)) / (g0 p_ref) [m' Pa^-1]
  double ref_log_ratio_;           // ln(p_ref / P0)
  double datum_geopotential_m_;    // Hd [m']
  double datum_factor_;            // r0 / (r0 - Hd)
  double dh_dpref_follow_;         // ref_slope * Z'(H(p_ref)) [m Pa^-1] (datum NaN)
};

}  // namespace baroz

// References
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: eq. 18 (H <-> Z),
//   eqs. 33a/33b (layer pressure), Table 4 (layers).
