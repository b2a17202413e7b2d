// Tests of HeightEval::dh_dt_random, the height error per kelvin of
// independent random temperature errors (one sample's sigma), in the
// profile and isothermal models, against brute-force error propagation:
// finite-difference sensitivities dh/dT_i combined as
//   dh_dt_random^2 = sum_i (dh/dT_i)^2 / n_i
// (GUM JCGM 100:2008 eq. 10 for uncorrelated inputs, with the variance of
// the mean of n_i samples sigma^2 / n_i, GUM 4.2.3). The heights come from
// the hypsometric equation (Wallace & Hobbs 2006, eq. 3.29).
#include <catch2/catch.hpp>
#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <numbers>
#include <random>
#include <vector>

#include "baroz/core/robust_statistics.hpp"

#include "baroz/core/error.hpp"
#include "baroz/models/isothermal_model.hpp"
#include "baroz/models/normal_gravity.hpp"
#include "baroz/models/profile_model.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/models/standard_model.hpp"
#include "baroz/models/temperature_profile.hpp"

using namespace baroz;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kStepK = 0.01;  // finite-difference step of a temperature [K]

double relative_difference(double a, double b) {
  return std::fabs(a - b) / std::fabs(b);
}

// 31 nodes from 100 m' to about 24 km' at uneven spacing, temperatures off
// the standard's by a few kelvin, T_v set in the lowest ones, varied sample
// counts, and one pair of nodes at the same pressure (merged by the profile
// into their mean).
std::vector<ProfileNode> uneven_nodes() {
  std::vector<ProfileNode> nodes;
  double h = 100.0;
  for (int k = 0; k < 30; ++k) {
    const double t = ussa76::temperature_at(h) + 3.0 * std::sin(0.7 * k);
    const double tv = k < 8 ? t + 0.2 * (8 - k) : kNaN;
    const auto samples = static_cast<std::uint32_t>(1 + (k * 37) % 61);
    nodes.push_back(ProfileNode{ussa76::pressure_at(h), t, tv, samples});
    h += 400.0 + 700.0 * std::fabs(std::sin(1.3 * k));
  }
  // A second node at the pressure of node 11: merged with it.
  nodes.push_back(ProfileNode{nodes[11].pressure_pa, nodes[11].temperature_k + 1.5, kNaN, 4});
  return nodes;
}

// Node i's temperature (and virtual temperature, which carries the same
// random error) shifted by dt.
std::vector<ProfileNode> with_node_shifted(std::vector<ProfileNode> nodes, std::size_t i,
                                           double dt) {
  nodes[i].temperature_k += dt;
  if (!std::isnan(nodes[i].virtual_temperature_k)) nodes[i].virtual_temperature_k += dt;
  return nodes;
}

double height_of(ProfileModel& model, double p, const ReferencePoint& ref) {
  const HeightEval e = model.evaluate(p, kNaN, ref);
  REQUIRE(e.valid);
  return e.height_m;
}

}  // namespace

TEST_CASE("profile dh_dt_random is the quadrature sum of per-node sensitivities over n",
          "[uncertainty][models]") {
  const std::vector<ProfileNode> nodes = uneven_nodes();
  const TemperatureProfile profile(nodes);
  REQUIRE(profile.size() == 30);  // the pair at one pressure is one node
  // Merged node: the mean of k = 2 temperatures of n = 42 (node 11:
  // 1 + (11 * 37) % 61) and 4 samples has the variance (1/42 + 1/4) / 4 of
  // one sample's, that of n = 4 / (1/42 + 1/4) = 14.6 samples.
  // Source: variance of a mean of independent values (GUM 4.2.3), by hand.
  REQUIRE(nodes[11].samples == 42);
  const double merged_samples = 4.0 / (1.0 / 42.0 + 1.0 / 4.0);  // 14.6
  bool found_merged = false;
  for (const ProfileNode& node : profile.nodes()) {
    if (node.pressure_pa == nodes[11].pressure_pa) {
      found_merged = true;
      CHECK(node.samples == static_cast<std::uint32_t>(std::lround(merged_samples)));
    }
  }
  CHECK(found_merged);

  const double bottom = nodes.front().pressure_pa;
  const double top = nodes[29].pressure_pa;
  for (const GravityFrame& frame : {GravityFrame::standard(), GravityFrame::wgs84(45.0)}) {
    ProfileModel model(profile, frame);
    // The perturbed models, one pair per input node (the merged pair too).
    std::vector<ProfileModel> warmer;
    std::vector<ProfileModel> colder;
    for (std::size_t i = 0; i < nodes.size(); ++i) {
      warmer.emplace_back(TemperatureProfile(with_node_shifted(nodes, i, kStepK)), frame);
      colder.emplace_back(TemperatureProfile(with_node_shifted(nodes, i, -kStepK)), frame);
    }
    const double inside_1 = std::sqrt(nodes[1].pressure_pa * nodes[2].pressure_pa);
    const std::vector<double> references = {inside_1, bottom, 1.02 * bottom, nodes[17].pressure_pa};
    const std::vector<double> pressures = {
        1.05 * bottom,                                              // below the bottom node
        nodes[0].pressure_pa,                                       // at a node
        0.6 * nodes[0].pressure_pa + 0.4 * nodes[1].pressure_pa,    // inside segment 0
        inside_1,                                                   // = one of the references
        nodes[5].pressure_pa,                                       // at a node
        0.3 * nodes[11].pressure_pa + 0.7 * nodes[12].pressure_pa,  // next to the merged node
        nodes[11].pressure_pa,                                      // at the merged node
        std::sqrt(nodes[20].pressure_pa * nodes[21].pressure_pa),   // inside a segment
        nodes[28].pressure_pa,                                      // at a node
        top,                                                        // the top node
        0.8 * top,                                                  // beyond the top
        0.1 * top};                                                 // far beyond the top
    for (double p_ref : references) {
      for (double datum : {0.0, kNaN}) {
        const ReferencePoint ref{p_ref, 288.15, datum};
        for (double p : pressures) {
          INFO("frame " << (frame.is_standard() ? "standard" : "wgs84") << ", p_ref = " << p_ref
                        << " Pa, datum = " << datum << ", p = " << p << " Pa");
          const HeightEval e = model.evaluate(p, kNaN, ref);
          REQUIRE(e.valid);
          double brute = 0.0;
          for (std::size_t i = 0; i < nodes.size(); ++i) {
            const double dh_dti =
                (height_of(warmer[i], p, ref) - height_of(colder[i], p, ref)) / (2.0 * kStepK);
            brute += dh_dti * dh_dti / nodes[i].samples;
          }
          if (p == p_ref) {
            // Source: by construction, the same point has the same weights.
            CHECK(e.dh_dt_random == 0.0);
            CHECK(brute < 1e-18);
          } else {
            // Source: GUM JCGM 100:2008 eq. 10 with finite differences; the
            // height is linear in the node temperatures up to Z(H) (relative
            // curvature ~3e-7 per km), so the central difference is exact to
            // rounding (measured: agreement to better than 1e-9).
            CHECK(relative_difference(e.dh_dt_random * e.dh_dt_random, brute) <= 1e-8);
            // Independent errors partly cancel: never above the bias.
            // Source: sum of squares / n <= (sum)^2 for same-sign weights.
            CHECK(e.dh_dt_random <= std::fabs(e.dh_dt));
          }
        }
      }
    }
  }
}

TEST_CASE("profile dh_dt_random weights from ProfilePoint agree with the pressure form",
          "[uncertainty][models]") {
  const TemperatureProfile profile(uneven_nodes());
  // Source: by construction (symmetry of S in its two points; the two overloads).
  for (double a : {99000.0, 80000.0, 3000.0, 1000.0}) {
    for (double b : {105000.0, 50000.0, 2500.0, 200.0}) {
      const double s = profile.random_weight_sum(a, b);
      CHECK(s > 0.0);
      CHECK(s == profile.random_weight_sum(b, a));
      CHECK(s == profile.random_weight_sum(profile.geopotential_at(a), profile.geopotential_at(b)));
    }
  }
  // A single node: the extension follows it on both sides, W_0 = ln(p_0/p),
  // so S = ln(p_a/p_b)^2 / n. Source: the file comment of temperature_profile.hpp, by hand.
  const TemperatureProfile one({ProfileNode{90000.0, 280.0, kNaN, 9}});
  CHECK(relative_difference(one.random_weight_sum(100000.0, 30000.0),
                            std::pow(std::log(100000.0 / 30000.0), 2) / 9.0) <= 1e-14);
}

TEST_CASE("profile random and bias temperature errors scale differently with layers and samples",
          "[uncertainty][models]") {
  // L equal layers in ln p (width D), every node the mean of n samples,
  // from node 0 (p_ref) to node L (p). A bias dT shifts every layer's
  // thickness alike: dh = (R/g0) L D dT. Random errors average within a
  // node (sigma/sqrt(n)) and add in quadrature across layers: with the
  // trapezoid weights D (interior) and D/2 (ends),
  //   dh_dt_random = (R/g0) D sqrt(L - 1/2) / sqrt(n),
  // so random/bias = sqrt(L - 1/2) / (L sqrt(n)) ~ 1/sqrt(n L).
  // Source: GUM JCGM 100:2008 eq. 10 applied to the hypsometric equation
  // (Wallace & Hobbs 2006, eq. 3.29); by hand.
  constexpr double kWidth = 0.04;  // D: about 290 m' at 250 K
  auto ratio = [](int layers, std::uint32_t samples) {
    std::vector<ProfileNode> nodes;
    for (int k = 0; k <= layers; ++k) {
      nodes.push_back(ProfileNode{100000.0 * std::exp(-kWidth * k), 250.0, kNaN, samples});
    }
    const double p = nodes.back().pressure_pa;
    const ReferencePoint ref{nodes.front().pressure_pa, 288.15, 0.0};
    ProfileModel model{TemperatureProfile(nodes)};
    const HeightEval e = model.evaluate(p, kNaN, ref);
    REQUIRE(e.valid);
    // The bias derivative dh_dt is still the response to a uniform shift.
    std::vector<ProfileNode> up = nodes;
    std::vector<ProfileNode> down = nodes;
    for (ProfileNode& node : up) node.temperature_k += kStepK;
    for (ProfileNode& node : down) node.temperature_k -= kStepK;
    ProfileModel warmer{TemperatureProfile(up)};
    ProfileModel colder{TemperatureProfile(down)};
    const double bias = (height_of(warmer, p, ref) - height_of(colder, p, ref)) / (2.0 * kStepK);
    // Source: central difference (the height is linear in a uniform shift
    // up to Z(H)); the existing profile-model test does the same.
    CHECK(relative_difference(e.dh_dt, bias) <= 1e-6);
    const double r = e.dh_dt_random / e.dh_dt;
    // Source: the closed form above (exact for these weights).
    CHECK(relative_difference(r, std::sqrt(layers - 0.5) / (layers * std::sqrt(samples))) <= 1e-12);
    return r;
  };
  for (int layers : {10, 40, 80}) {
    for (std::uint32_t samples : {1u, 25u, 400u}) {
      INFO(layers << " layers of " << samples << " samples");
      const double r = ratio(layers, samples);
      // Source: 1/sqrt(n L) (a physicist's estimate), off by the end nodes'
      // half weights: sqrt(1 - 1/(2L)), 2.5 % for L = 10.
      const double estimate = 1.0 / std::sqrt(samples * static_cast<double>(layers));
      CHECK(r <= estimate);
      CHECK(r >= 0.97 * estimate);
    }
  }
  // Four times the samples halve the ratio exactly; four times the layers
  // about halve it. Source: the closed form above.
  CHECK(relative_difference(ratio(40, 100) / ratio(40, 25), 0.5) <= 1e-12);
  CHECK(relative_difference(ratio(80, 25) / ratio(20, 25), 0.5) <= 0.01);
}

TEST_CASE("profile builder nodes count the samples of their medians", "[uncertainty][models]") {
  // A monotonic ascent through three 50 m' layers with 10, 25 and 7 samples
  // (heights well inside each layer). Source: by construction.
  ProfileBuilder builder(ProfileOptions{ProfileLeg::kAscent, 50.0});
  const std::vector<std::pair<double, int>> layers = {{0.0, 10}, {50.0, 25}, {100.0, 7}};
  for (const auto& [base, count] : layers) {
    for (int k = 0; k < count; ++k) {
      const double h = base + 5.0 + 40.0 * k / count;
      builder.add(ussa76::pressure_at(h), ussa76::temperature_at(h), kNaN);
    }
  }
  const TemperatureProfile profile = builder.build();
  REQUIRE(profile.size() == 3);
  CHECK(profile.nodes()[0].samples == 10);
  CHECK(profile.nodes()[1].samples == 25);
  CHECK(profile.nodes()[2].samples == 7);

  // A thinned layer: its node is the median of the stored values only.
  // Source: the class comment of ProfileBuilder (bounded memory).
  ProfileBuilder thinned(ProfileOptions{ProfileLeg::kAscent, 1000.0});
  constexpr int kMany = 5000;
  for (int k = 0; k < kMany; ++k) {
    const double h = 100.0 + 800.0 * k / kMany;
    thinned.add(ussa76::pressure_at(h), ussa76::temperature_at(h), kNaN);
  }
  const TemperatureProfile one = thinned.build();
  REQUIRE(one.size() == 1);
  CHECK(one.nodes()[0].samples == thinned.stored_values());
  CHECK(one.nodes()[0].samples < static_cast<std::uint32_t>(kMany));
  CHECK(one.nodes()[0].samples >= ProfileBuilder::kLayerCapacity / 2);
}

TEST_CASE("the variance of a median of n normal values", "[uncertainty][models]") {
  // Source: exact for n = 1 (one value) and n = 2 (the mean of two:
  // sigma^2/2); Laplace's large-sample variance pi sigma^2 / (2n) (Kendall &
  // Stuart, The Advanced Theory of Statistics, vol. 1; from memory).
  CHECK(median_variance_factor(1) == 1.0);
  CHECK(median_variance_factor(2) == 0.5);
  for (std::size_t n : {100u, 1000u, 100000u})
    CHECK(relative_difference(median_variance_factor(n),
                              std::numbers::pi / (2.0 * static_cast<double>(n))) <
          1.2 / static_cast<double>(n));

  // Against simulation: 40000 medians of n standard normals (std::mt19937_64,
  // seeded). The sample variance's relative standard error is sqrt(2/T) =
  // 0.7 %; limits: 4 % for odd n, and for even n at least the truth (less
  // 2 %) and at most 20 % above it (the approximation errs wide there).
  std::mt19937_64 rng(20261202);
  std::normal_distribution<double> normal;
  constexpr int kTrials = 40000;
  std::vector<double> values;
  for (std::size_t n : {1u, 2u, 3u, 4u, 5u, 7u, 10u, 15u, 31u, 60u}) {
    double sum = 0.0, squares = 0.0;
    for (int t = 0; t < kTrials; ++t) {
      values.resize(n);
      for (double& v : values) v = normal(rng);
      const double m = median_in_place(values);
      sum += m;
      squares += m * m;
    }
    const double mean = sum / kTrials;
    const double variance = squares / kTrials - mean * mean;
    const double factor = median_variance_factor(n);
    INFO("n = " << n << ": simulated " << variance << ", factor " << factor << ", 1/n "
                << 1.0 / static_cast<double>(n));
    if (n % 2 == 1 || n == 2) {
      CHECK(relative_difference(factor, variance) < 0.04);
    } else {
      CHECK(factor >= 0.98 * variance);
      CHECK(factor <= 1.20 * variance);
    }
    // A median is noisier than a mean of as many values (n >= 3).
    if (n >= 3) CHECK(variance > 1.1 / static_cast<double>(n));
  }
}

TEST_CASE("profile builder nodes are medians and carry a median's random error",
          "[uncertainty][models]") {
  // Source: robust_statistics.hpp (median_variance_factor) and the file
  // comment of temperature_profile.hpp: S = sum_i (W_i(p) - W_i(p_ref))^2 v_i.
  // Every node the median of n = 9 samples: each v_i is
  // median_variance_factor(9) instead of 1/9, so the random weight sum is
  // 9 median_variance_factor(9) (= 1.53) times that of mean nodes, and
  // dh_dt_random sqrt of it; the bias dh_dt is unchanged.
  std::vector<ProfileNode> means;
  for (int k = 0; k <= 12; ++k)
    means.push_back(ProfileNode{100000.0 * std::exp(-0.05 * k), 260.0 - 2.0 * k, kNaN, 9});
  std::vector<ProfileNode> medians = means;
  for (ProfileNode& node : medians) node.median = true;
  const ReferencePoint ref{means.front().pressure_pa, 288.15, 0.0};
  const double p = 100000.0 * std::exp(-0.05 * 10.5);
  ProfileModel mean_model{TemperatureProfile(means)};
  ProfileModel median_model{TemperatureProfile(medians)};
  const HeightEval a = mean_model.evaluate(p, kNaN, ref);
  const HeightEval b = median_model.evaluate(p, kNaN, ref);
  REQUIRE(a.valid);
  REQUIRE(b.valid);
  CHECK(b.height_m == a.height_m);
  CHECK(b.dh_dt == a.dh_dt);
  CHECK(relative_difference(b.dh_dt_random / a.dh_dt_random,
                            std::sqrt(9.0 * median_variance_factor(9))) <= 1e-12);

  // The builder marks its nodes as medians.
  ProfileBuilder builder(ProfileOptions{ProfileLeg::kAscent, 50.0});
  for (int k = 0; k < 30; ++k) {
    const double h = 5.0 + 140.0 * k / 30.0;
    builder.add(ussa76::pressure_at(h), ussa76::temperature_at(h), kNaN);
  }
  const TemperatureProfile built = builder.build();
  REQUIRE(built.size() == 3);
  for (const ProfileNode& node : built.nodes()) CHECK(node.median);
}

TEST_CASE("profile nodes need at least one sample", "[uncertainty][models]") {
  CHECK_THROWS_AS(TemperatureProfile({ProfileNode{90000.0, 280.0, kNaN, 0}}), Error);
  // Source: by construction (default of ProfileNode::samples).
  CHECK(ProfileNode{}.samples == 1);
}

TEST_CASE("isothermal dh_dt_random: reference mean of N samples, and the mean mode",
          "[uncertainty][models]") {
  auto height = [](IsothermalModel& m, double p, double t, const ReferencePoint& ref) {
    const HeightEval e = m.evaluate(p, t, ref);
    REQUIRE(e.valid);
    return e.height_m;
  };
  for (double p : {60000.0, 99000.0, 104000.0, 2000.0}) {
    for (std::uint32_t n : {0u, 1u, 16u, 300u}) {
      INFO("p = " << p << " Pa, N = " << n);
      ReferencePoint ref{101000.0, 285.0, 120.0, n};
      ReferencePoint ref_up = ref;
      ReferencePoint ref_down = ref;
      ref_up.temperature_k += kStepK;
      ref_down.temperature_k -= kStepK;
      const double var_ref = n > 0 ? 1.0 / n : 0.0;  // T_ref: mean of N samples (0: not measured)

      IsothermalModel reference_model(IsothermalTemperature::kReference);
      const HeightEval r = reference_model.evaluate(p, kNaN, ref);
      REQUIRE(r.valid);
      const double dh_dtref =
          (height(reference_model, p, kNaN, ref_up) - height(reference_model, p, kNaN, ref_down)) /
          (2.0 * kStepK);
      // Source: GUM eq. 10 with one input of variance 1/N; the formula of the brief.
      const double expected_ref = std::fabs(dh_dtref) * std::sqrt(var_ref);
      if (n == 0) {
        CHECK(r.dh_dt_random == 0.0);
      } else {
        CHECK(relative_difference(r.dh_dt_random, expected_ref) <= 1e-6);
        CHECK(relative_difference(r.dh_dt_random, std::fabs(r.dh_dt) / std::sqrt(n)) <= 1e-14);
      }

      IsothermalModel mean_model(IsothermalTemperature::kMean);
      const double t_sample = 262.0;
      const HeightEval m = mean_model.evaluate(p, t_sample, ref);
      REQUIRE(m.valid);
      const double dh_dts = (height(mean_model, p, t_sample + kStepK, ref) -
                             height(mean_model, p, t_sample - kStepK, ref)) /
                            (2.0 * kStepK);
      const double dh_dtr =
          (height(mean_model, p, t_sample, ref_up) - height(mean_model, p, t_sample, ref_down)) /
          (2.0 * kStepK);
      // Source: GUM eq. 10: the sample (one sample, variance 1) and T_ref
      // (variance 1/N), each entering with half weight.
      const double expected_mean = std::sqrt(dh_dts * dh_dts + dh_dtr * dh_dtr * var_ref);
      CHECK(relative_difference(m.dh_dt_random, expected_mean) <= 1e-6);
      CHECK(relative_difference(m.dh_dt_random,
                                std::fabs(m.dh_dt) * std::sqrt(0.25 + 0.25 * var_ref)) <= 1e-14);
      // dh_dt in mean mode is the response to a common offset of both.
      // Source: isothermal_model.hpp; central difference.
      CHECK(relative_difference(m.dh_dt, dh_dts + dh_dtr) <= 1e-6);
    }
  }
}

TEST_CASE("standard model has no random temperature term", "[uncertainty][models]") {
  StandardModel model;
  const HeightEval e = model.evaluate(70000.0, 270.0, ReferencePoint{101325.0, 288.15, 0.0, 50});
  REQUIRE(e.valid);
  // Source: the standard model uses no measured temperature (height_model.hpp).
  CHECK(e.dh_dt_random == 0.0);
}
