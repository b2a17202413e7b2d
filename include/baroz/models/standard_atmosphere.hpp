// The U.S. Standard Atmosphere 1976 (USSA76) from -5 km' to 84.852 km'
// geopotential: pressure, molecular-scale temperature and density as
// functions of geopotential altitude, and the closed-form inverse
// (pressure -> geopotential altitude) that the height models use.
//
// Namespace baroz::ussa76. All quantities SI: pressure Pa, temperature K,
// density kg m^-3, geopotential altitude H in geopotential metres m'
// (see geopotential.hpp for the conversion to geometric metres).
//
// The seven layers are defined by their base altitude H_b and lapse rate L_b
// (USSA76 Table 4) and the sea-level values P0, T0 (constants.hpp). The base
// temperatures T_b and base pressures P_b are derived once, at first use, by
// continuity of the layer formulas (eqs. 33a, 33b); no derived value is
// hard-coded. The standard's own constants are used throughout (R* = 8.31432,
// M0 = 28.9644 g/mol, g0 = 9.80665), identical to ICAO/ISA up to 32 km.
//
// Valid range: kMinGeopotentialM = -5000 m' (layer 0 extended downwards; the
// standard's Table I itself starts at -5 km, from memory) to
// kMaxGeopotentialM = 84852 m',
// i.e. pressures from min_pressure_pa() = P(84852 m') = 0.37338 Pa to
// max_pressure_pa() = P(-5000 m') = 177 687 Pa (1776.87 hPa). Outside it the
// functions extend the nearest layer's formula (layer 0 below, layer 6
// above) and return its value (NaN where the extended temperature would not
// be positive); whether such a value is acceptable is the caller's decision
// (pressure_in_range()).
#pragma once

#include <array>

namespace baroz::ussa76 {

/// Number of layers with a lapse rate (bases b = 0..6); base 7 is the top.
inline constexpr int kLayerCount = 7;

/// Lower end of the valid range, geopotential altitude [m'].
inline constexpr double kMinGeopotentialM = -5000.0;
/// Upper end of the valid range, geopotential altitude [m'] (USSA76 Table 4, H_7).
inline constexpr double kMaxGeopotentialM = 84852.0;

/// One layer base of USSA76 Table 4.
struct LayerBase {
  double geopotential_m;  ///< H_b [m'] (defining)
  double lapse_rate_k_m;  ///< L_b = dT_M/dH [K/m'] (defining; 0 for the top base 7)
  double temperature_k;   ///< T_M,b [K] (derived by continuity from T0 and L)
  double pressure_pa;     ///< P_b [Pa] (derived by eqs. 33a/33b from P0)
};

/// The eight layer bases b = 0..7 (7 is the top of the range, 84.852 km').
const std::array<LayerBase, kLayerCount + 1>& layer_bases();

/// Pressure at the bottom of the valid range, P(kMaxGeopotentialM) [Pa]
/// (= P_7, 0.37338 Pa).
double min_pressure_pa();
/// Pressure at the top of the valid range, P(kMinGeopotentialM) [Pa]
/// (177 687 Pa).
double max_pressure_pa();
/// Whether min_pressure_pa() <= p_pa <= max_pressure_pa() (false for NaN).
bool pressure_in_range(double p_pa);

/// Pressure [Pa] at geopotential altitude `h_m` [m'] (USSA76 eqs. 33a, 33b).
double pressure_at(double h_m);
/// Molecular-scale temperature T_M [K] at `h_m` [m'] (T_M = T_b + L_b (H - H_b)).
/// Equals the kinetic temperature below 80 km geometric.
double temperature_at(double h_m);
/// Density [kg m^-3] at `h_m` [m'] (USSA76 eq. 42, rho = P M0 / (R* T_M)).
double density_at(double h_m);

/// A standard-atmosphere level found from its pressure.
struct Level {
  double geopotential_m;      ///< H [m']
  double temperature_k;       ///< T_M at H [K]
  double log_pressure_ratio;  ///< ln(p / P0), P0 = 101325 Pa [1]
};
/// Geopotential altitude, T_M and ln(p/P0) of pressure `p_pa` [Pa] (> 0),
/// with one log (and one exp in a layer with a lapse rate): the closed-form
/// inverse of eqs. 33a/33b in the layer found by comparing `p_pa` with the
/// base pressures.
Level level_at_pressure(double p_pa);
/// Geopotential altitude [m'] of pressure `p_pa` [Pa] (> 0).
double geopotential_at_pressure(double p_pa);
/// Molecular-scale temperature [K] at the level of pressure `p_pa` [Pa] (> 0).
double temperature_at_pressure(double p_pa);

/// The altimeter relation with sub-scale setting `qnh_pa` [Pa]: the
/// geopotential altitude [m'] an altimeter set to QNH indicates at pressure
/// `p_pa` [Pa], H(p) - H(QNH). This equals the ICAO QNH reduction
/// QNH = P0 [(p/P0)^n + L h / T0]^(1/n) solved for h. Both pressures > 0.
double altimeter_geopotential(double p_pa, double qnh_pa);
/// The same altitude as geometric altitude above mean sea level [m]:
/// Z(H(p) - H(QNH)) (USSA76 eq. 18 with the column based at MSL).
double altimeter_altitude(double p_pa, double qnh_pa);

}  // namespace baroz::ussa76

// References
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562 (= NASA-TM-X-74335),
//   U.S. GPO: Table 4 (H_b, L_b), eq. 18 (H <-> Z), eqs. 33a/33b (pressure),
//   eq. 42 (density); Table I (check values).
// - ICAO Doc 8400 (PANS-ABC), QNH definition (altimeter relation).
