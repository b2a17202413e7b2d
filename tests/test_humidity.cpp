// Tests of the humidity functions: WMO-No. 8 saturation vapour pressure,
// enhancement factor, vapour pressure from RH and the virtual temperature.
#include <array>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "baroz/core/constants.hpp"
#include "baroz/models/humidity.hpp"

namespace {

using namespace baroz;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kC = constants::kZeroCelsius;  // degC -> K

double kelvin(double t_c) {
  return t_c + kC;
}

double rel_diff(double a, double b) {
  return std::fabs(a - b) / std::fabs(b);
}

// Hyland & Wexler 1983 saturation vapour pressure over water [Pa], T in K.
// Source: coefficients as printed in a Vaisala AWS user guide, via
// reference-values.md section 4.4 (S). An independent formulation (not a
// Magnus fit), written here only as the reference for the comparison.
double hyland_wexler_water_pa(double t_k) {
  return std::exp(-5800.2206 / t_k + 1.3914993 - 0.048640239 * t_k + 4.1764768e-5 * t_k * t_k -
                  1.4452093e-8 * t_k * t_k * t_k + 6.5459673 * std::log(t_k));
}

struct Row {
  double t_c;
  double value_hpa;
};

}  // namespace

TEST_CASE("saturation vapour pressure over water matches the WMO-No. 8 column",
          "[humidity]") {
  // Source: reference-values.md section 4.4, comparison table, column
  // "WMO-8 water" (R: WMO-No. 8 Annex 4.B eq. 4.B.1 evaluated in double
  // precision, printed to 4 decimals). Tolerance 1e-4 hPa.
  const std::array<Row, 9> rows = {{{-40, 0.1902},
                                    {-30, 0.5117},
                                    {-20, 1.2597},
                                    {-10, 2.8703},
                                    {0, 6.1120},
                                    {10, 12.2603},
                                    {20, 23.3260},
                                    {30, 42.3372},
                                    {40, 73.6746}}};
  for (const Row& row : rows) {
    INFO("t = " << row.t_c << " degC");
    CHECK(std::fabs(saturation_vapour_pressure_water_pa(kelvin(row.t_c)) / 100.0 -
                    row.value_hpa) <= 1e-4);
  }
  // Source: WMO-No. 8 eq. 4.B.1 at t = 0: the leading coefficient 6.112 hPa
  // exactly (reference-values.md section 4.4, S2).
  CHECK(saturation_vapour_pressure_water_pa(kC) == 611.2);
}

TEST_CASE("saturation vapour pressure over ice matches the WMO-No. 8 column", "[humidity]") {
  // Source: reference-values.md section 4.4, comparison table, column
  // "WMO-8 ice" (R: WMO-No. 8 Annex 4.B eq. 4.B.3, printed to 4 decimals).
  // Tolerance 1e-4 hPa.
  const std::array<Row, 5> rows = {
      {{-40, 0.1285}, {-30, 0.3802}, {-20, 1.0326}, {-10, 2.5987}, {0, 6.1120}}};
  for (const Row& row : rows) {
    INFO("t = " << row.t_c << " degC");
    CHECK(std::fabs(saturation_vapour_pressure_ice_pa(kelvin(row.t_c)) / 100.0 -
                    row.value_hpa) <= 1e-4);
  }
  // Source: Buck 1981 simple ice form 6.1115 exp(22.452 t/(272.55 + t)),
  // reference-values.md section 4.4 (S, coefficients): an independent fit
  // of the same quantity; column "Buck 81 ice" agrees with WMO to 1e-4 hPa
  // at -40 ... -10 degC, here checked to 0.1 % over -40 ... -1 degC.
  for (int t = -40; t <= -1; ++t) {
    INFO("t = " << t << " degC");
    const double buck_pa = 611.15 * std::exp(22.452 * t / (272.55 + t));
    CHECK(rel_diff(saturation_vapour_pressure_ice_pa(kelvin(t)), buck_pa) <= 1e-3);
  }
}

TEST_CASE("WMO-No. 8 water form agrees with Hyland-Wexler within 0.3 %", "[humidity]") {
  // Source: reference-values.md section 4.4, column "Hyland-Wexler" (R from
  // the Hyland & Wexler 1983 formulation): WMO-No. 8 eq. 4.B.1 is within
  // 0.3 % of it at -40 ... +40 degC (largest 0.29 % at +30 degC).
  const std::array<Row, 9> hw = {{{-40, 0.1905},
                                  {-30, 0.5106},
                                  {-20, 1.2563},
                                  {-10, 2.8656},
                                  {0, 6.1121},
                                  {10, 12.2800},
                                  {20, 23.3880},
                                  {30, 42.4603},
                                  {40, 73.8346}}};
  for (const Row& row : hw) {
    INFO("t = " << row.t_c << " degC");
    CHECK(rel_diff(saturation_vapour_pressure_water_pa(kelvin(row.t_c)) / 100.0,
                   row.value_hpa) <= 3e-3);
  }
  // The same bound between the table rows, against the Hyland-Wexler
  // formulation itself (coefficients: reference-values.md section 4.4, S),
  // every 0.5 K from -40 to +40 degC.
  for (int i = -80; i <= 80; ++i) {
    const double t_k = kelvin(0.5 * i);
    INFO("T = " << t_k << " K");
    CHECK(rel_diff(saturation_vapour_pressure_water_pa(t_k), hyland_wexler_water_pa(t_k)) <= 3e-3);
  }
  // The reference formulation reproduces its own printed column (guards the
  // transcription of the coefficients above): tolerance 1e-4 hPa.
  for (const Row& row : hw) {
    INFO("t = " << row.t_c << " degC");
    CHECK(std::fabs(hyland_wexler_water_pa(kelvin(row.t_c)) / 100.0 - row.value_hpa) <= 1e-4);
  }
}

TEST_CASE("saturation vapour pressure agrees with the steam-table values", "[humidity]") {
  // Source: vapour pressure of water, CRC Handbook of Chemistry and Physics
  // table (IAPWS-95 based), kPa — from memory: 0.6112 (0), 1.2282 (10),
  // 2.3393 (20), 3.1699 (25), 4.2470 (30), 7.3849 (40 degC). The Magnus fit
  // runs low by up to 0.31 % near 25 ... 30 degC against these
  // (reference-values.md section 4.4: "spread between formulas <= 0.3 %").
  // Tolerance 0.35 %.
  const std::array<Row, 6> crc = {
      {{0, 6.112}, {10, 12.282}, {20, 23.393}, {25, 31.699}, {30, 42.470}, {40, 73.849}}};
  for (const Row& row : crc) {
    INFO("t = " << row.t_c << " degC");
    CHECK(rel_diff(saturation_vapour_pressure_water_pa(kelvin(row.t_c)) / 100.0,
                   row.value_hpa) <= 3.5e-3);
  }
}

TEST_CASE("enhancement factor matches the WMO-No. 8 values", "[humidity]") {
  // Source: reference-values.md section 4.4: f(p) = 1.004676 at 1000 hPa,
  // 1.003027 at 500 hPa, 1.001175 at 100 hPa (R from WMO-No. 8 Annex 4.B).
  // Tolerance half a unit of the 6th decimal.
  CHECK(std::fabs(enhancement_factor(100000.0) - 1.004676) <= 5e-7);
  CHECK(std::fabs(enhancement_factor(50000.0) - 1.003027) <= 5e-7);
  CHECK(std::fabs(enhancement_factor(10000.0) - 1.001175) <= 5e-7);
}

TEST_CASE("vapour pressure and virtual temperature reproduce the worked examples",
          "[humidity]") {
  // Source: reference-values.md section 4.2, examples (R: e from WMO-No. 8
  // Magnus x f(p), T_v = T / [1 - (e/p)(1 - eps)]). Tolerance half a unit
  // of the last printed digit: 0.0005 hPa, 0.0005 K.
  {
    const double e = vapour_pressure_pa(kelvin(20.0), 50.0, 100000.0);
    CHECK(std::fabs(e / 100.0 - 11.718) <= 5e-4);
    CHECK(std::fabs(virtual_temperature_k(kelvin(20.0), e, 100000.0) - 294.454) <= 5e-4);
    CHECK(std::fabs(virtual_temperature_from_rh_k(kelvin(20.0), 50.0, 100000.0) - 294.454) <=
          5e-4);
  }
  {
    const double e = vapour_pressure_pa(kelvin(30.0), 100.0, 100000.0);
    CHECK(std::fabs(e / 100.0 - 42.535) <= 5e-4);
    CHECK(std::fabs(virtual_temperature_k(kelvin(30.0), e, 100000.0) - 308.104) <= 5e-4);
    CHECK(std::fabs(virtual_temperature_from_rh_k(kelvin(30.0), 100.0, 100000.0) - 308.104) <=
          5e-4);
  }
}

TEST_CASE("virtual temperature is close to the linearised form", "[humidity]") {
  // Source: reference-values.md section 4.2, T_v ~= T (1 + 0.378 e/p)
  // (W&H 2006 section 3.1, form from memory). The exact form's correction
  // T_v - T exceeds the linearised one by the relative amount ~0.378 e/p,
  // 1.6 % for saturated air at 30 degC and 1000 hPa.
  const double t = kelvin(30.0);
  const double p = 100000.0;
  const double e = 4253.5;
  const double exact = virtual_temperature_k(t, e, p);
  const double linear = t * (1.0 + 0.378 * e / p);
  CHECK(exact > linear);
  CHECK((exact - linear) / (exact - t) < 0.02);
}

TEST_CASE("dry air: zero or unknown humidity leaves the temperature unchanged", "[humidity]") {
  // Source: definition of T_v (W&H 2006 section 3.1): T_v = T when e = 0.
  for (const double t : {kelvin(-60.0), kelvin(0.0), kelvin(24.0)}) {
    CHECK(virtual_temperature_k(t, 0.0, 90000.0) == t);
    CHECK(virtual_temperature_from_rh_k(t, 0.0, 90000.0) == t);
    CHECK(virtual_temperature_from_rh_k(t, kNaN, 90000.0) == t);
    CHECK(virtual_temperature_from_rh_k(t, kNaN, 90000.0, SaturationPhase::kIceBelowZero) == t);
  }
  CHECK(vapour_pressure_pa(kelvin(15.0), 0.0, 101325.0) == 0.0);
  // Moist air is lighter: T_v > T for any e > 0.
  CHECK(virtual_temperature_from_rh_k(kelvin(15.0), 1.0, 101325.0) > kelvin(15.0));
  CHECK(std::isnan(saturation_vapour_pressure_water_pa(kNaN)));
}

TEST_CASE("the ice phase is used only below 0 degC and only when chosen", "[humidity]") {
  const double p = 50000.0;
  // Below 0 degC: kWater uses e_w, kIceBelowZero e_i (WMO-No. 8 Annex 4.B:
  // e' = f(p) e_s for both phases; e = RH/100 e').
  const double t = kelvin(-20.0);
  const double f = enhancement_factor(p);
  CHECK(rel_diff(vapour_pressure_pa(t, 60.0, p, SaturationPhase::kWater),
                 0.6 * f * saturation_vapour_pressure_water_pa(t)) <= 1e-15);
  CHECK(rel_diff(vapour_pressure_pa(t, 60.0, p, SaturationPhase::kIceBelowZero),
                 0.6 * f * saturation_vapour_pressure_ice_pa(t)) <= 1e-15);
  // Source: reference-values.md section 4.4: e_i < e_w below 0 degC
  // (1.0326 vs 1.2597 hPa at -20 degC).
  CHECK(vapour_pressure_pa(t, 60.0, p, SaturationPhase::kIceBelowZero) <
        vapour_pressure_pa(t, 60.0, p, SaturationPhase::kWater));
  // At and above 0 degC both choices are the same (water).
  for (const double tc : {0.0, 0.5, 20.0}) {
    CHECK(vapour_pressure_pa(kelvin(tc), 60.0, p, SaturationPhase::kIceBelowZero) ==
          vapour_pressure_pa(kelvin(tc), 60.0, p, SaturationPhase::kWater));
  }
  // Source: WMO-No. 8 eqs. 4.B.1 and 4.B.3 share the coefficient 6.112 hPa,
  // so both forms meet at 0 degC (reference-values.md section 4.4, row 0).
  CHECK(saturation_vapour_pressure_ice_pa(kC) == saturation_vapour_pressure_water_pa(kC));
}

TEST_CASE("epsilon is the molar-mass ratio of water vapour and dry air", "[humidity]") {
  // Source: reference-values.md section 4.1: eps = 0.62198 with 18.01528 /
  // 28.9644 (R); W&H 2006 give 0.622 (M). 1 - eps = 0.37802 (section 4.2).
  CHECK(std::fabs(constants::kEpsilon - 0.62198) <= 5e-6);
  CHECK(std::fabs((1.0 - constants::kEpsilon) - 0.37802) <= 5e-6);
}
