// Humidity: saturation vapour pressure, vapour pressure from relative
// humidity, and the virtual temperature used by the `profile` height model.
//
// Saturation vapour pressure: the Magnus forms of WMO-No. 8 (CIMO Guide),
// Annex 4.B, with the WMO enhancement factor f(p) for moist air:
//   e_w = 6.112 hPa exp(17.62 t / (243.12 + t))       over water (eq. 4.B.1)
//   e_i = 6.112 hPa exp(22.46 t / (272.62 + t))       over ice   (eq. 4.B.3)
//   f(p) = 1.0016 + 3.15e-6 p - 0.074 / p             (p in hPa)
// with t the temperature in degC. The API takes and returns SI units
// (K, Pa); the hPa/degC forms are converted inside.
//
// Ranges of the published fits: water -45 ... +60 degC, ice -65 ... +0.01 degC
// (WMO-No. 8 Annex 4.B; the ice range from memory). Outside them the
// formulas are still evaluated, without error or clamping: the result is an
// extrapolation of the fit, e.g. about 0.5 % off the Hyland-Wexler
// formulation at 60 degC and growing beyond. Each formula has a pole where
// its denominator vanishes (water at t = -243.12 degC, i.e. T = 30.03 K; ice
// at t = -272.62 degC, T = 0.53 K) and means nothing at or below it. A NaN
// argument gives NaN.
//
// Relative humidity: by the WMO convention for hygrometers, relative humidity
// is reported with respect to water at every temperature, also below 0 degC
// (WMO-No. 8, Annex 4.B definitions; the citation from memory). So
// SaturationPhase::kWater is the right choice for RH logged by a hygrometer
// or radiosonde sensor, and it is the default. SaturationPhase::kIceBelowZero
// interprets RH below 0 degC as relative to ice (e = RH f e_i, the same f(p)
// as over water), for data known to be reported that way; at and above
// 0 degC both choices use water.
//
// Virtual temperature, exact form (no linearisation):
//   T_v = T / [1 - (e/p)(1 - eps)],  eps = M_w/M_d = constants::kEpsilon.
//
// All functions are pure, allocation-free and thread-safe.
#pragma once

namespace baroz {

/// Which saturation vapour pressure relative humidity refers to.
enum class SaturationPhase {
  kWater,         ///< over water at every temperature (WMO convention for RH)
  kIceBelowZero,  ///< over ice below 0 degC, over water at and above 0 degC
};

/// Saturation vapour pressure over plane water e_w [Pa] at `temperature_k`
/// [K]. Fit range 228.15 ... 333.15 K (-45 ... +60 degC); evaluated outside
/// it (see the file comment), meaningless at or below 30.03 K.
double saturation_vapour_pressure_water_pa(double temperature_k) noexcept;

/// Saturation vapour pressure over plane ice e_i [Pa] at `temperature_k`
/// [K]. Fit range 208.15 ... 273.16 K (-65 ... +0.01 degC); evaluated outside
/// it (see the file comment), meaningless at or below 0.53 K.
double saturation_vapour_pressure_ice_pa(double temperature_k) noexcept;

/// WMO enhancement factor f(p) [1] of moist air at total pressure
/// `pressure_pa` [Pa] (1.004676 at 1000 hPa, 1.001175 at 100 hPa). Meant for
/// p of about 10 ... 1100 hPa; p must be > 0 (the -0.074/p term diverges).
double enhancement_factor(double pressure_pa) noexcept;

/// Vapour pressure e [Pa] of moist air: e = (RH/100) f(p) e_s(T), with
/// `temperature_k` [K], `relative_humidity_pct` [%] (0 ... 100; values
/// outside are used as given, so a sensor's 100.4 % gives a slight
/// supersaturation and a negative value a negative e), `pressure_pa` [Pa]
/// (> 0) and e_s chosen by `phase`.
double vapour_pressure_pa(double temperature_k, double relative_humidity_pct, double pressure_pa,
                          SaturationPhase phase = SaturationPhase::kWater) noexcept;

/// Virtual temperature T_v [K] of air at `temperature_k` [K] with vapour
/// pressure `vapour_pressure_pa` [Pa] at total pressure `pressure_pa` [Pa]:
/// T_v = T / [1 - (e/p)(1 - eps)]. Valid for 0 <= e < p (e = 0 gives T
/// exactly); e >= p / (1 - eps) has no physical meaning.
double virtual_temperature_k(double temperature_k, double vapour_pressure_pa,
                             double pressure_pa) noexcept;

/// Virtual temperature T_v [K] from `temperature_k` [K],
/// `relative_humidity_pct` [%] and `pressure_pa` [Pa] (vapour_pressure_pa()
/// then virtual_temperature_k()). A NaN relative humidity means "unknown"
/// and returns `temperature_k` unchanged (dry air).
double virtual_temperature_from_rh_k(double temperature_k, double relative_humidity_pct,
                                     double pressure_pa,
                                     SaturationPhase phase = SaturationPhase::kWater) noexcept;

}  // namespace baroz

// References
// - WMO-No. 8, Guide to Instruments and Methods of Observation (CIMO Guide),
//   Vol. I, Annex 4.B (2008 ed. and later): eqs. 4.B.1 (water), 4.B.3 (ice),
//   the enhancement factor f(p), and the definition of relative humidity with
//   respect to water.
// - J. M. Wallace and P. V. Hobbs, Atmospheric Science: An Introductory
//   Survey, 2nd ed., 2006, section 3.1: virtual temperature.
// - shared/spec/reference-values.md, sections 4.1, 4.2, 4.4.
