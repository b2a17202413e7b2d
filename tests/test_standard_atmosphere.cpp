// Tests of the U.S. Standard Atmosphere 1976 (baroz::ussa76), the
// geopotential conversion and the `standard` height model.
#include <algorithm>
#include <array>
#include <catch2/catch.hpp>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "baroz/core/constants.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/models/standard_model.hpp"

namespace {

using namespace baroz;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kRPerG0 = constants::kRAir / constants::kG0;

// ---- A small driver for the data files under tests/reference/: '#' starts
// a comment (whole line or trailing), "tolerance NAME VALUE" lines set the
// tolerances, every other line is a row of whitespace-separated fields.
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

double tolerance_of(const DataFile& file, const std::string& name) {
  const auto it = file.tolerance.find(name);
  if (it == file.tolerance.end()) FAIL("reference file has no tolerance " << name);
  return it->second;
}

double rel_diff(double a, double b) {
  return std::fabs(a - b) / std::fabs(b);
}

ReferencePoint ref_at(double p_ref_pa, double datum_geopotential_m = kNaN) {
  return ReferencePoint{p_ref_pa, 288.15, datum_geopotential_m};
}

// Simpson integration of T_M(p') d(ln p') from p to p_ref [K], split at the
// layer bases so that the integrand is smooth on every piece.
double integral_t_dlnp(double p_pa, double p_ref_pa, double offset_k) {
  const double lo = std::min(p_pa, p_ref_pa);
  const double hi = std::max(p_pa, p_ref_pa);
  std::vector<double> cuts{lo};
  for (const auto& base : ussa76::layer_bases()) {
    if (base.pressure_pa > lo && base.pressure_pa < hi) cuts.push_back(base.pressure_pa);
  }
  cuts.push_back(hi);
  std::sort(cuts.begin(), cuts.end());
  double sum = 0.0;
  for (std::size_t k = 0; k + 1 < cuts.size(); ++k) {
    const double a = std::log(cuts[k]);
    const double b = std::log(cuts[k + 1]);
    constexpr int kSteps = 400;  // even
    const double step = (b - a) / kSteps;
    auto f = [offset_k](double lnp) {
      return ussa76::temperature_at_pressure(std::exp(lnp)) + offset_k;
    };
    double s = f(a) + f(b);
    for (int i = 1; i < kSteps; ++i) s += (i % 2 == 1 ? 4.0 : 2.0) * f(a + i * step);
    sum += s * step / 3.0;
  }
  return p_ref_pa >= p_pa ? sum : -sum;
}

}  // namespace

TEST_CASE("ussa76 layer bases match the printed base pressures and temperatures",
          "[models][ussa76]") {
  const auto& bases = ussa76::layer_bases();
  // Source: U.S. Standard Atmosphere 1976, Table 4 (H_b, L_b defining; T_b),
  // via reference-values.md section 1.3 (S2).
  const std::array<double, 8> h_b = {0, 11000, 20000, 32000, 47000, 51000, 71000, 84852};
  const std::array<double, 8> l_b = {-0.0065, 0.0, 0.0010, 0.0028, 0.0, -0.0028, -0.0020, 0.0};
  const std::array<double, 8> t_b = {288.15, 216.65, 216.65, 228.65,
                                     270.65, 270.65, 214.65, 186.946};
  // Source: printed P_b values of USSA76-based public implementations,
  // reference-values.md section 1.3 (S2); 101325 Pa is the defining P0.
  const std::array<double, 8> p_b = {101325.0, 22632.06, 5474.889, 868.0187,
                                     110.9063, 66.93887, 3.956420, 0.3733836};
  for (std::size_t b = 0; b < 8; ++b) {
    INFO("base " << b);
    CHECK(bases[b].geopotential_m == h_b[b]);
    if (b < 7) CHECK(bases[b].lapse_rate_k_m == l_b[b]);
    CHECK(std::fabs(bases[b].temperature_k - t_b[b]) <= 1e-9);
    // 1e-6 relative separates USSA76 (M0 = 28.9644) from ICAO (28.964420),
    // whose base pressures are lower by 1.0e-6 ... 8.6e-6 (section 1.1).
    CHECK(rel_diff(bases[b].pressure_pa, p_b[b]) <= 1e-6);
  }
  CHECK(ussa76::min_pressure_pa() == bases[7].pressure_pa);
}

TEST_CASE("ussa76 pressure and temperature are continuous across the layer bases",
          "[models][ussa76]") {
  const auto& bases = ussa76::layer_bases();
  for (std::size_t b = 1; b < bases.size(); ++b) {
    INFO("base " << b);
    const double h = bases[b].geopotential_m;
    const double below = std::nextafter(h, -1e9);
    // Layer b-1's formula just below the base and layer b's at the base.
    CHECK(rel_diff(ussa76::pressure_at(below), ussa76::pressure_at(h)) <= 1e-12);
    CHECK(std::fabs(ussa76::temperature_at(below) - ussa76::temperature_at(h)) <= 1e-9);
    CHECK(ussa76::pressure_at(h) == bases[b].pressure_pa);
    CHECK(std::fabs(ussa76::geopotential_at_pressure(bases[b].pressure_pa) - h) <= 1e-6);
    // The inverse from both sides of the base pressure.
    const double p = bases[b].pressure_pa;
    const double h_above = ussa76::geopotential_at_pressure(std::nextafter(p, 0.0));
    const double h_below = ussa76::geopotential_at_pressure(std::nextafter(p, 1e9));
    CHECK(std::fabs(h_above - h_below) <= 1e-6);
  }
}

TEST_CASE("geometric and geopotential altitude convert per USSA76 eq. 18", "[models][ussa76]") {
  // Source: reference-values.md section 1.3, Z_b column (recomputed there
  // from eq. 18 with r0 = 6 356 766 m).
  const std::array<double, 8> h_b = {0, 11000, 20000, 32000, 47000, 51000, 71000, 84852};
  const std::array<double, 8> z_b = {0.0,      11019.07, 20063.12, 32161.90,
                                     47350.09, 51412.48, 71801.97, 85999.95};
  for (std::size_t b = 0; b < 8; ++b) {
    INFO("base " << b);
    CHECK(std::fabs(geometric_from_geopotential(h_b[b]) - z_b[b]) <= 0.01);
  }
  // Source: reference-values.md section 1.4, H column (recomputed from eq. 18).
  CHECK(std::fabs(geopotential_from_geometric(-2000.0) - (-2000.63)) <= 0.01);
  CHECK(std::fabs(geopotential_from_geometric(1000.0) - 999.84) <= 0.01);
  CHECK(std::fabs(geopotential_from_geometric(10000.0) - 9984.29) <= 0.01);
  CHECK(std::fabs(geopotential_from_geometric(86000.0) - 84852.05) <= 0.01);

  for (double z = -5000.0; z <= 100000.0; z += 437.5) {
    INFO("z = " << z);
    CHECK(std::fabs(geometric_from_geopotential(geopotential_from_geometric(z)) - z) <= 1e-9);
    CHECK(std::fabs(geopotential_from_geometric(geometric_from_geopotential(z)) - z) <= 1e-9);
    // dZ/dH against a central difference of Z(H).
    const double step = 1.0;
    const double fd =
        (geometric_from_geopotential(z + step) - geometric_from_geopotential(z - step)) /
        (2 * step);
    CHECK(rel_diff(geometric_per_geopotential(z), fd) <= 1e-9);
    // The cancellation-free difference against the plain one.
    const double dh = 1234.5;
    const double plain = geometric_from_geopotential(z + dh) - geometric_from_geopotential(z);
    CHECK(rel_diff(geometric_height_difference(z, dh), plain) <= 1e-9);
  }
  CHECK(geometric_per_geopotential(0.0) == 1.0);
  CHECK(geometric_height_difference(1000.0, 0.0) == 0.0);
}

TEST_CASE("ussa76 reproduces Table I to 86 km", "[models][ussa76]") {
  const DataFile file = read_data_file("ussa76_table1.txt");
  const double tol_t = tolerance_of(file, "t_k");
  const double tol_p = tolerance_of(file, "p_rel");
  const double tol_rho = tolerance_of(file, "rho_rel");
  int rows = 0;
  for (const auto& row : file.rows) {
    REQUIRE(row.size() == 5);
    const double z = to_double(row[0]);
    const std::string& note = row[4];
    INFO("Table I row z = " << z << " m" << (note == "from_memory" ? " (from memory)" : ""));
    const double h = geopotential_from_geometric(z);
    // Source: U.S. Standard Atmosphere 1976, Table I (see the file header).
    if (note != "kinetic_t") {
      CHECK(std::fabs(ussa76::temperature_at(h) - to_double(row[1])) <= tol_t);
    }
    CHECK(rel_diff(ussa76::pressure_at(h), to_double(row[2])) <= tol_p);
    CHECK(rel_diff(ussa76::density_at(h), to_double(row[3])) <= tol_rho);
    ++rows;
  }
  CHECK(rows == 28);
}

TEST_CASE("ussa76 inverse reproduces the pressure-altitude table", "[models][ussa76]") {
  const DataFile file = read_data_file("ussa76_pressure_altitude.txt");
  const double tol_h = tolerance_of(file, "h_m");
  const double tol_z = tolerance_of(file, "z_m");
  const double tol_t = tolerance_of(file, "t_k");
  const double tol_ft = tolerance_of(file, "h_ft");
  StandardModel model;
  int rows = 0;
  for (const auto& row : file.rows) {
    REQUIRE(row.size() == 5);
    const double p = to_double(row[0]) * 100.0;
    INFO("p = " << row[0] << " hPa");
    // Source: reference-values.md section 1.5 (recomputed, flag R).
    const double h = ussa76::geopotential_at_pressure(p);
    CHECK(std::fabs(h - to_double(row[1])) <= tol_h);
    CHECK(std::fabs(geometric_from_geopotential(h) - to_double(row[2])) <= tol_z);
    CHECK(std::fabs(ussa76::temperature_at_pressure(p) - to_double(row[3])) <= tol_t);
    CHECK(std::fabs(h / constants::kFoot - to_double(row[4])) <= tol_ft);
    // The standard model above the sea-level reference at the MSL datum.
    for (double datum : {0.0, kNaN}) {
      const HeightEval e = model.evaluate(p, kNaN, ref_at(constants::kP0, datum));
      REQUIRE(e.valid);
      CHECK(std::fabs(e.geopotential_m - to_double(row[1])) <= tol_h);
      CHECK(std::fabs(e.height_m - to_double(row[2])) <= tol_z);
    }
    ++rows;
  }
  CHECK(rows == 29);
}

TEST_CASE("ussa76 matches the NCL spot value at 100 m", "[models][ussa76]") {
  // Source: NCAR Command Language documentation of stdatmus_p2tdz (1976 US
  // standard atmosphere): p = 1001.29 hPa <-> 100 m, T = 14.35 degC,
  // rho = 1.21328 kg/m3 (reference-values.md section 1.4, flag S).
  // 0.005 hPa of print resolution is 0.04 m.
  CHECK(std::fabs(ussa76::geopotential_at_pressure(100129.0) - 100.0) <= 0.05);
  CHECK(std::fabs(ussa76::temperature_at_pressure(100129.0) - (14.35 + constants::kZeroCelsius)) <=
        0.006);
  CHECK(std::fabs(ussa76::pressure_at(100.0) - 100129.0) <= 0.5);
  CHECK(rel_diff(ussa76::density_at(100.0), 1.21328) <= 1e-5);
}

TEST_CASE("ussa76 height -> pressure -> height round trip", "[models][ussa76]") {
  for (double h = -3000.0; h <= 84000.0; h += 97.0) {
    INFO("h = " << h);
    const double p = ussa76::pressure_at(h);
    CHECK(std::fabs(ussa76::geopotential_at_pressure(p) - h) <= 1e-6);
    CHECK(std::fabs(ussa76::temperature_at_pressure(p) - ussa76::temperature_at(h)) <= 1e-9);
    const ussa76::Level level = ussa76::level_at_pressure(p);
    CHECK(std::fabs(level.log_pressure_ratio - std::log(p / constants::kP0)) <= 1e-12);
    // Hydrostatic equation dP/dH = -P g0 / (R T_M) against a central difference.
    const double fd = (ussa76::pressure_at(h + 0.5) - ussa76::pressure_at(h - 0.5));
    CHECK(rel_diff(fd, -p / (kRPerG0 * ussa76::temperature_at(h))) <= 1e-6);
  }
}

TEST_CASE("ussa76 valid range and its extension", "[models][ussa76]") {
  CHECK(ussa76::kMinGeopotentialM == -5000.0);
  CHECK(ussa76::kMaxGeopotentialM == 84852.0);
  CHECK(ussa76::max_pressure_pa() == ussa76::pressure_at(ussa76::kMinGeopotentialM));
  // The product accepts pressures up to 1500 hPa (product spec, "Pinned details").
  CHECK(ussa76::max_pressure_pa() > 150000.0);
  CHECK(ussa76::pressure_in_range(150000.0));
  CHECK(ussa76::pressure_in_range(ussa76::min_pressure_pa()));
  CHECK(ussa76::pressure_in_range(ussa76::max_pressure_pa()));
  CHECK_FALSE(ussa76::pressure_in_range(std::nextafter(ussa76::min_pressure_pa(), 0.0)));
  CHECK_FALSE(ussa76::pressure_in_range(std::nextafter(ussa76::max_pressure_pa(), 1e9)));
  CHECK_FALSE(ussa76::pressure_in_range(kNaN));
  CHECK_FALSE(ussa76::pressure_in_range(0.0));
  CHECK(std::fabs(ussa76::geopotential_at_pressure(ussa76::max_pressure_pa()) + 5000.0) <= 1e-6);

  // Outside the range the nearest layer's formula is extended: layer 0 below
  // -5 km' (troposphere inverse, section 1.3), layer 6 above 84.852 km'.
  const double p_high = 200000.0;
  const double h_tropo =
      (constants::kT0 / 0.0065) * (1.0 - std::pow(p_high / constants::kP0, kRPerG0 * 0.0065));
  CHECK(std::fabs(ussa76::geopotential_at_pressure(p_high) - h_tropo) <= 1e-6);
  const double h_low = ussa76::geopotential_at_pressure(0.1);
  CHECK(h_low > ussa76::kMaxGeopotentialM);
  CHECK(std::fabs(ussa76::pressure_at(h_low) - 0.1) <= 1e-12);
  CHECK(std::fabs(ussa76::temperature_at(h_low) - (214.65 - 0.0020 * (h_low - 71000.0))) <= 1e-9);

  // The reasons state the limits as computed.
  char text[128];
  std::snprintf(text, sizeof text, "(%.4f Pa to %.2f hPa)", ussa76::min_pressure_pa(),
                ussa76::max_pressure_pa() / 100.0);
  INFO(text);
  CHECK(StandardModel::kReasonPressureRange.find(text) != std::string_view::npos);
  CHECK(StandardModel::kReasonReferenceRange.find(text) != std::string_view::npos);
}

TEST_CASE("standard model rejects pressures outside its range", "[models][standard]") {
  StandardModel model;
  CHECK(model.kind() == ModelKind::kStandard);
  CHECK_FALSE(model.needs_sample_temperature());
  const ReferencePoint ref = ref_at(constants::kP0);
  // Source: lower limit P(84852 m') = 0.3733836 Pa as printed (section 1.3).
  for (double p : {0.3733835, 0.1, 0.0, -5.0, kNaN, 177700.0, 200000.0,
                   std::numeric_limits<double>::infinity()}) {
    INFO("p = " << p);
    const HeightEval e = model.evaluate(p, 288.15, ref);
    CHECK_FALSE(e.valid);
    CHECK(e.reason == StandardModel::kReasonPressureRange);
  }
  for (double p : {0.3733836, ussa76::min_pressure_pa(), 150000.0, ussa76::max_pressure_pa()}) {
    INFO("p = " << p);
    CHECK(model.evaluate(p, kNaN, ref).valid);
  }
  for (double p_ref : {0.1, 200000.0, kNaN, 0.0}) {
    INFO("p_ref = " << p_ref);
    const HeightEval e = model.evaluate(90000.0, kNaN, ref_at(p_ref));
    CHECK_FALSE(e.valid);
    CHECK(e.reason == StandardModel::kReasonReferenceRange);
  }
  // A rejected reference does not poison the cache.
  const HeightEval good = model.evaluate(90000.0, kNaN, ref);
  REQUIRE(good.valid);
  CHECK(std::fabs(good.geopotential_m - ussa76::geopotential_at_pressure(90000.0)) <= 1e-9);
}

TEST_CASE("standard model follows a changing reference and datum", "[models][standard]") {
  StandardModel model;
  const double p = 70000.0;
  for (double p_ref : {101325.0, 95000.0, 95000.0, 101325.0, 87000.0, 87000.0}) {
    for (double datum : {kNaN, 0.0, 1500.0}) {
      INFO("p_ref = " << p_ref << ", datum = " << datum);
      const HeightEval e = model.evaluate(p, kNaN, ref_at(p_ref, datum));
      REQUIRE(e.valid);
      const double h_ref = ussa76::geopotential_at_pressure(p_ref);
      const double dh = ussa76::geopotential_at_pressure(p) - h_ref;
      const double hd = std::isnan(datum) ? h_ref : datum;
      CHECK(std::fabs(e.geopotential_m - dh) <= 1e-9);
      CHECK(std::fabs(e.height_m - (geometric_from_geopotential(hd + dh) -
                                    geometric_from_geopotential(hd))) <= 1e-8);
      CHECK(e.dh_dt == 0.0);
      CHECK_FALSE(e.extrapolated);
    }
  }
}

TEST_CASE("standard model agrees with the NWS pressure-altitude formula", "[models][standard]") {
  StandardModel model;
  const ReferencePoint ref = ref_at(constants::kP0, 0.0);
  struct Row {
    double p_hpa, nws_ft, nws_m, isa_m;
  };
  // Source: reference-values.md section 2.1 table (recomputed, flag R).
  const std::array<Row, 9> rows = {{{1050, -988.8, -301.39, -301.52},
                                    {1000, 363.6, 110.84, 110.88},
                                    {900, 3241.8, 988.09, 988.50},
                                    {850, 4779.2, 1456.70, 1457.30},
                                    {700, 9878.4, 3010.93, 3012.18},
                                    {500, 18281.2, 5572.10, 5574.44},
                                    {300, 30052.7, 9160.08, 9163.96},
                                    {250, 33984.7, 10358.54, 10362.95},
                                    {226.32, 36073.9, 10995.33, 11000.02}}};
  for (const Row& row : rows) {
    INFO("p = " << row.p_hpa << " hPa");
    // Source: NWS "Pressure Altitude" formula sheet (flag S):
    // h_alt [ft] = (1 - (P_sta/1013.25)^0.190284) x 145366.45, h [m] = 0.3048 h_alt.
    const double nws_ft = (1.0 - std::pow(row.p_hpa / 1013.25, 0.190284)) * 145366.45;
    const double nws_m = 0.3048 * nws_ft;
    CHECK(std::fabs(nws_ft - row.nws_ft) <= 0.06);  // our transcription of the sheet
    CHECK(std::fabs(nws_m - row.nws_m) <= 0.006);
    const HeightEval e = model.evaluate(row.p_hpa * 100.0, kNaN, ref);
    REQUIRE(e.valid);
    CHECK(std::fabs(e.geopotential_m - row.isa_m) <= 0.006);
    // The NWS formula (T0 = 288 K, n = 0.190284) runs about 0.05 % below ISA
    // (section 2.1, 7.4): same sign, magnitude smaller by less than 0.05 %.
    const double ratio = nws_m / e.geopotential_m;
    CHECK(ratio < 1.0);
    CHECK(ratio > 1.0 - 5e-4);
  }
}

TEST_CASE("standard model gives about 8.3 m per hPa near sea level", "[models][standard]") {
  StandardModel model;
  for (double datum : {0.0, kNaN}) {
    const HeightEval e = model.evaluate(constants::kP0, kNaN, ref_at(constants::kP0, datum));
    REQUIRE(e.valid);
    CHECK(e.height_m == 0.0);
    // Source: reference-values.md section 6 table: 8.324 m/hPa at 1013.25 hPa (R).
    CHECK(std::fabs(-e.dh_dp * 100.0 - 8.324) <= 0.0005);
    // common practice: "8.3 m (27 ft) per hPa near sea level".
    CHECK(std::fabs(-e.dh_dp * 100.0 - 8.3) <= 0.05);
    CHECK(std::fabs(-e.dh_dp * 100.0 / constants::kFoot - 27.31) <= 0.005);
  }
  // Source: section 6 table, dZ/dp at 500 hPa = 14.748 m/hPa and at 10 hPa =
  // 666.52 m/hPa (R; geopotential, so compare dH/dp = dh_dp / Z').
  for (auto [p_hpa, slope] : {std::pair{500.0, 14.748}, std::pair{10.0, 666.52}}) {
    const HeightEval e = model.evaluate(p_hpa * 100.0, kNaN, ref_at(constants::kP0, 0.0));
    const double dh_dp_geo =
        e.dh_dp / geometric_per_geopotential(ussa76::geopotential_at_pressure(p_hpa * 100.0));
    CHECK(std::fabs(-dh_dp_geo * 100.0 - slope) <= 0.0005 * slope);
  }
}

TEST_CASE("standard model derivatives match central finite differences", "[models][standard]") {
  StandardModel model;
  const std::array<double, 10> pressures = {99000, 95000, 70000, 30000, 15000,
                                            2000,  500,   100,   10,    1};
  const std::array<double, 3> refs = {101325.0, 95500.0, 84000.0};
  const std::array<double, 3> datums = {kNaN, 0.0, 1234.5};
  auto height = [&model](double p, double p_ref, double datum) {
    const HeightEval e = model.evaluate(p, kNaN, ref_at(p_ref, datum));
    REQUIRE(e.valid);
    return e.height_m;
  };
  for (double p : pressures) {
    for (double p_ref : refs) {
      for (double datum : datums) {
        INFO("p = " << p << ", p_ref = " << p_ref << ", datum = " << datum);
        const HeightEval e = model.evaluate(p, kNaN, ref_at(p_ref, datum));
        REQUIRE(e.valid);
        const double dp = 1e-4 * p;
        const double fd_p =
            (height(p + dp, p_ref, datum) - height(p - dp, p_ref, datum)) / (2 * dp);
        CHECK(rel_diff(e.dh_dp, fd_p) <= 1e-6);
        const double dpr = 1e-4 * p_ref;
        const double fd_pref =
            (height(p, p_ref + dpr, datum) - height(p, p_ref - dpr, datum)) / (2 * dpr);
        CHECK(rel_diff(e.dh_dpref, fd_pref) <= 1e-6);
        CHECK(e.dh_dt == 0.0);

        // dh_dtmodel: a uniform offset dT of the temperature as a function of
        // pressure, integrated with the hypsometric equation, datum fixed.
        const double hd = std::isnan(datum) ? ussa76::geopotential_at_pressure(p_ref) : datum;
        auto perturbed = [&](double offset_k) {
          const double dh = kRPerG0 * integral_t_dlnp(p, p_ref, offset_k);
          return geometric_from_geopotential(hd + dh) - geometric_from_geopotential(hd);
        };
        // The integration reproduces the closed form (hypsometric consistency).
        CHECK(std::fabs(kRPerG0 * integral_t_dlnp(p, p_ref, 0.0) - e.geopotential_m) <= 1e-6);
        const double fd_t = (perturbed(1.0) - perturbed(-1.0)) / 2.0;
        CHECK(rel_diff(e.dh_dtmodel, fd_t) <= 1e-6);
      }
    }
  }
}

TEST_CASE("hypsometric integration of the standard profile gives the 1000-500 hPa thickness",
          "[models][ussa76]") {
  // Source: reference-values.md section 4.3 (recomputed, flag R): ISA
  // Z(1000 hPa) = 110.885 m', Z(500 hPa) = 5574.437 m', thickness 5463.553 m',
  // log-p-mean temperature 269.283 K.
  CHECK(std::fabs(ussa76::geopotential_at_pressure(100000.0) - 110.885) <= 0.0005);
  CHECK(std::fabs(ussa76::geopotential_at_pressure(50000.0) - 5574.437) <= 0.0005);
  const double thickness = kRPerG0 * integral_t_dlnp(50000.0, 100000.0, 0.0);
  CHECK(std::fabs(thickness - 5463.553) <= 0.001);
  CHECK(std::fabs(thickness / (kRPerG0 * std::log(2.0)) - 269.283) <= 0.0005);
}

TEST_CASE("altimeter relation with QNH", "[models][ussa76]") {
  for (double p : {101325.0, 95000.0, 80000.0, 50000.0, 20000.0, 5.0}) {
    INFO("p = " << p);
    CHECK(ussa76::altimeter_geopotential(p, p) == 0.0);
    CHECK(ussa76::altimeter_altitude(p, p) == 0.0);
    // QNH = 1013.25 hPa: the altimeter shows the standard altitude.
    CHECK(std::fabs(ussa76::altimeter_geopotential(p, 101325.0) -
                    ussa76::geopotential_at_pressure(p)) <= 1e-9);
    CHECK(std::fabs(ussa76::altimeter_altitude(p, 101325.0) -
                    geometric_from_geopotential(ussa76::geopotential_at_pressure(p))) <= 1e-9);
  }
  // Independent value: the troposphere inverse of section 1.3 with its
  // printed constants, H = (T0/L)[1 - (P/P0)^(R L/g0)], T0/L = 44 330.769 m',
  // R L/g0 = 0.19026324 (R); H(p) - H(QNH) = 44330.769 [(QNH/P0)^n - (p/P0)^n].
  StandardModel model;
  for (double qnh : {103000.0, 99000.0, 101325.0, 97500.0}) {
    for (double p : {qnh, 100000.0, 90000.0, 75000.0, 60000.0, 30000.0}) {
      INFO("QNH = " << qnh << ", p = " << p);
      const double n = 0.19026324;
      const double expected = 44330.769 * (std::pow(qnh / 101325.0, n) - std::pow(p / 101325.0, n));
      CHECK(std::fabs(ussa76::altimeter_geopotential(p, qnh) - expected) <= 1e-3);
      // The standard model referenced to QNH at the MSL datum gives the
      // same geometric altitude (how the pipeline applies --qnh).
      const HeightEval e = model.evaluate(p, kNaN, ref_at(qnh, 0.0));
      REQUIRE(e.valid);
      CHECK(std::fabs(e.height_m - ussa76::altimeter_altitude(p, qnh)) <= 1e-8);
    }
  }
  // Source: reference-values.md section 2.2, form (c) table (ICAO-ISA QNH
  // reduction, recomputed, flag R): station pressure p at elevation h gives
  // QNH; the altimeter set to it indicates h. 0.005 hPa of print resolution
  // in QNH is 0.042 m.
  struct Case {
    double p_hpa, h_m, qnh_hpa;
  };
  for (const Case& c : {Case{1013.25, 0, 1013.25}, Case{1000, 0, 1000.00}, Case{1000, 100, 1011.94},
                        Case{900, 1000, 1014.63}, Case{850, 1500, 1018.39},
                        Case{800, 2000, 1019.39}, Case{700, 3000, 1011.79}}) {
    INFO("p = " << c.p_hpa << " hPa, h = " << c.h_m << " m");
    CHECK(std::fabs(ussa76::altimeter_geopotential(c.p_hpa * 100.0, c.qnh_hpa * 100.0) - c.h_m) <=
          0.05);
  }
}
