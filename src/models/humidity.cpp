#include "baroz/models/humidity.hpp"

#include <cmath>

#include "baroz/core/constants.hpp"

namespace baroz {

namespace {

// Magnus coefficients of WMO-No. 8 Annex 4.B (t in degC, e in hPa).
constexpr double kMagnusE0Pa = 611.2;  // 6.112 hPa, both phases
constexpr double kWaterB = 17.62;
constexpr double kWaterC = 243.12;  // [degC]
constexpr double kIceB = 22.46;
constexpr double kIceC = 272.62;  // [degC]

constexpr double kPaPerHpa = 100.0;

}  // namespace

double saturation_vapour_pressure_water_pa(double temperature_k) noexcept {
  const double t = temperature_k - constants::kZeroCelsius;
  return kMagnusE0Pa * std::exp(kWaterB * t / (kWaterC + t));  // WMO-No. 8, eq. 4.B.1
}

double saturation_vapour_pressure_ice_pa(double temperature_k) noexcept {
  const double t = temperature_k - constants::kZeroCelsius;
  return kMagnusE0Pa * std::exp(kIceB * t / (kIceC + t));  // WMO-No. 8, eq. 4.B.3
}

double enhancement_factor(double pressure_pa) noexcept {
  const double p_hpa = pressure_pa / kPaPerHpa;
  return 1.0016 + 3.15e-6 * p_hpa - 0.074 / p_hpa;  // WMO-No. 8, Annex 4.B, f(p)
}

double vapour_pressure_pa(double temperature_k, double relative_humidity_pct, double pressure_pa,
                          SaturationPhase phase) noexcept {
  const bool over_ice =
      phase == SaturationPhase::kIceBelowZero && temperature_k < constants::kZeroCelsius;
  const double saturation = over_ice ? saturation_vapour_pressure_ice_pa(temperature_k)
                                     : saturation_vapour_pressure_water_pa(temperature_k);
  // WMO-No. 8, Annex 4.B: e' = f(p) e_s, and e = (U/100) e' (U in %).
  return relative_humidity_pct / 100.0 * enhancement_factor(pressure_pa) * saturation;
}

double virtual_temperature_k(double temperature_k, double vapour_pressure_pa,
                             double pressure_pa) noexcept {
  // Wallace & Hobbs 2006, section 3.1: T_v = T / [1 - (e/p)(1 - eps)]
  return temperature_k / (1.0 - vapour_pressure_pa / pressure_pa * (1.0 - constants::kEpsilon));
}

double virtual_temperature_from_rh_k(double temperature_k, double relative_humidity_pct,
                                     double pressure_pa, SaturationPhase phase) noexcept {
  if (std::isnan(relative_humidity_pct)) return temperature_k;  // unknown humidity: dry air
  return virtual_temperature_k(
      temperature_k, vapour_pressure_pa(temperature_k, relative_humidity_pct, pressure_pa, phase),
      pressure_pa);
}

}  // namespace baroz
