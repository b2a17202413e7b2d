// Tests of the `isothermal` height model (hypsometric equation with one
// temperature) and of the model names.
#include <array>
#include <catch2/catch.hpp>
#include <cmath>
#include <limits>

#include "baroz/core/constants.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/isothermal_model.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/models/standard_model.hpp"

namespace {

using namespace baroz;

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double rel_diff(double a, double b) {
  return std::fabs(a - b) / std::fabs(b);
}

HeightEval eval_iso(double p, double t_sample, double p_ref, double t_ref, double datum,
                    IsothermalTemperature choice = IsothermalTemperature::kReference) {
  IsothermalModel model(choice);
  return model.evaluate(p, t_sample, ReferencePoint{p_ref, t_ref, datum});
}

}  // namespace

TEST_CASE("isothermal model reproduces a hand-worked case", "[models][isothermal]") {
  // Worked by hand (with a calculator), USSA76 constants:
  //   R = R*/M0 = 8.31432 / 0.0289644 = 287.053072 J/(kg K)
  //   R/g0 = 287.053072 / 9.80665 = 29.2712672 m'/K
  //   scale height at 288.15 K: 29.2712672 x 288.15 = 8434.51563 m'
  //   ln(1013.25 / 900) = ln(1.12583333) = 0.118523502
  //   h = 8434.51563 x 0.118523502 = 999.6883 m' (geopotential)
  //   geometric above the MSL datum (USSA76 eq. 18):
  //   Z = r0 h / (r0 - h) = 6356766 x 999.6883 / 6355766.31 = 999.8456 m
  const HeightEval e = eval_iso(90000.0, kNaN, 101325.0, 288.15, 0.0);
  REQUIRE(e.valid);
  CHECK(std::fabs(e.geopotential_m - 999.6883) <= 1e-4);
  CHECK(std::fabs(e.height_m - 999.8456) <= 1e-4);
  // With the datum left to the model (NaN), p_ref = P0 places it at 0 m'.
  const HeightEval e2 = eval_iso(90000.0, kNaN, 101325.0, 288.15, kNaN);
  REQUIRE(e2.valid);
  CHECK(std::fabs(e2.height_m - 999.8456) <= 1e-4);
  CHECK(e.dh_dtmodel == 0.0);
  CHECK_FALSE(e.extrapolated);
}

TEST_CASE("isothermal model reproduces textbook thicknesses", "[models][isothermal]") {
  // Source: Wallace & Hobbs 2006, exercise 3.3 (from memory, flag M):
  // 1000-500 hPa thickness with mean virtual temperature 15 degC is 5846 m
  // (tropics) and with -40 degC 4730 m (polar); recomputed with R = 287.05,
  // g0 = 9.80665 (reference-values.md section 5, R): 5846.4 m and 4730.4 m.
  const HeightEval warm = eval_iso(50000.0, kNaN, 100000.0, 288.15, 0.0);
  const HeightEval cold = eval_iso(50000.0, kNaN, 100000.0, 233.15, 0.0);
  REQUIRE(warm.valid);
  REQUIRE(cold.valid);
  CHECK(std::fabs(warm.geopotential_m - 5846.4) <= 0.05);
  CHECK(std::fabs(cold.geopotential_m - 4730.4) <= 0.05);
  CHECK(std::fabs(warm.geopotential_m - 5846.0) <= 0.5);  // from memory
  CHECK(std::fabs(cold.geopotential_m - 4730.0) <= 0.5);  // from memory
  // Source: reference-values.md section 5: (R_d/g0) ln 2 = 20.289 m/K (R),
  // rounded to 20.3 m/K by Wallace & Hobbs.
  const HeightEval warmer = eval_iso(50000.0, kNaN, 100000.0, 289.15, 0.0);
  CHECK(std::fabs((warmer.geopotential_m - warm.geopotential_m) - 20.289) <= 0.0005);
  CHECK(std::fabs(warm.dh_dt / geometric_per_geopotential(warm.geopotential_m) - 20.289) <= 0.0005);

  // Source: Wallace & Hobbs 2006, exercise 3.2 (answer from a secondary
  // quotation, flag S; wording M): sea-level pressure 1014 hPa, scale height
  // 8 km: the 1000 hPa surface is at about 112 m (8 km x 0.014); the exact
  // logarithm gives 111.22 m (reference-values.md section 5, R).
  const double t_8km = 8000.0 * constants::kG0 / constants::kRAir;  // scale height 8 km
  const HeightEval ex32 = eval_iso(100000.0, kNaN, 101400.0, t_8km, 0.0);
  CHECK(std::fabs(ex32.geopotential_m - 111.22) <= 0.005);
  CHECK(std::fabs(ex32.geopotential_m - 112.0) <= 1.0);
}

TEST_CASE("isothermal model gives about 8.3 m per hPa near sea level", "[models][isothermal]") {
  const HeightEval e = eval_iso(101325.0, kNaN, 101325.0, 288.15, 0.0);
  REQUIRE(e.valid);
  CHECK(e.height_m == 0.0);
  // Source: reference-values.md section 6: 8.324 m/hPa at 1013.25 hPa, 288.15 K (R).
  CHECK(std::fabs(-e.dh_dp * 100.0 - 8.324) <= 0.0005);
  // common practice: 8.3 m per hPa near sea level.
  CHECK(std::fabs(-e.dh_dp * 100.0 - 8.3) <= 0.05);
  CHECK(std::fabs(-e.dh_dpref * 100.0 - 8.324) > 1.0);     // opposite sign ...
  CHECK(std::fabs(e.dh_dpref * 100.0 - 8.324) <= 0.0005);  // ... same size
}

TEST_CASE("isothermal model agrees with the standard atmosphere's isothermal layer",
          "[models][isothermal]") {
  // In 11-20 km' the standard atmosphere is isothermal at 216.65 K (USSA76
  // Table 4), so both models must give the same heights there.
  const double p_ref = ussa76::layer_bases()[1].pressure_pa;
  StandardModel standard;
  for (double p : {22000.0, 15000.0, 9000.0, 5500.0}) {
    for (double datum : {kNaN, 11000.0, 0.0}) {
      INFO("p = " << p << ", datum = " << datum);
      const HeightEval iso = eval_iso(p, kNaN, p_ref, 216.65, datum);
      const HeightEval std_e = standard.evaluate(p, kNaN, ReferencePoint{p_ref, 216.65, datum});
      REQUIRE(iso.valid);
      REQUIRE(std_e.valid);
      CHECK(std::fabs(iso.geopotential_m - std_e.geopotential_m) <= 1e-6);
      CHECK(std::fabs(iso.height_m - std_e.height_m) <= 1e-6);
      CHECK(rel_diff(iso.dh_dp, std_e.dh_dp) <= 1e-9);
    }
  }
}

TEST_CASE("isothermal model follows a changing reference and datum", "[models][isothermal]") {
  IsothermalModel model;  // one instance: its cache must follow every change
  for (double p_ref : {101325.0, 95000.0, 95000.0, 101325.0, 87000.0}) {
    for (double datum : {kNaN, 0.0, 1500.0, 1500.0, kNaN}) {
      INFO("p_ref = " << p_ref << ", datum = " << datum);
      const ReferencePoint ref{p_ref, 280.0, datum};
      const HeightEval e = model.evaluate(70000.0, kNaN, ref);
      const HeightEval fresh = IsothermalModel().evaluate(70000.0, kNaN, ref);
      REQUIRE(e.valid);
      CHECK(e.height_m == fresh.height_m);
      CHECK(e.dh_dpref == fresh.dh_dpref);
      const double hd = std::isnan(datum) ? ussa76::geopotential_at_pressure(p_ref) : datum;
      CHECK(std::fabs(e.height_m - (geometric_from_geopotential(hd + e.geopotential_m) -
                                    geometric_from_geopotential(hd))) <= 1e-8);
    }
  }
}

TEST_CASE("isothermal model with the mean temperature", "[models][isothermal]") {
  IsothermalModel mean(IsothermalTemperature::kMean);
  IsothermalModel reference;
  CHECK(mean.needs_sample_temperature());
  CHECK_FALSE(reference.needs_sample_temperature());
  CHECK(mean.kind() == ModelKind::kIsothermal);
  CHECK(reference.temperature_choice() == IsothermalTemperature::kReference);

  const ReferencePoint ref{101325.0, 290.0, 0.0};
  const HeightEval m = mean.evaluate(60000.0, 250.0, ref);
  const HeightEval r = reference.evaluate(60000.0, kNaN, ReferencePoint{101325.0, 270.0, 0.0});
  REQUIRE(m.valid);
  REQUIRE(r.valid);
  CHECK(std::fabs(m.height_m - r.height_m) <= 1e-9);
  // The reference variant ignores the sample temperature.
  CHECK(reference.evaluate(60000.0, 250.0, ref).height_m ==
        reference.evaluate(60000.0, kNaN, ref).height_m);

  const HeightEval missing = mean.evaluate(60000.0, kNaN, ref);
  CHECK_FALSE(missing.valid);
  CHECK(missing.reason == "no temperature for this sample");
}

TEST_CASE("isothermal model rejects unusable inputs", "[models][isothermal]") {
  IsothermalModel model;
  const ReferencePoint ok{101325.0, 288.15, 0.0};
  CHECK(model.evaluate(90000.0, kNaN, ok).valid);
  for (double p : {0.0, -1.0, kNaN, std::numeric_limits<double>::infinity()}) {
    INFO("p = " << p);
    const HeightEval e = model.evaluate(p, kNaN, ok);
    CHECK_FALSE(e.valid);
    CHECK(e.reason == IsothermalModel::kReasonPressure);
  }
  const HeightEval bad_ref = model.evaluate(90000.0, kNaN, ReferencePoint{0.0, 288.15, 0.0});
  CHECK_FALSE(bad_ref.valid);
  CHECK(bad_ref.reason == IsothermalModel::kReasonReferencePressure);
  for (double t_ref : {kNaN, 0.0, -3.0}) {
    const HeightEval e = model.evaluate(90000.0, kNaN, ReferencePoint{101325.0, t_ref, 0.0});
    CHECK_FALSE(e.valid);
    CHECK(e.reason == IsothermalModel::kReasonNoReferenceTemperature);
  }
  IsothermalModel mean(IsothermalTemperature::kMean);
  const HeightEval cold = mean.evaluate(90000.0, -300.0, ok);
  CHECK_FALSE(cold.valid);
  CHECK(cold.reason == IsothermalModel::kReasonTemperature);
  // Tiny pressures are fine (no range), absurd ones hit the conversion limit.
  CHECK(model.evaluate(1e-3, kNaN, ok).valid);
  const HeightEval absurd = model.evaluate(1e-300, kNaN, ok);
  CHECK_FALSE(absurd.valid);
  CHECK(absurd.reason == IsothermalModel::kReasonTooHigh);
}

TEST_CASE("isothermal model derivatives match central finite differences", "[models][isothermal]") {
  for (IsothermalTemperature choice :
       {IsothermalTemperature::kReference, IsothermalTemperature::kMean}) {
    IsothermalModel model(choice);
    auto height = [&model](double p, double t, double p_ref, double t_ref, double datum) {
      const HeightEval e = model.evaluate(p, t, ReferencePoint{p_ref, t_ref, datum});
      REQUIRE(e.valid);
      return e.height_m;
    };
    for (double p : {99000.0, 80000.0, 30000.0, 5000.0, 100.0, 3.0}) {
      for (double p_ref : {101325.0, 84000.0}) {
        for (double datum : {kNaN, 0.0, 1500.0}) {
          const double t = 230.0;  // sample temperature (kMean only)
          const double t_ref = 291.0;
          INFO("choice " << static_cast<int>(choice) << ", p = " << p << ", p_ref = " << p_ref
                         << ", datum = " << datum);
          const HeightEval e = model.evaluate(p, t, ReferencePoint{p_ref, t_ref, datum});
          REQUIRE(e.valid);
          const double dp = 1e-4 * p;
          CHECK(rel_diff(e.dh_dp, (height(p + dp, t, p_ref, t_ref, datum) -
                                   height(p - dp, t, p_ref, t_ref, datum)) /
                                      (2 * dp)) <= 1e-6);
          const double dpr = 1e-4 * p_ref;
          CHECK(rel_diff(e.dh_dpref, (height(p, t, p_ref + dpr, t_ref, datum) -
                                      height(p, t, p_ref - dpr, t_ref, datum)) /
                                         (2 * dpr)) <= 1e-6);
          // kReference: d/dT_ref; kMean: a common offset of both temperatures.
          const double dt = 0.01;
          const double dts = choice == IsothermalTemperature::kMean ? dt : 0.0;
          CHECK(rel_diff(e.dh_dt, (height(p, t + dts, p_ref, t_ref + dt, datum) -
                                   height(p, t - dts, p_ref, t_ref - dt, datum)) /
                                      (2 * dt)) <= 1e-6);
          CHECK(e.dh_dtmodel == 0.0);
        }
      }
    }
  }
}

TEST_CASE("model names are the pinned ones", "[models]") {
  // Source: product specification, "Height models (names pinned)".
  CHECK(model_name(ModelKind::kIsothermal) == "isothermal");
  CHECK(model_name(ModelKind::kStandard) == "standard");
  CHECK(model_name(ModelKind::kProfile) == "profile");
  CHECK(model_name(ModelKind::kAuto) == "auto");
  for (ModelKind kind :
       {ModelKind::kIsothermal, ModelKind::kStandard, ModelKind::kProfile, ModelKind::kAuto}) {
    CHECK(parse_model_name(model_name(kind)) == kind);
  }
  CHECK_FALSE(parse_model_name("Standard").has_value());
  CHECK_FALSE(parse_model_name("").has_value());
  CHECK_FALSE(parse_model_name("isothermal ").has_value());
}
