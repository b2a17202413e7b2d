// `baroz height --rerun MANIFEST [overrides...]` through the command line:
// the round trip, overrides replacing recorded options, the input checks
// (changed, missing, standard input, beside the manifest, profile and base
// files), the recorded outputs left alone, and refused manifests.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <string>
#include <vector>

#include <fmt/format.h>
#include <simdjson.h>

#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/output/sha256.hpp"
#include "cli_harness.hpp"

using namespace baroz::test;

namespace {

// A small log without temperature (the standard model under auto).
const std::string kLog =
    "time_s,pressure_hpa\n"
    "0,1000.00\n"
    "1,1000.02\n"
    "2,999.98\n"
    "3,1000.01\n"
    "4,998.00\n"
    "5,995.00\n"
    "6,990.00\n";

std::string demo() {
  return source_path("demo_data/hollin_drone_hop.ndjson");
}

/// The "baroz: re-running ..." line of `err` (empty when there is none).
std::string rerun_note(const std::string& err) {
  for (const auto& line : split_lines(err))
    if (line.rfind("baroz: re-running ", 0) == 0) return line;
  return {};
}

/// Runs the test from another working directory, restored at the end.
struct WorkingDirectory {
  std::filesystem::path saved = std::filesystem::current_path();
  explicit WorkingDirectory(const std::filesystem::path& dir) {
    std::filesystem::current_path(dir);
  }
  ~WorkingDirectory() {
    std::error_code ec;
    std::filesystem::current_path(saved, ec);
  }
};

}  // namespace

TEST_CASE("a re-run with a new output repeats the recorded series byte for byte", "[rerun][cli]") {
  TempDir d;
  const std::string a = d / "A.csv", b = d / "B.csv", m = d / "M.json";
  auto r = run_cli({"height", demo(), "-o", a, "--manifest", m});
  REQUIRE(r.status == 0);
  const std::string series = read_file(a);
  REQUIRE(!series.empty());

  r = run_cli({"height", "--rerun", m, "-o", b});
  REQUIRE(r.status == 0);
  // Source: the product spec, "Output (pinned)": the manifest records a run
  // "so a run can be repeated"; the same inputs and options give the same bytes.
  CHECK(read_file(b) == series);
  CHECK(rerun_note(r.err) ==
        fmt::format("baroz: re-running {}: baroz height -o {} {}", m, b, demo()));
  CHECK(r.err.find("not written again (--manifest " + m + ")") != std::string::npos);
}

TEST_CASE("a re-run without -o leaves the recorded outputs alone and writes to standard output",
          "[rerun][cli]") {
  TempDir d;
  const std::string a = d / "A.csv", m = d / "M.json", rejects = d / "rejects.csv",
                    summary = d / "summary.json";
  auto r = run_cli(
      {"height", demo(), "-o", a, "--manifest", m, "--rejects", rejects, "--summary", summary});
  REQUIRE(r.status == 0);
  const std::string series = read_file(a);
  // Markers in place of the recorded outputs: a re-run writing any of them
  // would replace the marker.
  d.file("A.csv", "marker A\n");
  d.file("rejects.csv", "marker rejects\n");
  d.file("summary.json", "marker summary\n");
  const std::string manifest = read_file(m);

  r = run_cli({"height", "--rerun", m});
  REQUIRE(r.status == 0);
  CHECK(r.out == series);
  CHECK(read_file(a) == "marker A\n");
  CHECK(read_file(rejects) == "marker rejects\n");
  CHECK(read_file(summary) == "marker summary\n");
  CHECK(read_file(m) == manifest);
  CHECK(r.err.find("the series goes to standard output") != std::string::npos);
  CHECK(rerun_note(r.err) == fmt::format("baroz: re-running {}: baroz height {}", m, demo()));
}

TEST_CASE("a new reference replaces every recorded reference option", "[rerun][cli]") {
  TempDir d;
  const std::string m = d / "M.json";
  auto r = run_cli({"height", demo(), "-m", "isothermal", "--ref-window", "30s", "-o", d / "A.csv",
                    "--manifest", m});
  REQUIRE(r.status == 0);

  r = run_cli({"height", "--rerun", m, "--ref-pressure", "1002.1"});
  REQUIRE(r.status == 0);
  const auto direct = run_cli({"height", demo(), "-m", "isothermal", "--ref-pressure", "1002.1"});
  REQUIRE(direct.status == 0);
  CHECK(r.out == direct.out);
  CHECK(rerun_note(r.err) == fmt::format("baroz: re-running {}: baroz height -m isothermal "
                                         "--ref-pressure 1002.1 {}",
                                         m, demo()));
  // The recorded window would have changed the heights (T_ref from the
  // window's mean), so keeping it would be seen.
  const auto with_window = run_cli(
      {"height", demo(), "-m", "isothermal", "--ref-pressure", "1002.1", "--ref-window", "30s"});
  REQUIRE(with_window.status == 0);
  CHECK(r.out != with_window.out);

  // The heights follow the hypsometric equation for the new reference.
  r = run_cli({"height", "--rerun", m, "--ref-pressure", "1002.1", "--ref-temperature", "288.15"});
  REQUIRE(r.status == 0);
  const auto p = numbers(column(r.out, "pressure_hpa"));
  const auto h = numbers(column(r.out, "height_m"));
  REQUIRE(p.size() == 2371);  // every row of the demo log
  // Source: USSA76 (reference-values.md 1.1): R* = 8.31432, M0 = 28.9644e-3,
  // g0 = 9.80665, r0 = 6356766 m; isothermal dH = (R* T / (g0 M0)) ln(p_ref/p),
  // geometric Z = r0 H / (r0 - H) from the standard geopotential of p_ref.
  const double k = 8.31432 * 288.15 / (9.80665 * 28.9644e-3);
  const double hd = baroz::ussa76::geopotential_at_pressure(100210.0);
  auto z = [](double gh) { return 6356766.0 * gh / (6356766.0 - gh); };
  double worst = 0.0;
  for (std::size_t i = 0; i < p.size(); ++i) {
    const double expected = z(hd + k * std::log(1002.1 / p[i])) - z(hd);
    worst = std::max(worst, std::fabs(h[i] - expected));
  }
  // 0.0005 m of rounding to 3 decimals, plus margin (common practice).
  CHECK(worst < 0.001);
}

TEST_CASE("a changed, missing or different input is refused with exit 2 naming the file",
          "[rerun][cli]") {
  TempDir d;
  const std::string log = d.file("flight.csv", kLog), m = d / "M.json";
  auto r = run_cli({"height", log, "-o", d / "A.csv", "--manifest", m});
  REQUIRE(r.status == 0);
  const std::string recorded = baroz::sha256_hex(kLog);

  d.file("flight.csv", kLog + "7,985.00\n");  // a row appended
  r = run_cli({"height", "--rerun", m, "-o", d / "B.csv"});
  CHECK(r.status == 2);
  CHECK(r.err.find(fmt::format("baroz: {}: changed since the recorded run (sha256 {}... "
                               "recorded, {}... now); refusing to re-run",
                               log, recorded.substr(0, 12),
                               baroz::sha256_hex(kLog + "7,985.00\n").substr(0, 12))) !=
        std::string::npos);
  CHECK(!std::filesystem::exists(d / "B.csv"));

  std::string one_byte = kLog;
  one_byte[one_byte.size() - 2] = '1';  // 990.00 -> 990.01, same length
  d.file("flight.csv", one_byte);
  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 2);
  CHECK(r.err.find(log + ": changed since the recorded run") != std::string::npos);
  CHECK(r.out.empty());

  // The same data under another name, given as the input, is accepted;
  // other data is not.
  const std::string copy = d.file("copy.csv", kLog);
  r = run_cli({"height", "--rerun", m, copy});
  CHECK(r.status == 0);
  CHECK(rerun_note(r.err).find("baroz height " + copy) != std::string::npos);
  r = run_cli({"height", "--rerun", m, log});
  CHECK(r.status == 2);
  CHECK(r.err.find(log + ": changed since the recorded run") != std::string::npos);

  std::filesystem::remove(log);
  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 2);
  CHECK(r.err.find(log + ": missing since the recorded run") != std::string::npos);
}

TEST_CASE("a file that is not a baroz height manifest is refused with exit 1", "[rerun][cli]") {
  TempDir d;
  auto r = run_cli({"height", "--rerun", d.file("other.json", R"({"tool": "other"})")});
  CHECK(r.status == 1);
  CHECK(r.err.find("other.json: not a baroz height manifest") != std::string::npos);

  r = run_cli(
      {"height", "--rerun", d.file("summary.json", R"({"tool": "baroz", "command": "summary",
                                           "arguments": ["summary"], "inputs": []})")});
  CHECK(r.status == 1);
  CHECK(r.err.find("summary.json: not a baroz height manifest") != std::string::npos);

  r = run_cli({"height", "--rerun", d.file("log.csv", kLog)});
  CHECK(r.status == 1);
  CHECK(r.err.find("log.csv: not a baroz height manifest (not JSON") != std::string::npos);

  r = run_cli({"height", "--rerun", d / "absent.json"});
  CHECK(r.status == 2);
  CHECK(r.err.find("--rerun: cannot open") != std::string::npos);
}

TEST_CASE("a relative input not found here is looked up beside the manifest", "[rerun][cli]") {
  TempDir d;
  d.file("flight.csv", kLog);
  std::filesystem::create_directories(d.path / "elsewhere");
  std::string series;
  {
    WorkingDirectory cwd(d.path);
    auto r = run_cli({"height", "flight.csv", "-o", "A.csv", "--manifest", "M.json"});
    REQUIRE(r.status == 0);
    series = read_file("A.csv");
  }
  WorkingDirectory cwd(d.path / "elsewhere");
  auto r = run_cli({"height", "--rerun", "../M.json", "-o", "B.csv"});
  REQUIRE(r.status == 0);
  CHECK(read_file("B.csv") == series);
  CHECK(rerun_note(r.err) == "baroz: re-running ../M.json: baroz height -o B.csv ../flight.csv");
}

TEST_CASE("a recorded run from standard input needs the input given again", "[rerun][cli]") {
  TempDir d;
  const std::string a = d / "A.csv", m = d / "M.json";
  auto r = run_cli({"height", "--manifest", m, "-o", a}, kLog);
  REQUIRE(r.status == 0);
  const std::string series = read_file(a);

  r = run_cli({"height", "--rerun", m}, kLog);
  CHECK(r.status == 2);
  CHECK(r.err.find("read standard input") != std::string::npos);

  r = run_cli({"height", "--rerun", m, d.file("again.csv", kLog)});
  CHECK(r.status == 0);
  CHECK(r.out == series);

  r = run_cli({"height", "--rerun", m, "-"}, kLog);
  CHECK(r.status == 0);
  CHECK(r.out == series);

  r = run_cli({"height", "--rerun", m, "-"}, kLog + "7,985.00\n");
  CHECK(r.status == 2);
  CHECK(r.err.find("<stdin>: changed since the recorded run") != std::string::npos);
  CHECK(r.out.empty());
}

TEST_CASE("the recorded profile file is checked; a new one is the change", "[rerun][cli]") {
  TempDir d;
  const std::string log = d.file("flight.csv", kLog), m = d / "M.json";
  const std::string table = d.file("table.csv", "pressure_hpa,temp_c\n1010,15\n900,5\n");
  const std::string other = d.file("other.csv", "pressure_hpa,temp_c\n1010,0\n900,-10\n");
  auto r = run_cli({"height", log, "--profile", table, "-o", d / "A.csv", "--manifest", m});
  REQUIRE(r.status == 0);
  const std::string series = read_file(d / "A.csv");

  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 0);
  CHECK(r.out == series);

  r = run_cli({"height", "--rerun", m, "--profile", other});
  CHECK(r.status == 0);
  const auto direct = run_cli({"height", log, "--profile", other});
  REQUIRE(direct.status == 0);
  CHECK(r.out == direct.out);
  CHECK(r.out != series);

  d.file("table.csv", "pressure_hpa,temp_c\n1010,15\n900,6\n");
  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 2);
  CHECK(r.err.find(table + ": changed since the recorded run") != std::string::npos);
}

TEST_CASE(
    "a recorded base-station file is checked, and dropped with its options by another "
    "reference",
    "[rerun][cli]") {
  TempDir d;
  const std::string log = d.file("flight.csv", kLog);
  const std::string base_text = "time_s,pressure_hpa\n0,1000\n10,1000\n";
  const std::string base = d.file("base.csv", base_text);
  // A manifest as `height --ref-base` writes it (inputs[].reference.base).
  const std::string m =
      d.file("M.json",
             fmt::format(R"({{"tool": "baroz", "version": "0.1.0", "command": "height",
  "arguments": ["height", "{log}", "--ref-base", "{base}", "--base-offset", "5", "--no-tie",
                "-o", "{out}"],
  "inputs": [{{"path": "{log}", "sha256": "{log_sha}",
              "reference": {{"kind": "base",
                             "base": {{"path": "{base}", "sha256": "{base_sha}"}}}}}}]}})",
                         fmt::arg("log", log), fmt::arg("base", base), fmt::arg("out", d / "A.csv"),
                         fmt::arg("log_sha", baroz::sha256_hex(kLog)),
                         fmt::arg("base_sha", baroz::sha256_hex(base_text))));
  d.file("base.csv", "time_s,pressure_hpa\n0,1000\n10,1001\n");

  auto r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 2);
  CHECK(r.err.find(base + ": changed since the recorded run") != std::string::npos);

  // --ref-pressure does not read the base: it is not checked, and
  // --base-offset and --no-tie go with it.
  r = run_cli({"height", "--rerun", m, "--ref-pressure", "1000"});
  CHECK(r.status == 0);
  CHECK(rerun_note(r.err) ==
        fmt::format("baroz: re-running {}: baroz height --ref-pressure 1000 {}", m, log));
  const auto direct = run_cli({"height", log, "--ref-pressure", "1000"});
  REQUIRE(direct.status == 0);
  CHECK(r.out == direct.out);
}

TEST_CASE("the re-run's manifest records the expanded command line", "[rerun][cli]") {
  TempDir d;
  const std::string log = d.file("flight.csv", kLog);
  const std::string m1 = d / "M1.json", m2 = d / "M2.json", b = d / "B.csv";
  auto r = run_cli({"height", log, "-q", "-f", "ndjson", "--precision=height=1", "-o",
                    d / "A.ndjson", "--manifest", m1});
  REQUIRE(r.status == 0);

  // Every spelling of a recorded option is replaced: -q by --quiet=false,
  // -f by --format, --precision=... by --precision.
  r = run_cli({"height", "--rerun", m1, "--quiet=false", "--format=csv", "--precision", "2", "-o",
               b, "--manifest", m2});
  REQUIRE(r.status == 0);
  CHECK(rerun_note(r.err) ==
        fmt::format("baroz: re-running {}: baroz height --quiet=false --format=csv --precision 2 "
                    "-o {} --manifest {} {}",
                    m1, b, m2, log));
  const auto lines = split_lines(read_file(b));
  REQUIRE(lines.size() == 8);
  CHECK(lines[0].rfind("time,", 0) == 0);
  const std::string height = split(lines[7], ',')[4];  // height_m
  CHECK(height.size() - height.find('.') - 1 == 2);

  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(m2);
  std::vector<std::string> args;
  for (auto a : doc["arguments"].get_array()) args.emplace_back(a.get_string().value());
  CHECK(args == std::vector<std::string>{"height", "--quiet=false", "--format=csv", "--precision",
                                         "2", "-o", b, "--manifest", m2, log});

  r = run_cli({"height", "--rerun", m2, "-o", d / "C.csv"});
  REQUIRE(r.status == 0);
  CHECK(read_file(d / "C.csv") == read_file(b));
}

TEST_CASE("a batch run is re-run into a new directory only", "[rerun][cli]") {
  TempDir d;
  const std::string one = d.file("one.csv", kLog), two = d.file("two.csv", kLog + "7,985\n");
  const std::string m = d / "M.json";
  auto r = run_cli({"height", one, two, "-o", d / "out/", "--manifest", m});
  REQUIRE(r.status == 0);

  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 1);
  CHECK(r.err.find("records a batch run of 2 inputs: give -o DIR") != std::string::npos);

  r = run_cli({"height", "--rerun", m, "-o", d / "again/", "-j", "1"});
  REQUIRE(r.status == 0);
  for (const char* name : {"one.csv", "two.csv"})
    CHECK(read_file(d / (std::string("again/") + name)) ==
          read_file(d / (std::string("out/") + name)));

  // One of the batch's inputs, given as the input, re-runs alone.
  const std::string single = d / "new dir.csv";
  r = run_cli({"height", "--rerun", m, "-o", single, two});
  CHECK(r.status == 0);
  CHECK(rerun_note(r.err).find("-o '" + single + "' " + two) != std::string::npos);
  CHECK(read_file(single) == read_file(d / "out/two.csv"));
}

TEST_CASE("a base-station run is re-run with its base checked, or with another reference",
          "[rerun][cli]") {
  TempDir d;
  const std::string log = source_path("demo_data/harrow_rise_survey.csv");
  const std::string base_text = read_file(source_path("demo_data/harrow_rise_base.csv"));
  const std::string base = d.file("base.csv", base_text);
  const std::string a = d / "A.csv", m = d / "M.json", md = d / "MD.json";
  auto r = run_cli({"height", log, "--ref-base", base, "--base-offset", "auto", "--base-elevation",
                    "4", "-o", a, "--manifest", m});
  REQUIRE(r.status == 0);
  const std::string series = read_file(a);

  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 0);
  CHECK(r.out == series);

  // The window with --drift linear instead: the base and its options go.
  r = run_cli({"height", "--rerun", m, "--ref-window", "auto", "--drift", "linear", "--manifest",
               md, "-o", d / "D.csv"});
  CHECK(r.status == 0);
  CHECK(rerun_note(r.err) ==
        fmt::format("baroz: re-running {}: baroz height --ref-window auto --drift linear "
                    "--manifest {} -o {} {}",
                    m, md, d / "D.csv", log));
  const auto drift = run_cli({"height", log, "--ref-window", "auto", "--drift", "linear"});
  REQUIRE(drift.status == 0);
  CHECK(read_file(d / "D.csv") == drift.out);

  // And back: --ref-base drops the recorded --drift, which refuses it.
  r = run_cli({"height", "--rerun", md, "--ref-base", base, "--base-offset", "auto",
               "--base-elevation", "4"});
  CHECK(r.status == 0);
  CHECK(r.out == series);

  d.file("base.csv", base_text + base_text.substr(base_text.rfind('\n', base_text.size() - 2) + 1));
  r = run_cli({"height", "--rerun", m});
  CHECK(r.status == 2);
  CHECK(r.err.find(base + ": changed since the recorded run") != std::string::npos);
}
