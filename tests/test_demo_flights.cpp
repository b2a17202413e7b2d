// End to end on the demo logs. The logs are invented scenarios, but their
// truth comes from an independent hydrostatic integrator
// (tools/make_demo_data.py: RK4 in geometric height with g(z) = g0 (r0/(r0+z))^2
// over the USSA76 temperature profile), so these checks compare baroz with
// the 1976 standard's definition, not with itself.
#include <catch2/catch.hpp>

#include <cmath>
#include <map>

#include "cli_harness.hpp"

using namespace baroz::test;

namespace {

struct Table {
  std::vector<std::string> header;
  std::vector<std::vector<std::string>> rows;
  std::size_t col(const std::string& name) const {
    for (std::size_t i = 0; i < header.size(); ++i)
      if (header[i] == name) return i;
    FAIL("no column " << name);
    return 0;
  }
};

Table parse_csv(const std::string& text) {
  Table t;
  auto lines = split_lines(text);
  REQUIRE(!lines.empty());
  t.header = split(lines[0], ',');
  for (std::size_t i = 1; i < lines.size(); ++i) t.rows.push_back(split(lines[i], ','));
  return t;
}

}  // namespace

TEST_CASE("demo balloon: standard heights within 0.5 m of the 1976 standard", "[demo][models]") {
  auto r = run_cli({"height", "--model", "standard",
                    source_path("demo_data/kestrel2_balloon.csv")});
  REQUIRE(r.status == 0);
  Table out = parse_csv(r.out);
  Table truth = parse_csv(read_file(source_path("demo_data/truth/kestrel2_balloon_truth.csv")));
  REQUIRE(out.rows.size() == truth.rows.size());
  const auto h = out.col("height_m");
  const auto lo = out.col("height_low_m");
  const auto hi = out.col("height_high_m");
  const auto ref = truth.col("standard_height_of_logged_pressure_m");
  double worst = 0.0, top = 0.0;
  for (std::size_t i = 0; i < out.rows.size(); ++i) {
    const double ours = std::stod(out.rows[i][h]);
    worst = std::max(worst, std::fabs(ours - std::stod(truth.rows[i][ref])));
    top = std::max(top, ours);
    REQUIRE(std::stod(out.rows[i][lo]) <= ours);
    REQUIRE(std::stod(out.rows[i][hi]) >= ours);
  }
  CHECK(worst < 0.5);
  CHECK(top > 30000.0);  // the flight reached about 30.3 km
  // The window was found automatically before the 600 s launch.
  CHECK(r.err.find("reference window (auto)") != std::string::npos);
  CHECK(r.err.find("launch at 60") != std::string::npos);
}

TEST_CASE("demo stairwell: isothermal at the room temperature recovers the floors",
          "[demo][models]") {
  // The building's air is isothermal at 21 C (the scenario), so the
  // isothermal hypsometric equation is exact there up to sensor noise
  // (0.012 hPa ~ 0.1 m).
  auto r = run_cli({"height", "--model", "isothermal", "--ref-temperature", "21C",
                    source_path("demo_data/stairwell_walk.csv")});
  REQUIRE(r.status == 0);
  Table out = parse_csv(r.out);
  Table truth = parse_csv(read_file(source_path("demo_data/truth/stairwell_walk_truth.csv")));
  REQUIRE(out.rows.size() == truth.rows.size());
  double sum2 = 0.0, worst = 0.0;
  for (std::size_t i = 0; i < out.rows.size(); ++i) {
    const double e = std::stod(out.rows[i][out.col("height_m")]) -
                     std::stod(truth.rows[i][truth.col("true_height_m")]);
    sum2 += e * e;
    worst = std::max(worst, std::fabs(e));
  }
  CHECK(std::sqrt(sum2 / static_cast<double>(out.rows.size())) < 0.15);
  CHECK(worst < 0.6);
}

TEST_CASE("demo drone hop (NDJSON, epoch ms): heights within the sensor noise",
          "[demo][models]") {
  auto r = run_cli({"height", "--model", "isothermal",
                    source_path("demo_data/hollin_drone_hop.ndjson")});
  REQUIRE(r.status == 0);
  Table out = parse_csv(r.out);
  Table truth = parse_csv(read_file(source_path("demo_data/truth/hollin_drone_hop_truth.csv")));
  REQUIRE(out.rows.size() == truth.rows.size());
  double sum2 = 0.0;
  std::size_t inside = 0;
  for (std::size_t i = 0; i < out.rows.size(); ++i) {
    const double t = std::stod(truth.rows[i][truth.col("true_height_m")]);
    const double e = std::stod(out.rows[i][out.col("height_m")]) - t;
    sum2 += e * e;
    inside += std::stod(out.rows[i][out.col("height_low_m")]) <= t &&
              t <= std::stod(out.rows[i][out.col("height_high_m")]);
  }
  // 0.04 hPa of noise is 0.33 m (8.3 m/hPa, common practice).
  CHECK(std::sqrt(sum2 / static_cast<double>(out.rows.size())) < 0.5);
  // The band is a 95 % band of a 0.05 hPa noise term: it covers most rows.
  CHECK(static_cast<double>(inside) / static_cast<double>(out.rows.size()) > 0.9);
  CHECK(out.col("gnss_alt_m") > out.col("height_high_m"));
}

TEST_CASE("demo damaged log: rejected and flagged rows exactly as the spec says",
          "[demo][bad-input]") {
  auto r = run_cli({"height", "--ref-window", "10s",
                    source_path("demo_data/damaged_logger.csv")});
  REQUIRE(r.status == 0);
  CHECK(r.err.find("baroz: 42 rows read, 35 written, 7 rejected") != std::string::npos);
  for (int line : {10, 16, 19, 26, 29, 32, 35})
    CHECK(r.err.find("damaged_logger.csv:" + std::to_string(line) + ":") != std::string::npos);
  Table out = parse_csv(r.out);
  std::map<std::string, std::string> flags;
  for (const auto& row : out.rows) flags[row[0]] += row[out.col("flags")];
  CHECK(flags["5"].find("no_temperature") != std::string::npos);
  CHECK(flags["33.5"].find("time_backwards") != std::string::npos);
  auto strict = run_cli({"height", "--strict", "--ref-window", "10s",
                         source_path("demo_data/damaged_logger.csv")});
  CHECK(strict.status == 3);
}
