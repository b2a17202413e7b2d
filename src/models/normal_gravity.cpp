#include "baroz/models/normal_gravity.hpp"

#include <cmath>
#include <numbers>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"

namespace baroz {
namespace {

using namespace constants;

constexpr double kFlattening = 1.0 / kWgs84InvF;

double sin2_latitude(double latitude_deg) {
  const double s = std::sin(latitude_deg * std::numbers::pi / 180.0);
  return s * s;
}

}  // namespace

double wgs84_normal_gravity(double latitude_deg) {
  const double s2 = sin2_latitude(latitude_deg);
  // NIMA TR8350.2 eq. 4-1 (Somigliana).
  return kWgs84GammaE * (1.0 + kWgs84K * s2) / std::sqrt(1.0 - kWgs84E2 * s2);
}

double wgs84_normal_gravity(double latitude_deg, double height_m) {
  const double s2 = sin2_latitude(latitude_deg);
  const double a = kWgs84A;
  // NIMA TR8350.2 eq. 4-3.
  return wgs84_normal_gravity(latitude_deg) *
         (1.0 - (2.0 / a) * (1.0 + kFlattening + kWgs84M - 2.0 * kFlattening * s2) * height_m +
          (3.0 / (a * a)) * height_m * height_m);
}

double wgs84_effective_radius(double latitude_deg) {
  const double s2 = sin2_latitude(latitude_deg);
  // Mahoney (2001): R = a / (1 + f + m - 2 f sin^2 phi).
  return kWgs84A / (1.0 + kFlattening + kWgs84M - 2.0 * kFlattening * s2);
}

GravityFrame::GravityFrame(bool standard, double latitude_deg, double g, double radius_m)
    : standard_(standard),
      latitude_deg_(latitude_deg),
      g_(g),
      radius_m_(radius_m),
      ratio_(g / kG0) {}

GravityFrame GravityFrame::standard() {
  return GravityFrame(true, std::numeric_limits<double>::quiet_NaN(), kG0, kR0);
}

GravityFrame GravityFrame::wgs84(double latitude_deg) {
  if (!(std::isfinite(latitude_deg) && latitude_deg >= -90.0 && latitude_deg <= 90.0))
    throw usage_error(fmt::format("latitude {} is outside -90 to 90 degrees", latitude_deg));
  return GravityFrame(false, latitude_deg, wgs84_normal_gravity(latitude_deg),
                      wgs84_effective_radius(latitude_deg));
}

}  // namespace baroz
