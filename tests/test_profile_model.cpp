// Tests of the `profile` height model: the temperature profile and its
// hypsometric integration, the builder that makes a profile from a log, and
// the height model with its derivatives.
#include <algorithm>
#include <catch2/catch.hpp>
#include <charconv>
#include <cmath>
#include <cstddef>
#include <cstdlib>
#include <fstream>
#include <limits>
#include <map>
#include <optional>
#include <random>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/isothermal_model.hpp"
#include "baroz/models/normal_gravity.hpp"
#include "baroz/models/profile_model.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/models/standard_model.hpp"
#include "baroz/models/temperature_profile.hpp"

// Measured errors, printed when BAROZ_TEST_REPORT is set in the environment.
#define REPORT(msg)                                \
  do {                                             \
    if (std::getenv("BAROZ_TEST_REPORT")) WARN(msg); \
  } while (false)

namespace {

using namespace baroz;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kRPerG0 = constants::kRAir / constants::kG0;

double rel_diff(double a, double b) {
  return std::fabs(a - b) / std::fabs(b);
}

// ---- Reference data files (format of tests/reference/*.txt: '#' comments,
// "tolerance NAME VALUE" lines, whitespace-separated rows).
struct DataFile {
  std::map<std::string, double> tolerance;
  std::vector<std::vector<std::string>> rows;
};

double to_double(const std::string& field) {
  double value = 0.0;
  const char* first = field.data();
  const char* last = first + field.size();
  if (!field.empty() && *first == '+') ++first;
  const auto [ptr, ec] = std::from_chars(first, last, value);
  if (ec != std::errc() || ptr != last) FAIL("not a number in a reference file: " << field);
  return value;
}

DataFile read_data_file(const std::string& name) {
  const std::string path = std::string(BAROZ_TEST_DATA_DIR) + "/reference/" + name;
  std::ifstream in(path);
  if (!in) FAIL("cannot open " << path);
  DataFile file;
  std::string line;
  while (std::getline(in, line)) {
    if (const auto hash = line.find('#'); hash != std::string::npos) line.erase(hash);
    std::istringstream fields(line);
    std::vector<std::string> row;
    for (std::string f; fields >> f;) row.push_back(f);
    if (row.empty()) continue;
    if (row[0] == "tolerance") {
      REQUIRE(row.size() == 3);
      file.tolerance[row[1]] = to_double(row[2]);
    } else {
      file.rows.push_back(row);
    }
  }
  REQUIRE_FALSE(file.rows.empty());
  return file;
}

// ---- The 1976 standard temperature profile as nodes every `step_m` m'
// from -1000 m' to `top_m`, T = the standard's own T_M(H), T_v = T.
TemperatureProfile standard_profile(double step_m, double top_m) {
  std::vector<ProfileNode> nodes;
  for (double h = -1000.0; h <= top_m + 1e-9; h += step_m) {
    nodes.push_back(ProfileNode{ussa76::pressure_at(h), ussa76::temperature_at(h), kNaN});
  }
  return TemperatureProfile(nodes);
}

// Leading-order discretisation error [m'] of the trapezoid rule in ln p for
// the standard profile between the node spacing `step_m` from 0 to `h_m`
// (docs/profile-model.md): sum over the spacing of (L dH / T)^2 dH / 12,
// plus 1.5 such terms for a partial segment.
double standard_discretisation_bound(double step_m, double h_m) {
  double bound = 0.0;
  for (double h = 0.0; h < h_m; h += step_m) {
    const double mid = h + 0.5 * step_m;
    const auto& bases = ussa76::layer_bases();
    double lapse = 0.0;
    for (std::size_t b = 0; b + 1 < bases.size(); ++b) {
      if (mid >= bases[b].geopotential_m) lapse = bases[b].lapse_rate_k_m;
    }
    const double x = lapse * step_m / ussa76::temperature_at(mid);
    bound += x * x * step_m / 12.0 * (h + step_m > h_m ? 1.5 : 1.0);
  }
  return bound;
}

// ---- A synthetic non-standard atmosphere, integrated independently of the
// code under test: RK4 in geometric height z of the hydrostatic equation
// dp/dz = -p g(z) / (R T_v(z)) with g(z) = g0 (r0 / (r0 + z))^2, the gravity
// for which the geopotential is exactly the standard frame's
// H = r0 z / (r0 + z) (USSA76 eq. 18).
constexpr int kSyntheticTopM = 35000;
constexpr double kGroundPressurePa = 100500.0;

// Air temperature [K] at geometric height z [m]: warm surface (30 degC),
// a surface inversion from 800 m to 1100 m, tropopause at 13 km at -60 degC,
// stratosphere warming 2 K/km.
double synthetic_temperature(double z) {
  struct Knot {
    double z;
    double t;
  };
  static constexpr Knot kKnots[] = {
      {0.0, 303.15}, {800.0, 296.15}, {1100.0, 299.15}, {13000.0, 213.15}, {35000.0, 257.15}};
  for (std::size_t i = 0; i + 1 < std::size(kKnots); ++i) {
    if (z <= kKnots[i + 1].z || i + 2 == std::size(kKnots)) {
      const double f = (z - kKnots[i].z) / (kKnots[i + 1].z - kKnots[i].z);
      return kKnots[i].t + f * (kKnots[i + 1].t - kKnots[i].t);
    }
  }
  return kKnots[0].t;
}

// Virtual temperature [K]: a moist boundary layer (+2.5 K at the ground).
double synthetic_virtual_temperature(double z) {
  return synthetic_temperature(z) + 2.5 * std::exp(-z / 2500.0);
}

struct SyntheticAtmosphere {
  std::vector<double> pressure_pa;  // at z = 0, 1, ..., kSyntheticTopM [m]
  double pressure(int z_m) const { return pressure_pa[static_cast<std::size_t>(z_m)]; }
};

const SyntheticAtmosphere& synthetic() {
  static const SyntheticAtmosphere atmosphere = [] {
    SyntheticAtmosphere a;
    auto rhs = [](double z, double p) {
      const double q = constants::kR0 / (constants::kR0 + z);
      return -p * constants::kG0 * q * q / (constants::kRAir * synthetic_virtual_temperature(z));
    };
    double p = kGroundPressurePa;
    a.pressure_pa.push_back(p);
    for (int i = 0; i < kSyntheticTopM; ++i) {
      const double z = i;  // step 1 m; the knots are at whole metres
      const double k1 = rhs(z, p);
      const double k2 = rhs(z + 0.5, p + 0.5 * k1);
      const double k3 = rhs(z + 0.5, p + 0.5 * k2);
      const double k4 = rhs(z + 1.0, p + k3);
      p += (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0;
      a.pressure_pa.push_back(p);
    }
    return a;
  }();
  return atmosphere;
}

struct FlightSample {
  int z_m;       // true geometric height above the launch point [m]
  double p_pa;   // pressure [Pa]
  double t_k;    // measured temperature [K]
  double tv_k;   // measured virtual temperature [K]
  bool ascent;
};

// A flight: `ground_s` samples on the ground, ascent at 5 m/s to `top_m`,
// descent at 12 m/s; 1 Hz; temperature noise `noise_k` (1 sigma, normal,
// fixed seed); `descent_offset_k` added to the descent's temperatures.
std::vector<FlightSample> synthetic_flight(int top_m, double noise_k, int ground_s = 60,
                                           double descent_offset_k = 0.0) {
  const SyntheticAtmosphere& a = synthetic();
  std::mt19937 rng(20240531u);
  std::normal_distribution<double> noise(0.0, 1.0);
  std::vector<FlightSample> out;
  auto push = [&](int z, bool ascent) {
    const double e = noise_k * noise(rng) + (ascent ? 0.0 : descent_offset_k);
    out.push_back(FlightSample{z, a.pressure(z), synthetic_temperature(z) + e,
                               synthetic_virtual_temperature(z) + e, ascent});
  };
  for (int i = 0; i < ground_s; ++i) push(0, true);
  for (int z = 5; z <= top_m; z += 5) push(z, true);
  for (int z = top_m - 12; z >= 0; z -= 12) push(z, false);
  return out;
}

TemperatureProfile build_profile(const std::vector<FlightSample>& flight, ProfileLeg leg,
                                 double layer_m = 50.0) {
  ProfileBuilder builder(ProfileOptions{leg, layer_m});
  for (const FlightSample& s : flight) builder.add(s.p_pa, s.t_k, s.tv_k);
  return builder.build();
}

std::vector<ProfileNode> shifted(const std::vector<ProfileNode>& nodes, double dt) {
  std::vector<ProfileNode> out = nodes;
  for (ProfileNode& n : out) {
    n.temperature_k += dt;
    n.virtual_temperature_k += dt;
  }
  return out;
}

}  // namespace

// ---------------------------------------------------------------------------
// The profile integration against the U.S. Standard Atmosphere 1976.

TEST_CASE("profile model fed the 1976 standard profile reproduces the standard atmosphere",
          "[models][profile]") {
  constexpr double kStep = 50.0;
  ProfileModel model(standard_profile(kStep, 84850.0));
  const ReferencePoint msl{constants::kP0, 288.15, 0.0};
  double max_err_32 = 0.0;
  double max_err_80 = 0.0;
  for (double h = -900.0; h <= 80000.0; h += 137.0) {
    INFO("H = " << h << " m'");
    const double p = ussa76::pressure_at(h);
    const HeightEval e = model.evaluate(p, kNaN, msl);
    REQUIRE(e.valid);
    CHECK_FALSE(e.extrapolated);
    // Source: U.S. Standard Atmosphere 1976, eqs. 33a/33b and eq. 18 (the
    // baroz ussa76 functions, tested against Table I elsewhere).
    const double err = e.geopotential_m - h;
    const double err_z = e.height_m - geometric_from_geopotential(h);
    CHECK(std::fabs(err_z) <= (h <= 32000.0 ? 0.05 : 0.5));
    CHECK(std::fabs(err) <= (h <= 32000.0 ? 0.05 : 0.5));
    // The documented bound (docs/profile-model.md): the chord in ln p lies
    // above the convex T(ln p), so the error is positive above the reference
    // and at most the leading-order term (10 % margin for higher orders).
    if (h > 0.0) {
      CHECK(err >= -1e-7);
      CHECK(err <= 1.1 * standard_discretisation_bound(kStep, h) + 1e-6);
    }
    (h <= 32000.0 ? max_err_32 : max_err_80) =
        std::max(h <= 32000.0 ? max_err_32 : max_err_80, std::fabs(err_z));
  }
  REPORT("standard profile, 50 m' nodes: max |error| " << max_err_32 << " m to 32 km, "
                                                     << max_err_80 << " m to 80 km");

  // Source: reference-values.md section 4.3 (recomputed, flag R): ISA
  // Z(1000 hPa) = 110.885 m', Z(500 hPa) = 5574.437 m'; "a hypsometric
  // integrator fed with the ISA temperature profile must reproduce these to
  // < 0.01 m".
  CHECK(std::fabs(model.evaluate(100000.0, kNaN, msl).geopotential_m - 110.885) < 0.01);
  CHECK(std::fabs(model.evaluate(50000.0, kNaN, msl).geopotential_m - 5574.437) < 0.01);
}

TEST_CASE("profile model with the standard profile reproduces the pressure-altitude table",
          "[models][profile]") {
  const DataFile file = read_data_file("ussa76_pressure_altitude.txt");
  const double tol_h = file.tolerance.at("h_m");
  const double tol_z = file.tolerance.at("z_m");
  ProfileModel model(standard_profile(50.0, 84850.0));
  const ReferencePoint msl{constants::kP0, 288.15, 0.0};
  int rows = 0;
  for (const auto& row : file.rows) {
    REQUIRE(row.size() == 5);
    INFO("p = " << row[0] << " hPa");
    const HeightEval e = model.evaluate(to_double(row[0]) * 100.0, kNaN, msl);
    REQUIRE(e.valid);
    // Source: reference-values.md section 1.5 (recomputed from USSA76, flag R).
    CHECK(std::fabs(e.geopotential_m - to_double(row[1])) <= tol_h);
    CHECK(std::fabs(e.height_m - to_double(row[2])) <= tol_z);
    ++rows;
  }
  CHECK(rows >= 20);
}

TEST_CASE("profile built from a dense standard-atmosphere ascent reproduces the standard",
          "[models][profile]") {
  // A "sounding" through the 1976 standard every 5 m' (10 samples per 50 m'
  // layer), the profile made by ProfileBuilder.
  ProfileBuilder builder;
  for (double h = 0.0; h <= 32000.0; h += 5.0) {
    builder.add(ussa76::pressure_at(h), ussa76::temperature_at(h), kNaN);
  }
  CHECK(builder.samples_used() == 6401);
  // 0 .. 32000 m' in 50 m' layers (a sample on a boundary may round into
  // the layer below it).
  CHECK(builder.layers() >= 640);
  CHECK(builder.layers() <= 642);
  ProfileModel model(builder.build());
  const ReferencePoint msl{constants::kP0, 288.15, 0.0};
  double max_err = 0.0;
  for (double h = 0.0; h <= 32000.0; h += 111.0) {
    INFO("H = " << h);
    const HeightEval e = model.evaluate(ussa76::pressure_at(h), kNaN, msl);
    REQUIRE(e.valid);
    CHECK_FALSE(e.extrapolated);
    // Source: U.S. Standard Atmosphere 1976, eqs. 33a/33b, 18.
    const double err = std::fabs(e.height_m - geometric_from_geopotential(h));
    CHECK(err <= 0.05);
    max_err = std::max(max_err, err);
  }
  REPORT("standard profile through the builder: max |error| " << max_err << " m to 32 km");
}

TEST_CASE("profile model reproduces textbook thicknesses", "[models][profile]") {
  const ReferencePoint ref{100000.0, 288.15, 0.0};
  auto thickness = [&ref](double tv) {
    // Constant T_v between 1000 and 500 hPa (three nodes).
    ProfileModel model(TemperatureProfile(
        {{100000.0, tv, kNaN}, {70000.0, tv, kNaN}, {50000.0, tv, kNaN}}));
    const HeightEval e = model.evaluate(50000.0, kNaN, ref);
    REQUIRE(e.valid);
    return e;
  };
  const HeightEval warm = thickness(288.15);
  const HeightEval cold = thickness(233.15);
  // Source: Wallace & Hobbs 2006, exercise 3.3 (from memory, flag M): 5846 m
  // (tropics, 15 degC) and 4730 m (polar, -40 degC); reference-values.md
  // section 5 recomputes 5846.4 m and 4730.4 m. With our R = 287.053 the
  // thicknesses are 0.06 m larger than with R = 287.05.
  CHECK(std::fabs(warm.geopotential_m - 5846.4) < 0.1);
  CHECK(std::fabs(cold.geopotential_m - 4730.4) < 0.1);
  CHECK(std::fabs(warm.geopotential_m - 5846.0) <= 0.5);  // from memory
  CHECK(std::fabs(cold.geopotential_m - 4730.0) <= 0.5);  // from memory
  // Source: reference-values.md section 4.1: R_d = 287.05 in meteorological
  // practice; the difference from R = 287.053 (USSA76) is (0.003/g0) T ln 2.
  CHECK(std::fabs(warm.geopotential_m - 287.05 / constants::kG0 * 288.15 * std::log(2.0)) < 0.1);
  // Source: reference-values.md section 5: (R_d/g0) ln 2 = 20.289 m/K (R).
  const HeightEval warmer = thickness(289.15);
  CHECK(std::fabs((warmer.geopotential_m - warm.geopotential_m) - 20.289) <= 0.0005);
  CHECK(std::fabs(warm.dh_dt / geometric_per_geopotential(warm.geopotential_m) - 20.289) <=
        0.0005);
  // Source: reference-values.md section 4.3 (R): the ISA 1000-500 hPa
  // thickness 5463.553 m' corresponds to a log-p-mean temperature of
  // 269.283 K (printed to 0.001 K, i.e. +-0.0005 K x 20.289 m/K = +-0.01 m).
  CHECK(std::fabs(thickness(269.283).geopotential_m - 5463.553) <= 0.015);
  // A T_v linear in ln p: the thickness is that of its log-p mean (W&H eq.
  // 3.30 with the mean), here (293.15 + 243.15)/2 = 268.15 K.
  ProfileModel linear(TemperatureProfile({{100000.0, 293.15, kNaN}, {50000.0, 243.15, kNaN}}));
  CHECK(std::fabs(linear.evaluate(50000.0, kNaN, ref).geopotential_m -
                  thickness(268.15).geopotential_m) <= 1e-6);
}

TEST_CASE("profile model with a uniform profile equals the isothermal model",
          "[models][profile]") {
  // Both implement the hypsometric equation; with T_v = 250 K everywhere in
  // the covered range they must agree to rounding.
  ProfileModel profile(TemperatureProfile({{103000.0, 250.0, kNaN}, {1000.0, 250.0, kNaN}}));
  IsothermalModel iso;
  for (double p : {101000.0, 85000.0, 40000.0, 9000.0, 1200.0}) {
    for (double datum : {kNaN, 0.0, 800.0}) {
      INFO("p = " << p << ", datum = " << datum);
      const ReferencePoint ref{100000.0, 250.0, datum};
      const HeightEval a = profile.evaluate(p, kNaN, ref);
      const HeightEval b = iso.evaluate(p, kNaN, ref);
      REQUIRE(a.valid);
      REQUIRE(b.valid);
      CHECK(std::fabs(a.height_m - b.height_m) <= 1e-7);
      CHECK(rel_diff(a.dh_dp, b.dh_dp) <= 1e-12);
      CHECK(rel_diff(a.dh_dpref, b.dh_dpref) <= 1e-10);
      CHECK(rel_diff(a.dh_dt, b.dh_dt) <= 1e-9);
    }
  }
}

TEST_CASE("profile model converts with WGS 84 gravity at a latitude", "[models][profile]") {
  // Source: reference-values.md section 3.5 (R), WGS 84 column: Z = 10 000 m
  // is H = 9957.44 m' at 0 deg, 9983.83 m' at 45 deg, 10010.34 m' at 90 deg
  // (printed to 0.01 m'). The standard profile gives those H from p.
  const TemperatureProfile profile = standard_profile(50.0, 40000.0);
  const ReferencePoint msl{constants::kP0, 288.15, 0.0};
  for (const auto& [lat, h] : {std::pair{0.0, 9957.44}, std::pair{45.0, 9983.83},
                               std::pair{90.0, 10010.34}}) {
    INFO("latitude " << lat);
    ProfileModel model(profile, GravityFrame::wgs84(lat));
    const HeightEval e = model.evaluate(ussa76::pressure_at(h), kNaN, msl);
    REQUIRE(e.valid);
    // 0.005 m': the 50 m' nodes' discretisation error at 10 km' is 1.4 mm.
    CHECK(std::fabs(e.geopotential_m - h) <= 0.005);
    CHECK(std::fabs(e.height_m - 10000.0) <= 0.01);
  }
}

// ---------------------------------------------------------------------------
// A non-standard flight, integrated independently.

TEST_CASE("profile model recovers a non-standard flight from its own ascent",
          "[models][profile]") {
  const std::vector<FlightSample> flight = synthetic_flight(32000, 0.2);
  ProfileBuilder builder;  // ascent, 50 m' layers
  for (const FlightSample& s : flight) builder.add(s.p_pa, s.t_k, s.tv_k);
  const std::size_t ascent_samples = static_cast<std::size_t>(
      std::count_if(flight.begin(), flight.end(), [](const FlightSample& s) { return s.ascent; }));
  // The top is found to within the 5-sample filter: at most 2 samples move.
  CHECK(builder.samples_used() + 2 >= ascent_samples);
  CHECK(builder.samples_used() <= ascent_samples + 2);
  CHECK(builder.top_pressure_pa() == synthetic().pressure(32000));

  ProfileModel model(builder.build());
  StandardModel standard;
  const ReferencePoint ref{kGroundPressurePa, 303.15, 0.0};  // launch at MSL: datum 0 m'
  double max_rel = 0.0;
  double max_abs = 0.0;
  double max_rel_standard_above_5km = 0.0;
  std::map<int, double> ascent_height;
  for (const FlightSample& s : flight) {
    INFO("z = " << s.z_m << (s.ascent ? " (ascent)" : " (descent)"));
    const HeightEval e = model.evaluate(s.p_pa, s.t_k, ref);
    REQUIRE(e.valid);
    CHECK_FALSE(e.extrapolated);
    // Truth: the geometric height of the independent RK4 integration.
    const double err = std::fabs(e.height_m - s.z_m);
    CHECK(err <= std::max(1e-3 * s.z_m, 0.5));
    // Tighter: the documented error budget (docs/profile-model.md) of
    // 0.2 K noise with n = 10 samples per 50 m' layer, a random walk
    // sigma_h = 1.25 (0.2 K / sqrt(n)) sqrt(50 m z) / T (T >= 213 K here),
    // plus 0.05 m for the kinks of the profile; 4 sigma.
    const double sigma_h = 1.25 * 0.2 / std::sqrt(10.0) * std::sqrt(50.0 * s.z_m) / 213.0;
    CHECK(err <= 0.05 + 4.0 * sigma_h);
    max_abs = std::max(max_abs, err);
    if (s.z_m >= 1000) max_rel = std::max(max_rel, err / s.z_m);
    const HeightEval st = standard.evaluate(s.p_pa, kNaN, ref);
    REQUIRE(st.valid);
    if (s.z_m >= 5000) {
      max_rel_standard_above_5km =
          std::max(max_rel_standard_above_5km, std::fabs(st.height_m - s.z_m) / s.z_m);
    }
    // Ascent and descent agree at the same pressure (same model instance:
    // this also guards the segment cache).
    if (s.ascent) {
      ascent_height[s.z_m] = e.height_m;
    } else if (const auto it = ascent_height.find(s.z_m); it != ascent_height.end()) {
      CHECK(e.height_m == it->second);
    }
  }
  // The standard model on the same samples is measurably worse.
  CHECK(max_rel_standard_above_5km > 0.005);
  REPORT("non-standard flight: profile max |error| " << max_abs << " m, max relative (z >= 1 km) "
                                                   << max_rel << "; standard model max relative "
                                                   << max_rel_standard_above_5km
                                                   << " above 5 km");
}

TEST_CASE("profile model flags and bounds heights beyond the profile", "[models][profile]") {
  // Profile from the ascent between 2 km and 20 km only; noise-free, the
  // test is about the extension.
  std::vector<FlightSample> part;
  for (const FlightSample& s : synthetic_flight(32000, 0.0)) {
    if (s.ascent && s.z_m >= 2000 && s.z_m <= 20000) part.push_back(s);
  }
  const TemperatureProfile profile = build_profile(part, ProfileLeg::kAscent);
  ProfileModel model(profile);
  const SyntheticAtmosphere& a = synthetic();
  const ReferencePoint ref{a.pressure(2000), 290.0, geopotential_from_geometric(2000.0)};
  // Inside: not flagged, within 0.1 %.
  const HeightEval inside = model.evaluate(a.pressure(10000), kNaN, ref);
  REQUIRE(inside.valid);
  CHECK_FALSE(inside.extrapolated);
  CHECK(std::fabs(inside.height_m - 8000.0) <= 8.0);

  // Beyond an end node e the model takes T_v(p) = T_v,e + T_std(p) - T_std(p_e).
  // Its height error from the end node to z is, to first order,
  //   E = integral from z_e to z of (T_v,ext - T_v,true) / T_v,true dz
  // and |E| <= max |T_v,ext - T_v,true| |z - z_e| / T_v,min
  // (docs/profile-model.md). Both are computed here from the truth and the
  // standard atmosphere alone.
  auto level_of = [&a](double p) {  // geometric height of pressure p in the truth [m]
    int z = 0;
    while (z < kSyntheticTopM && a.pressure(z + 1) >= p) ++z;
    return z;
  };
  struct Extension {
    double first_order;
    double bound;
  };
  auto extension_error = [&a](const ProfileNode& end, int z_end, int z_to) {
    const double t_std_end = ussa76::temperature_at_pressure(end.pressure_pa);
    const int step = z_to > z_end ? 1 : -1;
    double sum = 0.0;
    double max_dt = 0.0;
    double min_tv = 1e9;
    for (int z = z_end; z != z_to; z += step) {
      const double z_mid = z + 0.5 * step;
      const double p_mid = std::sqrt(a.pressure(z) * a.pressure(z + step));
      const double tv_ext =
          end.virtual_temperature_k + ussa76::temperature_at_pressure(p_mid) - t_std_end;
      const double tv_true = synthetic_virtual_temperature(z_mid);
      sum += step * (tv_ext - tv_true) / tv_true;
      max_dt = std::max(max_dt, std::fabs(tv_ext - tv_true));
      min_tv = std::min(min_tv, tv_true);
    }
    return Extension{sum, max_dt * std::abs(z_to - z_end) / min_tv};
  };

  // 1 km above the top.
  const ProfileNode& top = profile.nodes().back();
  const Extension up = extension_error(top, level_of(top.pressure_pa), 21000);
  const HeightEval above = model.evaluate(a.pressure(21000), kNaN, ref);
  REQUIRE(above.valid);
  CHECK(above.extrapolated);
  const double err_above = above.height_m - 19000.0;
  CHECK(std::fabs(err_above - up.first_order) <= 0.1 * std::fabs(up.first_order) + 0.1);
  CHECK(std::fabs(err_above) <= up.bound + 0.1);
  // 500 m below the bottom.
  const ProfileNode& bottom = profile.nodes().front();
  const Extension down = extension_error(bottom, level_of(bottom.pressure_pa), 1500);
  const HeightEval below = model.evaluate(a.pressure(1500), kNaN, ref);
  REQUIRE(below.valid);
  CHECK(below.extrapolated);
  const double err_below = below.height_m - (-500.0);
  CHECK(std::fabs(err_below - down.first_order) <= 0.1 * std::fabs(down.first_order) + 0.1);
  CHECK(std::fabs(err_below) <= down.bound + 0.1);
  REPORT("extension errors: 1 km above the top " << err_above << " m (first order "
                                                 << up.first_order << ", bound " << up.bound
                                                 << "), 500 m below the bottom " << err_below
                                                 << " m (first order " << down.first_order
                                                 << ", bound " << down.bound << ")");
  // A reference outside the profile flags every row.
  const ReferencePoint ground{a.pressure(0), 303.15, 0.0};
  const HeightEval from_ground = model.evaluate(a.pressure(10000), kNaN, ground);
  REQUIRE(from_ground.valid);
  CHECK(from_ground.extrapolated);
}

// ---------------------------------------------------------------------------
// The profile itself.

TEST_CASE("temperature profile extends beyond its nodes with the standard lapse rates",
          "[models][profile]") {
  // One node at 700 hPa, 10 K warmer than the standard there: everywhere the
  // extension is T_std(p) + 10 K. Independent check: Simpson integration of
  // (T_std + 10) d(ln p), split at the standard's layer bases.
  const double p0 = 70000.0;
  const TemperatureProfile profile({{p0, ussa76::temperature_at_pressure(p0) + 10.0, kNaN}});
  auto simpson = [](double p_from, double p_to) {
    std::vector<double> cuts{std::min(p_from, p_to), std::max(p_from, p_to)};
    for (const auto& base : ussa76::layer_bases()) {
      if (base.pressure_pa > cuts[0] && base.pressure_pa < cuts[1]) cuts.push_back(base.pressure_pa);
    }
    std::sort(cuts.begin(), cuts.end());
    double sum = 0.0;
    for (std::size_t k = 0; k + 1 < cuts.size(); ++k) {
      const double a = std::log(cuts[k]);
      const double b = std::log(cuts[k + 1]);
      constexpr int kSteps = 400;
      const double step = (b - a) / kSteps;
      auto f = [](double lnp) { return ussa76::temperature_at_pressure(std::exp(lnp)) + 10.0; };
      double s = f(a) + f(b);
      for (int i = 1; i < kSteps; ++i) s += (i % 2 == 1 ? 4.0 : 2.0) * f(a + i * step);
      sum += s * step / 3.0;
    }
    return kRPerG0 * (p_to < p_from ? sum : -sum);  // geopotential of p_to above p_from
  };
  for (double p : {120000.0, 101325.0, 69000.0, 20000.0, 3000.0, 100.0, 1.0}) {
    INFO("p = " << p);
    const ProfilePoint point = profile.geopotential_at(p);
    CHECK(point.extrapolated);
    CHECK(std::fabs(point.temperature_k - (ussa76::temperature_at_pressure(p) + 10.0)) <= 1e-9);
    CHECK(std::fabs(point.geopotential_m - simpson(p0, p)) <= 1e-6 * std::fabs(point.geopotential_m) + 1e-6);
  }
  const ProfilePoint at_node = profile.geopotential_at(p0);
  CHECK_FALSE(at_node.extrapolated);
  CHECK(at_node.geopotential_m == 0.0);
}

TEST_CASE("temperature profile validates, sorts and merges its nodes", "[models][profile]") {
  CHECK_THROWS_WITH(TemperatureProfile(std::vector<ProfileNode>{}),
                    "temperature profile has no node");
  try {
    TemperatureProfile({{90000.0, 280.0, kNaN}, {-5.0, 250.0, kNaN}});
    FAIL("no exception");
  } catch (const Error& e) {
    CHECK(e.code() == ExitCode::kInput);
    CHECK(std::string(e.what()) == "temperature profile: pressure -5 Pa is not positive and finite");
  }
  CHECK_THROWS_AS(TemperatureProfile({{kNaN, 280.0, kNaN}}), Error);
  CHECK_THROWS_WITH(TemperatureProfile({{85000.0, 400.0, kNaN}}),
                    "temperature profile: temperature 400 K at 850.0000 hPa is outside 150 to 350 K");
  CHECK_THROWS_WITH(
      TemperatureProfile({{85000.0, 280.0, 120.0}}),
      "temperature profile: virtual temperature 120 K at 850.0000 hPa is outside 150 to 350 K");
  CHECK_THROWS_AS(TemperatureProfile({{85000.0, kNaN, kNaN}}), Error);

  // Unsorted, with a duplicated pressure: sorted by decreasing pressure, the
  // duplicate merged into the mean.
  const TemperatureProfile profile(
      {{50000.0, 250.0, kNaN}, {90000.0, 280.0, 282.0}, {50000.0, 252.0, kNaN}, {70000.0, 270.0, kNaN}});
  REQUIRE(profile.size() == 3);
  CHECK(profile.nodes()[0].pressure_pa == 90000.0);
  CHECK(profile.nodes()[0].virtual_temperature_k == 282.0);
  CHECK(profile.nodes()[1].virtual_temperature_k == 270.0);  // NaN: T_v = T
  CHECK(profile.nodes()[2].temperature_k == 251.0);
  CHECK(profile.bottom_pressure_pa() == 90000.0);
  CHECK(profile.top_pressure_pa() == 50000.0);
  // Trapezoid in ln p between the nodes (hypsometric equation).
  CHECK(std::fabs(profile.node_geopotential_m(1) -
                  kRPerG0 * 0.5 * (282.0 + 270.0) * std::log(90000.0 / 70000.0)) <= 1e-9);
  // Interpolation: T linear in ln p.
  const double p_mid = std::sqrt(90000.0 * 70000.0);
  const ProfilePoint mid = profile.geopotential_at(p_mid);
  CHECK(std::fabs(mid.temperature_k - 0.5 * (280.0 + 270.0)) <= 1e-9);
  CHECK(std::fabs(mid.virtual_temperature_k - 0.5 * (282.0 + 270.0)) <= 1e-9);
  CHECK_FALSE(mid.extrapolated);
  // A hint anywhere gives the same answer as the binary search.
  for (std::size_t hint : {std::size_t{0}, std::size_t{1}, std::size_t{7}}) {
    std::size_t h = hint;
    CHECK(profile.geopotential_at(60000.0, h).geopotential_m ==
          profile.geopotential_at(60000.0).geopotential_m);
    CHECK(h == 1);
  }
  // A covered range wider than the nodes.
  const TemperatureProfile wide({{90000.0, 280.0, kNaN}, {50000.0, 250.0, kNaN}}, 91000.0, 49000.0);
  CHECK_FALSE(wide.geopotential_at(90500.0).extrapolated);
  CHECK_FALSE(wide.geopotential_at(49500.0).extrapolated);
  CHECK(wide.geopotential_at(48000.0).extrapolated);
  CHECK(wide.covered_bottom_pa() == 91000.0);
}

// ---------------------------------------------------------------------------
// The height model.

TEST_CASE("profile model derivatives match central finite differences", "[models][profile]") {
  const std::vector<ProfileNode> nodes = {
      {101000.0, 301.0, 303.5}, {95000.0, 296.0, 298.0}, {90000.0, 297.5, 299.0},
      {85000.0, 289.0, 290.0},  {70000.0, 279.0, 279.6}, {50000.0, 258.0, 258.1},
      {30000.0, 233.0, kNaN},   {20000.0, 215.0, kNaN},  {10000.0, 209.0, kNaN},
      {5000.0, 214.0, kNaN},    {2000.0, 222.0, kNaN},   {1000.0, 229.0, kNaN}};
  const TemperatureProfile profile(nodes);
  for (const GravityFrame& frame : {GravityFrame::standard(), GravityFrame::wgs84(60.0)}) {
    ProfileModel model(profile, frame);
    ProfileModel warmer(TemperatureProfile(shifted(nodes, 0.01)), frame);
    ProfileModel colder(TemperatureProfile(shifted(nodes, -0.01)), frame);
    auto height = [](ProfileModel& m, double p, double p_ref, double datum) {
      const HeightEval e = m.evaluate(p, kNaN, ReferencePoint{p_ref, 280.0, datum});
      REQUIRE(e.valid);
      return e.height_m;
    };
    for (double p : {120000.0, 99000.0, 80000.0, 40000.0, 15000.0, 3000.0, 1500.0, 500.0, 150.0}) {
      for (double p_ref : {100500.0, 103000.0}) {
        for (double datum : {kNaN, 0.0, 500.0}) {
          INFO("frame " << (frame.is_standard() ? "standard" : "wgs84") << ", p = " << p
                        << ", p_ref = " << p_ref << ", datum = " << datum);
          const HeightEval e = model.evaluate(p, kNaN, ReferencePoint{p_ref, 280.0, datum});
          REQUIRE(e.valid);
          CHECK(e.extrapolated == (p > 101000.0 || p < 1000.0 || p_ref > 101000.0));
          const double dp = 1e-5 * p;
          CHECK(rel_diff(e.dh_dp, (height(model, p + dp, p_ref, datum) -
                                   height(model, p - dp, p_ref, datum)) /
                                      (2 * dp)) <= 1e-6);
          const double dpr = 1e-5 * p_ref;
          CHECK(rel_diff(e.dh_dpref, (height(model, p, p_ref + dpr, datum) -
                                      height(model, p, p_ref - dpr, datum)) /
                                         (2 * dpr)) <= 1e-6);
          CHECK(rel_diff(e.dh_dt, (height(warmer, p, p_ref, datum) -
                                   height(colder, p, p_ref, datum)) /
                                      0.02) <= 1e-6);
          CHECK(e.dh_dtmodel == 0.0);
        }
      }
    }
  }
}

TEST_CASE("profile model basics: kind, ranges, ignored temperatures, replaced profile",
          "[models][profile]") {
  ProfileModel model(TemperatureProfile({{100000.0, 290.0, kNaN}, {50000.0, 250.0, kNaN}}));
  CHECK(model.kind() == ModelKind::kProfile);
  CHECK_FALSE(model.needs_sample_temperature());
  CHECK(model.frame().is_standard());
  const ReferencePoint ref{100000.0, 290.0, kNaN};
  const HeightEval a = model.evaluate(70000.0, kNaN, ref);
  REQUIRE(a.valid);
  CHECK(model.evaluate(70000.0, 200.0, ref).height_m == a.height_m);
  CHECK(model.evaluate(70000.0, kNaN, ReferencePoint{100000.0, 250.0, kNaN}).height_m == a.height_m);
  // Datum NaN: the column sits at H_std(p_ref).
  const double hd = ussa76::geopotential_at_pressure(100000.0);
  CHECK(std::fabs(a.height_m - (geometric_from_geopotential(hd + a.geopotential_m) -
                                geometric_from_geopotential(hd))) <= 1e-8);

  for (double p : {0.0, -1.0, kNaN, 0.1, 200000.0}) {
    INFO("p = " << p);
    const HeightEval e = model.evaluate(p, kNaN, ref);
    CHECK_FALSE(e.valid);
    CHECK(e.reason == ProfileModel::kReasonPressureRange);
  }
  const HeightEval bad_ref = model.evaluate(70000.0, kNaN, ReferencePoint{0.0, 290.0, kNaN});
  CHECK_FALSE(bad_ref.valid);
  CHECK(bad_ref.reason == ProfileModel::kReasonReferenceRange);
  // The cache recovers after a bad reference.
  CHECK(model.evaluate(70000.0, kNaN, ref).height_m == a.height_m);

  // Replacing the profile takes effect at once, also for the cached reference.
  model.set_profile(TemperatureProfile({{100000.0, 300.0, kNaN}, {50000.0, 260.0, kNaN}}));
  const HeightEval b = model.evaluate(70000.0, kNaN, ref);
  const HeightEval fresh =
      ProfileModel(TemperatureProfile({{100000.0, 300.0, kNaN}, {50000.0, 260.0, kNaN}}))
          .evaluate(70000.0, kNaN, ref);
  CHECK(b.height_m == fresh.height_m);
  CHECK(b.height_m > a.height_m);
  // Samples in any order give the same heights (segment cache).
  ProfileModel ordered(standard_profile(50.0, 20000.0));
  ProfileModel shuffled(standard_profile(50.0, 20000.0));
  const ReferencePoint msl{constants::kP0, 288.15, 0.0};
  std::vector<double> pressures;
  for (double h = 0.0; h <= 20000.0; h += 333.0) pressures.push_back(ussa76::pressure_at(h));
  std::vector<double> heights;
  for (double p : pressures) heights.push_back(ordered.evaluate(p, kNaN, msl).height_m);
  for (std::size_t k = 0; k < pressures.size(); ++k) {
    const std::size_t i = (k * 37) % pressures.size();
    CHECK(shuffled.evaluate(pressures[i], kNaN, msl).height_m == heights[i]);
  }
}

// ---------------------------------------------------------------------------
// The builder.

TEST_CASE("profile builder: a single temperature spike barely moves its node",
          "[models][profile][builder]") {
  const std::vector<FlightSample> clean = synthetic_flight(8000, 0.0, 0);
  std::vector<FlightSample> spiked = clean;
  const auto it = std::find_if(spiked.begin(), spiked.end(),
                               [](const FlightSample& s) { return s.z_m == 3005; });
  REQUIRE(it != spiked.end());
  it->t_k += 30.0;
  it->tv_k += 30.0;
  const TemperatureProfile a = build_profile(clean, ProfileLeg::kAscent);
  const TemperatureProfile b = build_profile(spiked, ProfileLeg::kAscent);
  REQUIRE(a.size() == b.size());
  double max_shift = 0.0;
  for (std::size_t i = 0; i < a.size(); ++i) {
    CHECK(a.nodes()[i].pressure_pa == b.nodes()[i].pressure_pa);
    max_shift = std::max(max_shift, std::fabs(a.nodes()[i].temperature_k - b.nodes()[i].temperature_k));
  }
  CHECK(max_shift <= 0.05);
  CHECK(max_shift > 0.0);  // the spike is in the data
}

TEST_CASE("profile builder: pressure spikes neither flip the leg nor move nodes",
          "[models][profile][builder]") {
  const std::vector<FlightSample> clean = synthetic_flight(20000, 0.2);
  ProfileBuilder reference;
  for (const FlightSample& s : clean) reference.add(s.p_pa, s.t_k, s.tv_k);
  for (int width : {1, 2}) {
    INFO("spike of " << width << " samples");
    // A low-pressure spike in the middle of the ascent (to 1/20 of the true
    // pressure, i.e. "above the top"), a high one in the descent.
    std::vector<FlightSample> spiked = clean;
    for (std::size_t i = 0; i < spiked.size(); ++i) {
      if (spiked[i].ascent && spiked[i].z_m >= 5000 && spiked[i].z_m < 5000 + 5 * width) {
        spiked[i].p_pa /= 20.0;
      }
      if (!spiked[i].ascent && spiked[i].z_m <= 6008 && spiked[i].z_m > 6008 - 12 * width) {
        spiked[i].p_pa *= 1.5;
      }
    }
    ProfileBuilder builder;
    for (const FlightSample& s : spiked) builder.add(s.p_pa, s.t_k, s.tv_k);
    CHECK(builder.top_pressure_pa() == reference.top_pressure_pa());
    CHECK(builder.samples_used() == reference.samples_used());
    const TemperatureProfile a = reference.build();
    const TemperatureProfile b = builder.build();
    REQUIRE(a.size() == b.size());
    CHECK(a.top_pressure_pa() == b.top_pressure_pa());
    for (std::size_t i = 0; i < a.size(); ++i) {
      // The spiked samples take a neighbour's pressure: a layer's median
      // moves by less than 3 samples' climb (15 m).
      CHECK(kRPerG0 * a.nodes()[i].temperature_k *
                std::fabs(std::log(b.nodes()[i].pressure_pa / a.nodes()[i].pressure_pa)) <=
            15.0);
      CHECK(std::fabs(b.nodes()[i].temperature_k - a.nodes()[i].temperature_k) <= 0.05);
    }
  }
}

TEST_CASE("profile builder: thinning keeps the median of a long hover", "[models][profile][builder]") {
  // 100 000 samples in one layer (mid-layer pressure), temperature drifting
  // from 249 K to 251 K with 0.2 K noise: the median is 250 K. Keeping only
  // the first values would give ~249 K.
  constexpr int kSamples = 100000;
  const double p_hover = ussa76::pressure_at(1525.0);  // middle of the layer 1500..1550 m'
  std::mt19937 rng(7u);
  std::normal_distribution<double> noise(0.0, 1.0);
  ProfileBuilder all(ProfileOptions{ProfileLeg::kAll, 50.0});
  ProfileBuilder ascent(ProfileOptions{ProfileLeg::kAscent, 50.0});
  for (int i = 0; i < kSamples; ++i) {
    const double p = p_hover + 0.5 * noise(rng);
    const double t = 249.0 + 2.0 * i / kSamples + 0.2 * noise(rng);
    all.add(p, t, kNaN);
    ascent.add(p, t, kNaN);
  }
  // Then a climb within the layer: everything so far is before the top.
  for (int i = 1; i <= 5; ++i) ascent.add(p_hover - 20.0 * i, 251.0, kNaN);
  CHECK(all.samples_used() == kSamples);
  CHECK(all.layers() == 1);
  // At most kLayerCapacity per layer and accumulator (before/after the top).
  CHECK(all.stored_values() <= 2 * ProfileBuilder::kLayerCapacity + 2);
  CHECK(ascent.stored_values() <= 2 * ProfileBuilder::kLayerCapacity + 2);
  CHECK(ascent.samples_used() >= kSamples);
  for (const ProfileBuilder* builder : {&all, &ascent}) {
    const TemperatureProfile profile = builder->build();
    REQUIRE(profile.size() == 1);
    // Source: the constructed data (median of a linear drift 249..251 K).
    CHECK(std::fabs(profile.nodes()[0].temperature_k - 250.0) <= 0.05);
    CHECK(rel_diff(profile.nodes()[0].pressure_pa, p_hover) <= 1e-4);
  }
}

TEST_CASE("profile builder: the legs take their own samples", "[models][profile][builder]") {
  // The descent is 4 K warmer than the ascent (say a warmer air mass later).
  const std::vector<FlightSample> flight = synthetic_flight(15000, 0.1, 30, 4.0);
  const std::size_t n_ascent = static_cast<std::size_t>(
      std::count_if(flight.begin(), flight.end(), [](const FlightSample& s) { return s.ascent; }));
  const std::size_t n_descent = flight.size() - n_ascent;
  const SyntheticAtmosphere& a = synthetic();
  for (ProfileLeg leg : {ProfileLeg::kAscent, ProfileLeg::kDescent, ProfileLeg::kAll}) {
    INFO("leg " << profile_leg_name(leg));
    ProfileBuilder builder(ProfileOptions{leg, 50.0});
    for (const FlightSample& s : flight) builder.add(s.p_pa, s.t_k, s.tv_k);
    const TemperatureProfile profile = builder.build();
    CHECK(profile.size() == builder.layers());
    for (int z : {1500, 6000, 12000}) {
      const ProfilePoint point = profile.geopotential_at(a.pressure(z));
      const double offset = point.temperature_k - synthetic_temperature(z);
      if (leg == ProfileLeg::kAscent) CHECK(std::fabs(offset) <= 0.15);
      if (leg == ProfileLeg::kDescent) CHECK(std::fabs(offset - 4.0) <= 0.15);
      if (leg == ProfileLeg::kAll) CHECK((offset >= -0.15 && offset <= 4.15));
    }
    const std::size_t expected = leg == ProfileLeg::kAscent    ? n_ascent
                                 : leg == ProfileLeg::kDescent ? n_descent
                                                               : flight.size();
    CHECK(builder.samples_used() + 2 >= expected);
    CHECK(builder.samples_used() <= expected + 2);
  }
}

TEST_CASE("profile builder: skipped samples, empty legs and options", "[models][profile][builder]") {
  // An ascent only: the descent leg is empty.
  ProfileBuilder descent(ProfileOptions{ProfileLeg::kDescent, 50.0});
  ProfileBuilder ascent;
  for (int i = 0; i < 200; ++i) {
    const double p = 100000.0 - 50.0 * i;
    const double t = i % 10 == 3 ? kNaN : 288.0 - 0.02 * i;
    descent.add(p, t, kNaN);
    ascent.add(p, t, kNaN);
  }
  ascent.add(90000.0, 400.0, kNaN);   // T out of range
  ascent.add(90000.0, 280.0, 100.0);  // T_v out of range
  ascent.add(-1.0, 280.0, kNaN);      // pressure out of range
  ascent.add(kNaN, 280.0, kNaN);
  CHECK(ascent.samples_seen() == 204);
  CHECK(ascent.samples_skipped_no_temperature() == 20);
  CHECK(ascent.samples_skipped_out_of_range() == 4);
  CHECK(ascent.samples_used() == 180);
  CHECK(ascent.build().size() == ascent.layers());
  CHECK(descent.samples_used() <= 2);  // at most the samples around the top
  ProfileBuilder descent_only(ProfileOptions{ProfileLeg::kDescent, 50.0});
  for (int i = 0; i < 50; ++i) descent_only.add(100000.0 - 100.0 * i, 288.0, kNaN);
  try {
    (void)descent_only.build();
    FAIL("no exception");
  } catch (const Error& e) {
    CHECK(e.code() == ExitCode::kInput);
    CHECK(std::string(e.what()) == "profile leg 'descent' has no usable temperature sample");
  }
  ProfileBuilder empty;
  CHECK(std::isnan(empty.top_pressure_pa()));
  CHECK(empty.layers() == 0);
  CHECK_THROWS_WITH(empty.build(), "profile leg 'ascent' has no usable temperature sample");
  // One or two samples make a profile (the pending tail is used).
  ProfileBuilder one;
  one.add(85000.0, 280.0, kNaN);
  CHECK(one.build().size() == 1);
  CHECK(one.top_pressure_pa() == 85000.0);
  one.add(84000.0, 279.0, kNaN);
  CHECK(one.samples_used() == 2);
  CHECK(one.top_pressure_pa() == 84000.0);

  CHECK_THROWS_AS(ProfileBuilder(ProfileOptions{ProfileLeg::kAscent, 0.0}), Error);
  CHECK_THROWS_AS(ProfileBuilder(ProfileOptions{ProfileLeg::kAscent, kNaN}), Error);
  CHECK_THROWS_WITH(ProfileBuilder(ProfileOptions{ProfileLeg::kAscent, 5000.0}),
                    "profile layer thickness must be 1 to 1000 m, got 5000");
  CHECK(profile_leg_name(ProfileLeg::kAscent) == "ascent");
  CHECK(profile_leg_name(ProfileLeg::kDescent) == "descent");
  CHECK(profile_leg_name(ProfileLeg::kAll) == "all");
  for (ProfileLeg leg : {ProfileLeg::kAscent, ProfileLeg::kDescent, ProfileLeg::kAll}) {
    CHECK(parse_profile_leg(profile_leg_name(leg)) == leg);
  }
  CHECK_FALSE(parse_profile_leg("Ascent").has_value());
  CHECK_FALSE(parse_profile_leg("").has_value());
}

TEST_CASE("profile builder in causal use: rebuilt as layers open", "[models][profile][builder]") {
  // Live use: each ascent sample's height from the profile built from the
  // samples so far (including itself), rebuilt when revision() changes.
  const std::vector<FlightSample> flight = synthetic_flight(12000, 0.2);
  ProfileBuilder builder;
  std::size_t seen_revision = 0;
  std::optional<ProfileModel> model;
  const ReferencePoint ref{kGroundPressurePa, 303.15, 0.0};
  std::size_t rebuilds = 0;
  for (const FlightSample& s : flight) {
    if (!s.ascent) break;
    builder.add(s.p_pa, s.t_k, s.tv_k);
    if (!model || builder.revision() != seen_revision) {
      seen_revision = builder.revision();
      if (model) {
        model->set_profile(builder.build());
      } else {
        model.emplace(builder.build());
      }
      ++rebuilds;
    }
    INFO("z = " << s.z_m);
    const HeightEval e = model->evaluate(s.p_pa, kNaN, ref);
    REQUIRE(e.valid);
    CHECK_FALSE(e.extrapolated);
    CHECK(std::fabs(e.height_m - s.z_m) <= std::max(1e-3 * s.z_m, 0.5));
  }
  // About one rebuild per layer, not one per sample.
  CHECK(rebuilds <= builder.layers() + 5);
  CHECK(rebuilds + 5 >= builder.layers());
  // A hover in one layer opens no new layer.
  ProfileBuilder hover;
  for (int i = 0; i < 10; ++i) hover.add(85000.0, 280.0, kNaN);
  const std::size_t r = hover.revision();
  CHECK(r >= 1);
  for (int i = 0; i < 100; ++i) hover.add(85000.0, 280.0, kNaN);
  CHECK(hover.revision() == r);
  hover.add(84000.0, 279.0, kNaN);  // ~90 m' higher: a new layer
  CHECK(hover.revision() != r);
}

TEST_CASE("profile builder: a noisy climb rebuilds about once per layer",
          "[models][profile][builder]") {
  // A 10 Hz climb at 5 m/s (0.5 m a sample) with 3 m of pressure-height
  // noise: most samples are no new top, so the samples below the top are
  // collected apart and merged at the next top, re-entering layers the
  // climb already holds. Those are no new nodes of the ascent (or of both
  // legs): revision() may change only about once per layer. Source: the
  // contract of ProfileBuilder::revision(); the noise is invented.
  const SyntheticAtmosphere& a = synthetic();
  std::mt19937 rng(7u);
  std::normal_distribution<double> noise(0.0, 3.0);
  for (ProfileLeg leg : {ProfileLeg::kAscent, ProfileLeg::kAll}) {
    ProfileBuilder builder(ProfileOptions{leg, 50.0});
    std::size_t seen = 0;
    std::size_t changes = 0;
    for (int i = 0; i < 20000; ++i) {  // to 10 km
      const double z = 0.5 * i + noise(rng);
      builder.add(a.pressure(static_cast<int>(std::lround(std::max(0.0, z)))), 280.0, kNaN);
      if (builder.revision() != seen) {
        seen = builder.revision();
        ++changes;
      }
    }
    INFO("leg " << profile_leg_name(leg) << ": " << changes << " changes, " << builder.layers()
                << " layers");
    CHECK(changes <= builder.layers() + 5);
    CHECK(changes + 5 >= builder.layers());
  }
}

TEST_CASE("profile builder: a build after many builds equals a fresh one",
          "[models][profile][builder]") {
  // build() keeps the nodes of layers whose samples have not changed since
  // the last build. Check that repeated causal builds (every 37 samples)
  // give, at checkpoints, exactly the nodes of a builder fed the same samples
  // and built once, for every leg, over an ascent to 12 km and a descent
  // with temperature noise (a hover at the ground, thinning in the layers
  // of the slow part). Source: by construction (the cache must be exact).
  const std::vector<FlightSample> flight = synthetic_flight(12000, 0.3, 300);
  for (ProfileLeg leg : {ProfileLeg::kAscent, ProfileLeg::kDescent, ProfileLeg::kAll}) {
    ProfileBuilder causal(ProfileOptions{leg, 50.0});
    std::size_t checked = 0;
    for (std::size_t i = 0; i < flight.size(); ++i) {
      causal.add(flight[i].p_pa, flight[i].t_k, flight[i].tv_k);
      const bool checkpoint = i % 211 == 210 || i + 1 == flight.size();
      if (i % 37 != 0 && !checkpoint) continue;
      std::optional<TemperatureProfile> built;
      try {
        built.emplace(causal.build());
      } catch (const Error&) {
        continue;  // the leg has no sample yet (the descent before the top)
      }
      if (!checkpoint) continue;
      ProfileBuilder fresh(ProfileOptions{leg, 50.0});
      for (std::size_t j = 0; j <= i; ++j) fresh.add(flight[j].p_pa, flight[j].t_k, flight[j].tv_k);
      const TemperatureProfile once = fresh.build();
      INFO("leg " << profile_leg_name(leg) << ", after sample " << i);
      REQUIRE(built->size() == once.size());
      for (std::size_t k = 0; k < once.size(); ++k) {
        const ProfileNode& x = built->nodes()[k];
        const ProfileNode& y = once.nodes()[k];
        CHECK(x.pressure_pa == y.pressure_pa);
        CHECK(x.temperature_k == y.temperature_k);
        CHECK((x.virtual_temperature_k == y.virtual_temperature_k ||
               (std::isnan(x.virtual_temperature_k) && std::isnan(y.virtual_temperature_k))));
        CHECK(x.samples == y.samples);
        CHECK(x.median == y.median);
      }
      CHECK(built->covered_bottom_pa() == once.covered_bottom_pa());
      CHECK(built->covered_top_pa() == once.covered_top_pa());
      ++checked;
    }
    CHECK(checked >= 3);
  }
}

TEST_CASE("profile builder: the layer thickness sets the nodes", "[models][profile][builder]") {
  const std::vector<FlightSample> flight = synthetic_flight(10000, 0.2, 0);
  for (double layer : {20.0, 50.0, 200.0}) {
    INFO("layer " << layer << " m'");
    ProfileBuilder builder(ProfileOptions{ProfileLeg::kAscent, layer});
    for (const FlightSample& s : flight) builder.add(s.p_pa, s.t_k, s.tv_k);
    const TemperatureProfile profile = builder.build();
    // Layers of `layer` m' of the standard atmosphere from 0 to ~10 km.
    const double span = ussa76::geopotential_at_pressure(synthetic().pressure(10000)) -
                        ussa76::geopotential_at_pressure(synthetic().pressure(0));
    CHECK(std::fabs(static_cast<double>(profile.size()) - span / layer) <= 2.0);
    // The heights stay within 0.1 % for any of these layers.
    ProfileModel model(profile);
    const ReferencePoint ref{kGroundPressurePa, 303.15, 0.0};
    for (int z : {500, 3000, 9000}) {
      const HeightEval e = model.evaluate(synthetic().pressure(z), kNaN, ref);
      CHECK(std::fabs(e.height_m - z) <= 1e-3 * z);
    }
  }
}
