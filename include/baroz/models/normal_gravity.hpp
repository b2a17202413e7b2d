// Gravity for the height models: WGS 84 normal gravity and the conversion
// between geopotential and geometric height, either the standard
// atmosphere's own (g0, r0; latitude-independent) or the meteorological one
// at a latitude (WGS 84 normal gravity with an effective Earth radius).
//
// Geopotential height H [m'] = Phi / g0 with g0 = 9.80665 m s^-2 (USSA76,
// modern WMO usage); geometric height Z [m] above the same level surface.
// With a surface gravity g and an effective radius R (gravity falling off as
// g R^2 / (R + Z)^2, the free-air gradient of a sphere of radius R):
//   H = (g / g0) R Z / (R + Z),      Z = g0 R H / (g R - g0 H).
// The standard frame has g = g0 and R = r0 = 6 356 766 m, which is
// USSA76 eq. 18 exactly.
#pragma once

#include <limits>

namespace baroz {

/// WGS 84 normal gravity on the ellipsoid [m s^-2] at geodetic latitude
/// `latitude_deg` [deg, -90..90] (Somigliana closed form, TR8350.2 eq. 4-1).
double wgs84_normal_gravity(double latitude_deg);

/// WGS 84 normal gravity [m s^-2] at ellipsoidal height `height_m` [m] above
/// the ellipsoid (second-order free-air series, TR8350.2 eq. 4-3; good to
/// ~1e-6 relative below 100 km).
double wgs84_normal_gravity(double latitude_deg, double height_m);

/// Effective Earth radius [m] at `latitude_deg`: the radius that makes
/// g R^2/(R+Z)^2 fall off with the normal free-air gradient,
/// R = a / (1 + f + m - 2 f sin^2 phi) (Mahoney 2001; note sin^2).
double wgs84_effective_radius(double latitude_deg);

/// One geopotential <-> geometric conversion (see the file comment).
/// Valid for -R < Z and H < g R / g0 (any atmosphere in practice).
class GravityFrame {
 public:
  /// The standard atmosphere's: g = g0, R = r0 (USSA76 eq. 18).
  static GravityFrame standard();
  /// At geodetic latitude `latitude_deg` [deg, -90..90]: g = WGS 84 normal
  /// gravity, R = the effective radius. Throws baroz::Error (usage) outside
  /// -90..90 or when not finite.
  static GravityFrame wgs84(double latitude_deg);

  bool is_standard() const { return standard_; }
  /// Latitude [deg]; NaN for the standard frame.
  double latitude_deg() const { return latitude_deg_; }
  /// Surface gravity g [m s^-2].
  double surface_gravity() const { return g_; }
  /// Effective radius R [m].
  double radius_m() const { return radius_m_; }

  /// H [m'] of geometric height `z_m` [m].
  double geopotential_from_geometric(double z_m) const {
    return ratio_ * radius_m_ * z_m / (radius_m_ + z_m);
  }
  /// Z [m] of geopotential height `h_m` [m'].
  double geometric_from_geopotential(double h_m) const {
    return radius_m_ * h_m / (ratio_ * radius_m_ - h_m);
  }
  /// dZ/dH [m/m'] at geopotential height `h_m`: ratio R^2 / (ratio R - H)^2
  /// with ratio = g/g0.
  double geometric_per_geopotential(double h_m) const {
    const double q = radius_m_ / (ratio_ * radius_m_ - h_m);
    return ratio_ * q * q;
  }
  /// Z(Hd + dH) - Z(Hd) [m] for the levels `datum_geopotential_m` + dH and
  /// `datum_geopotential_m` [m'], without cancellation:
  /// ratio R^2 dH / ((ratio R - Hd - dH)(ratio R - Hd)).
  double geometric_height_difference(double datum_geopotential_m,
                                     double delta_geopotential_m) const {
    const double below_datum = ratio_ * radius_m_ - datum_geopotential_m;
    const double below_level = below_datum - delta_geopotential_m;
    return ratio_ * (radius_m_ / below_level) * (radius_m_ / below_datum) * delta_geopotential_m;
  }

 private:
  GravityFrame(bool standard, double latitude_deg, double g, double radius_m);

  bool standard_ = true;
  double latitude_deg_ = std::numeric_limits<double>::quiet_NaN();
  double g_ = 0.0;
  double radius_m_ = 0.0;
  double ratio_ = 1.0;  // g / g0
};

}  // namespace baroz

// References
// - NIMA TR8350.2, Department of Defense World Geodetic System 1984, 3rd ed.
//   (2000): eq. 4-1 (Somigliana), eq. 4-3 (normal gravity above the
//   ellipsoid), Tables 3.1-3.4 (constants).
// - M. J. Mahoney, A discussion of various measures of altitude, JPL, 2001
//   (effective radius; H from Z at a latitude).
// - U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562: eq. 18.
