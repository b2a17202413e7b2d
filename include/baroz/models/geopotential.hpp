// Geometric <-> geopotential altitude of the standard atmosphere
// (latitude-independent, effective Earth radius r0 = constants::kR0).
//
// Geopotential altitude H is in geopotential metres m' (1 m' = g0 x 1 m of
// geopotential, USSA76 Gamma = 1 m'/m); geometric altitude Z is in metres.
// These functions are the standard atmosphere's own conversion; the
// latitude-dependent meteorological conversion (WGS 84 gravity) is elsewhere.
//
// The functions are inline (the height models call them for every sample).
#pragma once

#include "baroz/core/constants.hpp"

namespace baroz {

/// Geopotential altitude H [m'] of geometric altitude `z_m` [m]:
/// H = r0 Z / (r0 + Z). Valid for Z > -r0 (any altitude in practice).
constexpr double geopotential_from_geometric(double z_m) {
  return constants::kR0 * z_m / (constants::kR0 + z_m);  // U.S. Standard Atmosphere 1976, eq. 18
}

/// Geometric altitude Z [m] of geopotential altitude `h_m` [m']:
/// Z = r0 H / (r0 - H). Valid for H < r0 (any altitude in practice).
constexpr double geometric_from_geopotential(double h_m) {
  return constants::kR0 * h_m / (constants::kR0 - h_m);  // USSA76 eq. 18, inverted
}

/// Derivative dZ/dH [m/m'] at geopotential altitude `h_m` [m']:
/// r0^2 / (r0 - H)^2 (1 at sea level, 1.0027 at 8.5 km', 1.0272 at 84.852 km').
/// Valid for H < r0.
constexpr double geometric_per_geopotential(double h_m) {
  const double q = constants::kR0 / (constants::kR0 - h_m);  // d/dH of eq. 18 inverted
  return q * q;
}

/// Geometric height difference Z(Hd + dH) - Z(Hd) [m] between the
/// geopotential levels `datum_geopotential_m` + `delta_geopotential_m` and
/// `datum_geopotential_m` [m'], computed without cancellation as
/// r0^2 dH / ((r0 - Hd - dH)(r0 - Hd)) (eq. 18 subtracted exactly).
/// Valid while both levels are below r0.
constexpr double geometric_height_difference(double datum_geopotential_m,
                                             double delta_geopotential_m) {
  const double below_datum = constants::kR0 - datum_geopotential_m;
  const double below_level = below_datum - delta_geopotential_m;
  return (constants::kR0 / below_level) * (constants::kR0 / below_datum) * delta_geopotential_m;
}

}  // namespace baroz

// References
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562 (= NASA-TM-X-74335),
//   eq. 18: H = Gamma r0 Z / (r0 + Z) with Gamma = 1 m'/m, r0 = 6 356 766 m.
