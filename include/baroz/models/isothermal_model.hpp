// The `isothermal` height model: the hypsometric equation with one
// temperature for the whole column.
//
// Geopotential height above the reference [m']:
//   dH = (R* T / (g0 M0)) ln(p_ref / p) = (R T / g0) ln(p_ref / p)
// with T = ref.temperature_k (IsothermalTemperature::kReference) or the mean
// (ref.temperature_k + sample temperature)/2 (kMean). Geometric height:
// h = Z(Hd + dH) - Z(Hd) [m] (USSA76 eq. 18), Hd = ref.datum_geopotential_m,
// or the standard atmosphere's H(p_ref) when that is NaN.
//
// Partial derivatives (of the geometric height; Z' = dZ/dH = r0^2/(r0-H)^2,
// T the temperature used):
// - dh_dp      = -(R T / (g0 p)) Z'(Hd + dH).
// - dh_dpref   = +(R T / (g0 p_ref)) Z'(Hd + dH), plus, when the datum is NaN
//   (Hd = H_std(p_ref) moves with p_ref), dHd/dp_ref (Z'(Hd + dH) - Z'(Hd))
//   with dHd/dp_ref = -R T_M(Hd) / (g0 p_ref) (a term of relative size ~3e-7
//   per km of height; included so the derivative is exact).
// - dh_dt      = (dH / T) Z'(Hd + dH): for kReference the derivative with
//   respect to ref.temperature_k; for kMean with respect to a common offset
//   of both temperatures (which moves their mean by the same amount).
// - dh_dt_random: random (independent) errors of unit sigma (GUM JCGM
//   100:2008 eq. 10), N = ref.temperature_samples the samples T_ref is the
//   mean of (0: T_ref has no random error). kReference: |dh_dt| / sqrt(N)
//   (0 for N = 0). kMean: dh/dT_ref = dh/dT_sample = dh_dt / 2, the sample
//   one sample, so |dh_dt| sqrt(1/4 + 1/(4N)) (|dh_dt| / 2 for N = 0).
// - dh_dtmodel = 0.
//
// Valid: p > 0 and p_ref > 0 finite, T > 0 (else valid = false with a
// reason); no altitude limit except Hd + dH < r0/2 (3178 km', far beyond any
// atmosphere; it keeps clear of the conversion's singularity at r0).
//
// Cost: one log and two divisions per sample; the reference terms (with
// H_std(p_ref) when the datum is NaN) are cached while p_ref and the datum
// are unchanged between calls. No allocation; not thread-safe (cache).
#pragma once

#include "baroz/models/height_model.hpp"

namespace baroz {

/// Which temperature the isothermal model uses.
enum class IsothermalTemperature {
  kReference,  ///< the reference (ground) temperature
  kMean,       ///< mean of the reference and the sample temperature
};

class IsothermalModel final : public HeightModel {
 public:
  static constexpr std::string_view kReasonNoSampleTemperature = "no temperature for this sample";
  static constexpr std::string_view kReasonNoReferenceTemperature =
      "no usable reference temperature";
  static constexpr std::string_view kReasonPressure = "pressure not positive";
  static constexpr std::string_view kReasonReferencePressure = "reference pressure not positive";
  static constexpr std::string_view kReasonTemperature =
      "mean of reference and sample temperature not positive";
  static constexpr std::string_view kReasonTooHigh =
      "height beyond the geopotential-to-geometric conversion";

  explicit IsothermalModel(IsothermalTemperature temperature = IsothermalTemperature::kReference);

  ModelKind kind() const override { return ModelKind::kIsothermal; }
  bool needs_sample_temperature() const override {
    return temperature_ == IsothermalTemperature::kMean;
  }
  IsothermalTemperature temperature_choice() const { return temperature_; }
  /// `pressure_pa` [Pa]; `temperature_k` [K] (used by kMean only; NaN when
  /// unknown); `ref` as in the file comment.
  HeightEval evaluate(double pressure_pa, double temperature_k, const ReferencePoint& ref) override;

 private:
  void update_reference(double p_ref_pa, double datum_geopotential_m);

  IsothermalTemperature temperature_;
  // Everything that depends only on p_ref and the datum, valid while they
  // stay the same between calls.
  double cached_ref_pressure_pa_;  // p_ref of the cache (NaN: empty)
  double cached_datum_m_;          // ref.datum_geopotential_m of the cache (may be NaN)
  bool datum_follows_ref_;         // the cached datum is NaN: Hd = H_std(p_ref)
  double inverse_ref_pressure_;    // 1 / p_ref [Pa^-1]
  double datum_geopotential_m_;    // Hd [m']
  double datum_factor_;            // r0 / (r0 - Hd)
  double datum_slope_;             // dHd/dp_ref = -R T_M(Hd) / (g0 p_ref) (datum NaN), else 0
};

}  // namespace baroz

// References
// - J. M. Wallace and P. V. Hobbs, Atmospheric Science, 2nd ed., 2006,
//   eq. 3.29-3.30 (hypsometric equation; numbering from memory).
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: eq. 18 (H <-> Z),
//   constants R*, M0, g0.
