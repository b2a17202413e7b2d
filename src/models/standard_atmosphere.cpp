#include "baroz/models/standard_atmosphere.hpp"

#include <cmath>
#include <limits>

#include "baroz/core/constants.hpp"
#include "baroz/models/geopotential.hpp"

namespace baroz::ussa76 {

namespace {

constexpr double kG0 = constants::kG0;
constexpr double kR = constants::kRAir;  // R*/M0 [J kg^-1 K^-1]

// USSA76 Table 4: defining base altitudes H_b [m'] and lapse rates L_b [K/m'].
constexpr std::array<double, kLayerCount + 1> kBaseGeopotential = {
    0.0, 11000.0, 20000.0, 32000.0, 47000.0, 51000.0, 71000.0, 84852.0};
constexpr std::array<double, kLayerCount + 1> kLapseRate = {-0.0065, 0.0,     0.0010,  0.0028,
                                                            0.0,     -0.0028, -0.0020, 0.0};

// Per-layer coefficients derived from the table, so that each evaluation
// needs at most one log and one exp.
struct Derived {
  std::array<LayerBase, kLayerCount + 1> bases{};
  // Layer b with L != 0: P = P_b (T_b / T)^(g0/(R L)); its inverse uses
  // T / T_b = (P/P_b)^(-R L / g0). Isothermal: P = P_b exp(-(H - H_b) g0/(R T_b)).
  std::array<double, kLayerCount> pressure_exponent{};   // g0/(R L_b) (L != 0)
  std::array<double, kLayerCount> inverse_exponent{};    // -R L_b/g0 (L != 0)
  std::array<double, kLayerCount> scale_height{};        // R T_b/g0 [m'] (L == 0)
  std::array<double, kLayerCount> log_base_ratio{};      // ln(P_b/P0)
  std::array<double, kLayerCount> inverse_pressure{};    // 1/P_b [Pa^-1]
  std::array<double, kLayerCount> inverse_lapse_rate{};  // 1/L_b [m'/K] (L != 0)
  double max_pressure = 0.0;
};

// Pressure in layer b at altitude h (the layer formulas, also used beyond
// the layer's own altitude range for the extensions).
double pressure_in_layer(const Derived& d, int b, double h) {
  const LayerBase& base = d.bases[static_cast<std::size_t>(b)];
  const auto i = static_cast<std::size_t>(b);
  if (base.lapse_rate_k_m != 0.0) {
    const double t = base.temperature_k + base.lapse_rate_k_m * (h - base.geopotential_m);
    if (!(t > 0.0)) return std::numeric_limits<double>::quiet_NaN();
    // U.S. Standard Atmosphere 1976, eq. 33a
    return base.pressure_pa * std::pow(base.temperature_k / t, d.pressure_exponent[i]);
  }
  // U.S. Standard Atmosphere 1976, eq. 33b
  return base.pressure_pa * std::exp(-(h - base.geopotential_m) / d.scale_height[i]);
}

Derived build() {
  Derived d;
  double t = constants::kT0;
  double p = constants::kP0;
  for (std::size_t b = 0; b <= kLayerCount; ++b) {
    if (b > 0) {
      // Continuity of T_M and P at base b, from layer b-1.
      const double h_prev = kBaseGeopotential[b - 1];
      t = d.bases[b - 1].temperature_k + kLapseRate[b - 1] * (kBaseGeopotential[b] - h_prev);
      p = pressure_in_layer(d, static_cast<int>(b - 1), kBaseGeopotential[b]);
    }
    d.bases[b] = LayerBase{kBaseGeopotential[b], kLapseRate[b], t, p};
    if (b < kLayerCount) {
      const double l = kLapseRate[b];
      d.pressure_exponent[b] = l != 0.0 ? kG0 / (kR * l) : 0.0;
      d.inverse_exponent[b] = -kR * l / kG0;
      d.scale_height[b] = kR * t / kG0;
      d.log_base_ratio[b] = std::log(p / constants::kP0);
      d.inverse_pressure[b] = 1.0 / p;
      d.inverse_lapse_rate[b] = l != 0.0 ? 1.0 / l : 0.0;
    }
  }
  d.max_pressure = pressure_in_layer(d, 0, kMinGeopotentialM);
  return d;
}

const Derived& derived() {
  static const Derived d = build();
  return d;
}

// Layer whose formula applies at altitude h: b with H_b <= h < H_{b+1};
// layer 0 below sea level, layer 6 at and above 71 km'.
int layer_at_geopotential(double h) {
  int b = 0;
  while (b < kLayerCount - 1 && h >= kBaseGeopotential[static_cast<std::size_t>(b + 1)]) ++b;
  return b;
}

}  // namespace

const std::array<LayerBase, kLayerCount + 1>& layer_bases() {
  return derived().bases;
}

double min_pressure_pa() {
  return derived().bases[kLayerCount].pressure_pa;
}

double max_pressure_pa() {
  return derived().max_pressure;
}

bool pressure_in_range(double p_pa) {
  const Derived& d = derived();
  return p_pa >= d.bases[kLayerCount].pressure_pa && p_pa <= d.max_pressure;
}

double pressure_at(double h_m) {
  return pressure_in_layer(derived(), layer_at_geopotential(h_m), h_m);
}

double temperature_at(double h_m) {
  const LayerBase& base = derived().bases[static_cast<std::size_t>(layer_at_geopotential(h_m))];
  return base.temperature_k + base.lapse_rate_k_m * (h_m - base.geopotential_m);
}

double density_at(double h_m) {
  // U.S. Standard Atmosphere 1976, eq. 42: rho = P M0 / (R* T_M) = P / (R T_M).
  return pressure_at(h_m) / (kR * temperature_at(h_m));
}

Level level_at_pressure(double p_pa) {
  const Derived& d = derived();
  // Layer b with P_{b+1} < p <= P_b; layer 0 above P_1 (including p above
  // the valid range), layer 6 below P_6 (including p below the range).
  int b = 0;
  while (b < kLayerCount - 1 && p_pa < d.bases[static_cast<std::size_t>(b + 1)].pressure_pa) ++b;
  const auto i = static_cast<std::size_t>(b);
  const LayerBase& base = d.bases[i];
  const double x = std::log(p_pa * d.inverse_pressure[i]);  // ln(P/P_b)
  const double log_ratio = x + d.log_base_ratio[i];         // ln(P/P0)
  if (base.lapse_rate_k_m != 0.0) {
    // Eq. 33a solved for H: T_M/T_b = (P/P_b)^(-R L/g0), H = H_b + (T_M - T_b)/L.
    const double t = base.temperature_k * std::exp(d.inverse_exponent[i] * x);
    return Level{base.geopotential_m + (t - base.temperature_k) * d.inverse_lapse_rate[i], t,
                 log_ratio};
  }
  // Eq. 33b solved for H: H = H_b + (R T_b/g0) ln(P_b/P).
  return Level{base.geopotential_m - d.scale_height[i] * x, base.temperature_k, log_ratio};
}

double geopotential_at_pressure(double p_pa) {
  return level_at_pressure(p_pa).geopotential_m;
}

double temperature_at_pressure(double p_pa) {
  return level_at_pressure(p_pa).temperature_k;
}

double altimeter_geopotential(double p_pa, double qnh_pa) {
  // The altimeter relation (product specification, "Pinned details"): the
  // sub-scale shifts the standard pressure-altitude scale by H(QNH).
  return geopotential_at_pressure(p_pa) - geopotential_at_pressure(qnh_pa);
}

double altimeter_altitude(double p_pa, double qnh_pa) {
  return geometric_from_geopotential(altimeter_geopotential(p_pa, qnh_pa));  // eq. 18
}

}  // namespace baroz::ussa76
