// Physical constants used by baroz, each with its unit and published source.
//
// Every other file takes its constants from here; none re-declares a value.
#pragma once

namespace baroz::constants {

// ---- U.S. Standard Atmosphere 1976 (USSA76), identical to ICAO/ISO to 32 km.
// Source: U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562, Table 2 and
// Table 4; ICAO Doc 7488/3 Table A.

/// Standard acceleration of gravity g0 [m s^-2] (exact by definition).
inline constexpr double kG0 = 9.80665;
/// Universal gas constant R* as adopted by USSA76 [J mol^-1 K^-1].
/// (Not the CODATA value: the standard's tables are built on this one.)
inline constexpr double kRStar = 8.31432;
/// Sea-level mean molar mass of air M0 [kg mol^-1] (USSA76: 28.9644 kg/kmol).
inline constexpr double kM0 = 28.9644e-3;
/// Specific gas constant of dry air R = R*/M0 [J kg^-1 K^-1] (= 287.05307).
inline constexpr double kRAir = kRStar / kM0;
/// Effective Earth radius for the geopotential <-> geometric conversion
/// r0 [m] (USSA76 eq. 18).
inline constexpr double kR0 = 6356766.0;
/// Sea-level standard pressure P0 [Pa].
inline constexpr double kP0 = 101325.0;
/// Sea-level standard temperature T0 [K].
inline constexpr double kT0 = 288.15;
/// Sea-level standard density rho0 [kg m^-3] (USSA76 Table I).
inline constexpr double kRho0 = 1.2250;

// ---- Water vapour (for the virtual temperature).
/// Molar mass of water M_w [kg mol^-1] (18.01528 g/mol; from memory, the
/// value used with M0 = 28.9644 g/mol in reference-values.md section 4.1).
inline constexpr double kMWater = 18.01528e-3;
/// Ratio epsilon = M_w / M_d = R_d / R_v [1] of water vapour to dry air,
/// with M_d = kM0 (USSA76): 0.62198 (Wallace & Hobbs 2006, section 3.1,
/// give the rounded 0.622; reference-values.md section 4.1).
inline constexpr double kEpsilon = kMWater / kM0;

// ---- Temperature scale.
/// 0 degC in kelvin [K] (ITS-90 definition of the Celsius scale).
inline constexpr double kZeroCelsius = 273.15;
/// 0 degC on the Fahrenheit scale [degF] (exact: t/degF = 1.8 t/degC + 32,
/// NIST SP 811, B.9).
inline constexpr double kZeroCelsiusInFahrenheit = 32.0;
/// Size of one degree Fahrenheit [K] (exact: 1 degF = 5/9 K, NIST SP 811, B.9).
inline constexpr double kKelvinPerFahrenheit = 5.0 / 9.0;

// ---- Exact unit definitions (SI Brochure, 9th ed.; NIST SP 811 App. B).
/// International foot [m] (exact, 1959 international yard and pound agreement).
inline constexpr double kFoot = 0.3048;
/// Inch of mercury (conventional, 0 degC) [Pa] (NIST SP 811, B.8).
inline constexpr double kInHg = 3386.389;
/// Millimetre of mercury (conventional) [Pa] (NIST SP 811, B.8: 133.3224).
inline constexpr double kMmHg = 133.322387415;
/// Pound-force per square inch [Pa] (NIST SP 811, B.8: 6.894 757 E+03).
inline constexpr double kPsi = 6894.757293168361;
/// Standard atmosphere (unit) [Pa] (exact, CGPM 1954).
inline constexpr double kAtm = 101325.0;
/// Bar [Pa] (exact).
inline constexpr double kBar = 1.0e5;

// ---- WGS 84 ellipsoid and normal gravity.
// Source: NIMA TR8350.2, Department of Defense World Geodetic System 1984,
// 3rd ed. (2000), Tables 3.1 and 3.3.
inline constexpr double kWgs84A = 6378137.0;                  ///< semi-major axis [m]
inline constexpr double kWgs84InvF = 298.257223563;           ///< 1/f
inline constexpr double kWgs84GammaE = 9.7803253359;          ///< normal gravity, equator [m s^-2]
inline constexpr double kWgs84GammaP = 9.8321849378;          ///< normal gravity, pole [m s^-2]
inline constexpr double kWgs84K = 0.00193185265241;           ///< Somigliana k
inline constexpr double kWgs84E2 = 6.69437999014e-3;          ///< first eccentricity squared
inline constexpr double kWgs84M = 0.00344978650684;           ///< omega^2 a^2 b / GM

}  // namespace baroz::constants
