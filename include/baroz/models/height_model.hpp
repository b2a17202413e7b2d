// The height-model stage: pressure (and temperature) -> height above the
// reference, with the partial derivatives the uncertainty stage needs.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string_view>

namespace baroz {

/// The reference the model measures from, at one sample's time. The
/// reference manager produces one per sample (constant for a fixed reference,
/// time-varying for a base station or a drift correction).
struct ReferencePoint {
  double pressure_pa = 0.0;     ///< reference (ground) pressure p_ref [Pa]
  double temperature_k = 0.0;   ///< reference (ground) air temperature [K]
  /// Geopotential altitude of the reference level above MSL [m'], used only
  /// to place the column in the gravity field for the geopotential ->
  /// geometric conversion (USSA76 eq. 18). NaN: the model uses the standard
  /// atmosphere's altitude of p_ref.
  double datum_geopotential_m = 0.0;
  /// Number of temperature samples temperature_k is the mean of (the
  /// reference window's), for the random part of the temperature error;
  /// 0: temperature_k is not from samples (e.g. given on the command line,
  /// or the standard 288.15 K) and has no random error.
  std::uint32_t temperature_samples = 0;
};

/// What a model gives for one sample. Heights are metres above the reference
/// level; derivatives are of the geometric height.
struct HeightEval {
  double height_m = 0.0;          ///< geometric height above the reference [m]
  double geopotential_m = 0.0;    ///< geopotential height above the reference [m']
  double dh_dp = 0.0;             ///< d height / d p        [m Pa^-1]
  double dh_dpref = 0.0;          ///< d height / d p_ref    [m Pa^-1]
  double dh_dt = 0.0;             ///< d height / d T (measured or reference) [m K^-1]
  double dh_dtmodel = 0.0;        ///< d height / d (uniform offset of the model's temperature profile) [m K^-1]
  /// Random (per-sample, independent) temperature errors of unit sigma
  /// [K] give this 1-sigma height error [m K^-1]: sqrt(sum_i (dh/dT_i)^2 / n_i)
  /// over the temperatures T_i the height uses, each the mean (or median) of
  /// n_i samples (docs/uncertainty.md). 0 when the model uses no measured
  /// temperature.
  double dh_dt_random = 0.0;
  /// d height / d (one common shift of every pressure the model's
  /// temperature profile is placed at) [m Pa^-1]: nonzero only for a profile
  /// whose pressures come from the sample's own sensor, whose absolute
  /// offset then moves the profile too (ProfileModel::set_profile_from_sensor).
  double dh_dpprofile = 0.0;
  bool extrapolated = false;      ///< evaluated outside the model's valid range
  bool valid = true;              ///< false: the model cannot give a height (see reason)
  std::string_view reason;        ///< why not valid, e.g. "pressure below the standard atmosphere's range"
};

/// The height models. Names pinned by the product specification.
enum class ModelKind { kIsothermal, kStandard, kProfile, kAuto };
/// The pinned name: "isothermal", "standard", "profile" or "auto".
std::string_view model_name(ModelKind kind);
/// The kind of a pinned name (exact, lower-case match); nullopt otherwise.
std::optional<ModelKind> parse_model_name(std::string_view name);

/// A height model. One instance per run (instances may cache and are not
/// shared between threads).
class HeightModel {
 public:
  virtual ~HeightModel() = default;
  virtual ModelKind kind() const = 0;
  /// Whether the model needs a per-sample temperature (rows without one are
  /// then rejected).
  virtual bool needs_sample_temperature() const = 0;
  /// Height of a sample of pressure `pressure_pa` [Pa] and air temperature
  /// `temperature_k` [K] (NaN when unknown) above `ref`.
  virtual HeightEval evaluate(double pressure_pa, double temperature_k,
                              const ReferencePoint& ref) = 0;
  /// As evaluate(), but only height_m, geopotential_m, valid, reason and
  /// extrapolated need be filled (the Monte Carlo runs, one per run and
  /// row). A model whose derivatives cost extra work skips it here.
  virtual HeightEval evaluate_height(double pressure_pa, double temperature_k,
                                     const ReferencePoint& ref) {
    return evaluate(pressure_pa, temperature_k, ref);
  }
};

}  // namespace baroz
