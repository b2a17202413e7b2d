// The command line driven in-process: exit statuses, error text, pinned
// column names, units, the rejects file and the manifest.
#include <catch2/catch.hpp>

#include <cmath>
#include <simdjson.h>

#include "baroz/output/sha256.hpp"
#include "cli_harness.hpp"

using namespace baroz::test;

namespace {

// A short log at rest at 1013.25 hPa, then at 900 hPa and 850 hPa.
const std::string kSmallLog =
    "time_s,pressure_hpa,temperature_c\n"
    "0,1013.25,15\n"
    "1,1013.25,15\n"
    "2,900,10\n"
    "3,850,\n";

// Source: reference-values.md §1.5 (USSA76 §1.3 inverse + eq. 18), Z in m:
// 900 hPa -> 988.65 m, 850 hPa -> 1457.63 m, 1013.25 hPa -> 0.
constexpr double kZ900 = 988.65;
constexpr double kZ850 = 1457.63;

double field_as_double(const std::string& s) { return std::stod(s); }

}  // namespace

TEST_CASE("help and version print to stdout and exit 0", "[cli]") {
  // Source: GNU Coding Standards, "--help" and "--version".
  auto h = run_cli({"--help"});
  CHECK(h.status == 0);
  CHECK(h.err.empty());
  CHECK(h.out.find("height") != std::string::npos);
  CHECK(h.out.find("not certified for navigation") != std::string::npos);

  auto hh = run_cli({"height", "--help"});
  CHECK(hh.status == 0);
  CHECK(hh.out.find("--ref-window") != std::string::npos);
  CHECK(hh.out.find("never use this output as the sole altitude source") != std::string::npos);

  auto v = run_cli({"--version"});
  CHECK(v.status == 0);
  CHECK(v.out.rfind("baroz ", 0) == 0);
}

TEST_CASE("usage errors exit 1 with a lower-case message", "[cli]") {
  auto r = run_cli({"height", "--no-such-option"});
  CHECK(r.status == 1);
  REQUIRE(r.err.rfind("baroz: ", 0) == 0);
  CHECK(std::islower(static_cast<unsigned char>(r.err[7])));

  CHECK(run_cli({"height", "--model", "magic", "-"}, kSmallLog).status == 1);
  CHECK(run_cli({"height", "--ref-pressure", "1013x", "-"}, kSmallLog).status == 1);
  CHECK(run_cli({"height", "--confidence", "1.5", "-"}, kSmallLog).status == 1);
  // Two references at once.
  CHECK(run_cli({"height", "--ref-pressure", "1013", "--qnh", "1013", "-"}, kSmallLog).status ==
        1);
  CHECK(run_cli({}).status == 1);  // a command is required
}

TEST_CASE("an unreadable input exits 2 naming the file", "[cli]") {
  auto r = run_cli({"height", "/nonexistent/flight.csv"});
  CHECK(r.status == 2);
  CHECK(r.err.find("baroz: cannot open '/nonexistent/flight.csv'") != std::string::npos);

  TempDir d;
  auto empty = d.file("empty.csv", "");
  auto e = run_cli({"height", empty});
  CHECK(e.status == 2);
  CHECK(e.err.find("no header row") != std::string::npos);

  auto header_only = d.file("header.csv", "time_s,pressure_hpa\n");
  auto h = run_cli({"height", "--ref-pressure", "1013.25", header_only});
  CHECK(h.status == 2);
  CHECK(h.err.find("no usable rows") != std::string::npos);
  CHECK(h.err.find("baroz: 0 rows read, 0 written, 0 rejected") != std::string::npos);
}

TEST_CASE("pinned columns, in order, and standard heights", "[cli][models]") {
  auto r = run_cli({"height", "--model", "standard", "--ref-pressure", "1013.25", "-"}, kSmallLog);
  REQUIRE(r.status == 0);
  auto lines = split_lines(r.out);
  REQUIRE(lines.size() == 5);
  // Source: product specification, "Output (pinned)".
  CHECK(lines[0] ==
        "time,elapsed_s,pressure_hpa,temperature_c,height_m,height_low_m,height_high_m,flags");
  auto row2 = split(lines[3], ',');
  CHECK(row2[0] == "2");
  CHECK(row2[1] == "2.000");
  CHECK(row2[2] == "900.0000");
  CHECK(row2[3] == "10.000");
  CHECK(field_as_double(row2[4]) == Approx(kZ900).margin(0.01));
  CHECK(field_as_double(row2[5]) < field_as_double(row2[4]));
  CHECK(field_as_double(row2[6]) > field_as_double(row2[4]));
  auto row3 = split(lines[4], ',');
  CHECK(row3[3].empty());  // temperature unknown: empty, never NaN
  CHECK(field_as_double(row3[4]) == Approx(kZ850).margin(0.01));
  CHECK(row3[7] == "no_temperature");
  CHECK(r.out.find("nan") == std::string::npos);
  CHECK(r.err.find("baroz: 4 rows read, 4 written, 0 rejected") != std::string::npos);
}

TEST_CASE("height unit ft: renames the height columns and converts", "[cli]") {
  auto r = run_cli({"height", "--height-unit", "ft", "--model", "standard", "--ref-pressure",
                    "1013.25", "--no-flags", "-"},
                   kSmallLog);
  REQUIRE(r.status == 0);
  auto lines = split_lines(r.out);
  CHECK(lines[0] ==
        "time,elapsed_s,pressure_hpa,temperature_c,height_ft,height_low_ft,height_high_ft");
  // 1 ft = 0.3048 m exactly (international foot).
  CHECK(field_as_double(split(lines[3], ',')[4]) == Approx(kZ900 / 0.3048).margin(0.05));
}

TEST_CASE("bad rows are rejected with file, line and column; counts reconcile", "[cli][bad-input]") {
  TempDir d;
  auto path = d.file("flight.csv",
                     "time_s,pressure_hpa,temperature_c\n"
                     "0,1013.25,15\n"
                     "1,1013.25,15\n"
                     "2,10O3.2,15\n"
                     "3,1013.20,15\n");
  auto rejects = d / "rejects.csv";
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "--rejects", rejects, path});
  CHECK(r.status == 0);
  // Source: product specification, "Bad input (pinned)" (message form).
  CHECK(r.err.find("baroz: " + path + ":4: column 'pressure_hpa': \"10O3.2\" is not a number\n") !=
        std::string::npos);
  CHECK(r.err.find("baroz: 4 rows read, 3 written, 1 rejected\n") != std::string::npos);
  CHECK(split_lines(r.out).size() == 1 + 3);
  auto rej = split_lines(read_file(rejects));
  REQUIRE(rej.size() == 2);
  CHECK(rej[0] == "source,line,reason,raw");
  CHECK(rej[1].find(path + ",4,") == 0);
  CHECK(rej[1].find("\"2,10O3.2,15\"") != std::string::npos);
}

TEST_CASE("the rejects file keeps every raw record exactly when there are many", "[cli][bad-input]") {
  TempDir d;
  std::string log = "time_s,pressure_hpa\n0,1013.25\n";
  std::vector<std::string> bad;
  for (int i = 1; i <= 40; ++i) {
    // Short and long raw texts (short strings are the ones that move in memory).
    std::string raw = std::to_string(i) + "," + (i % 2 ? "x" : std::string(30, 'y'));
    bad.push_back(raw);
    log += raw + "\n" + std::to_string(i) + ".5,1013.25\n";
  }
  auto path = d.file("many.csv", log);
  auto rej = d / "rej.csv";
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "--rejects", rej, path});
  REQUIRE(r.status == 0);
  auto rows = split_lines(read_file(rej));
  REQUIRE(rows.size() == 41);
  for (std::size_t i = 0; i < bad.size(); ++i) {
    INFO(rows[i + 1]);
    const std::string quoted = "\"" + bad[i] + "\"";  // RFC 4180: it holds a comma
    REQUIRE(rows[i + 1].size() >= quoted.size());
    CHECK(rows[i + 1].substr(rows[i + 1].size() - quoted.size()) == quoted);
  }
}

TEST_CASE("strict mode: the first rejected row is fatal, exit 3, no output file", "[cli][bad-input]") {
  TempDir d;
  auto path = d.file("flight.csv",
                     "time_s,pressure_hpa\n0,1013.25\n1,-5\n2,1013.2\n");
  auto out = d / "out.csv";
  auto r = run_cli({"height", "--strict", "--ref-pressure", "1013.25", "-o", out, path});
  CHECK(r.status == 3);
  CHECK(r.err.find(path + ":3:") != std::string::npos);
  CHECK_FALSE(std::filesystem::exists(out));
  // No temporary file left behind either.
  std::size_t files = 0;
  for ([[maybe_unused]] auto& e : std::filesystem::directory_iterator(d.path)) ++files;
  CHECK(files == 1);
}

TEST_CASE("every rejection reason of the spec", "[cli][bad-input]") {
  TempDir d;
  // One row per reason (product specification, "Bad input" and "Pinned details").
  auto path = d.file("bad.csv",
                     "time_s,pressure_hpa,temperature_c\n"
                     "0,1013.25,15\n"          // 2 good
                     "1,abc,15\n"              // 3 not a number
                     "2,,15\n"                 // 4 missing (empty) required field
                     "3,0,15\n"                // 5 pressure <= 0
                     "4,1600,15\n"             // 6 outside the default range (1500 hPa)
                     "5,inf,15\n"              // 7 non-finite
                     "6,1013.25\n"             // 8 missing field
                     "7,1013.25,15,9\n"        // 9 extra field
                     "x,1013.25,15\n"          // 10 bad time
                     "9,1013.25,-300\n"        // 11 implausible temperature
                     "10,1013.25,\n"           // 12 empty optional: kept, flagged
                     "11,1013.25,15\n");       // 13 good
  auto rej = d / "rej.csv";
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "--rejects", rej, "--error-format",
                    "json", path});
  CHECK(r.status == 0);
  CHECK(r.err.find("baroz: 12 rows read, 3 written, 9 rejected") != std::string::npos);
  for (const char* code : {"not_a_number", "missing_field", "pressure_not_positive",
                           "pressure_out_of_range", "non_finite", "extra_fields", "bad_time",
                           "temperature_out_of_range"})
    CHECK(r.err.find(std::string("\"code\":\"") + code + "\"") != std::string::npos);
  auto rows = split_lines(read_file(rej));
  CHECK(rows.size() == 1 + 9);

  // --p-range narrows the accepted range to a sensor's rating.
  auto narrow = run_cli({"height", "--ref-pressure", "1013.25", "--p-range", "300:1100", "-"},
                        "time_s,pressure_hpa\n0,1013\n1,250\n2,1013\n");
  CHECK(narrow.err.find("2 written, 1 rejected") != std::string::npos);
}

TEST_CASE("output to an unwritable place exits 4", "[cli]") {
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "-o", "/nonexistent/dir/out.csv", "-"},
                   kSmallLog);
  CHECK(r.status == 4);
  CHECK(r.err.find("baroz: cannot write") != std::string::npos);
}

TEST_CASE("an output file is written atomically and equals stdout output", "[cli]") {
  TempDir d;
  auto in = d.file("log.csv", kSmallLog);
  auto out = d / "heights.csv";
  auto a = run_cli({"height", "--ref-pressure", "1013.25", "-o", out, in});
  auto b = run_cli({"height", "--ref-pressure", "1013.25", in});
  REQUIRE(a.status == 0);
  CHECK(read_file(out) == b.out);
}

TEST_CASE("NDJSON output uses the same names as keys and null for unknown", "[cli]") {
  auto r = run_cli({"height", "-f", "ndjson", "--model", "standard", "--ref-pressure", "1013.25",
                    "-"},
                   kSmallLog);
  REQUIRE(r.status == 0);
  auto lines = split_lines(r.out);
  REQUIRE(lines.size() == 4);
  simdjson::dom::parser parser;
  auto doc = parser.parse(lines[3]);
  CHECK(doc["temperature_c"].is_null());
  CHECK(doc["time"].get_int64().value() == 3);
  CHECK(std::fabs(doc["height_m"].get_double().value() - kZ850) < 0.01);
  CHECK(doc["flags"].get_array().size() == 1);
}

TEST_CASE("QNH writes altitude_m by the altimeter relation", "[cli][models]") {
  // Source: product specification, "Pinned details" (--qnh); at p = QNH the
  // altitude is 0, at 900 hPa with QNH 1013.25 it is the standard altitude
  // 988.65 m (reference-values.md §1.5).
  auto r = run_cli({"height", "--qnh", "1013.25", "--elevation", "0", "-"}, kSmallLog);
  REQUIRE(r.status == 0);
  auto lines = split_lines(r.out);
  CHECK(lines[0].find(",altitude_m") != std::string::npos);
  auto cols = split(lines[0], ',');
  std::size_t alt = 0;
  for (std::size_t i = 0; i < cols.size(); ++i)
    if (cols[i] == "altitude_m") alt = i;
  CHECK(field_as_double(split(lines[1], ',')[alt]) == Approx(0.0).margin(1e-3));
  CHECK(field_as_double(split(lines[3], ',')[alt]) == Approx(kZ900).margin(0.01));

  // Without --elevation, height_m is measured from the reference window.
  auto w = run_cli({"height", "--qnh", "1020", "--ref-window", "1.5", "-"}, kSmallLog);
  REQUIRE(w.status == 0);
  auto wl = split_lines(w.out);
  CHECK(field_as_double(split(wl[1], ',')[4]) == Approx(0.0).margin(1e-3));
}

TEST_CASE("the manifest records inputs, options, constants, model and reference", "[cli]") {
  TempDir d;
  auto in = d.file("log.csv", kSmallLog);
  auto man = d / "run.json";
  auto r = run_cli({"height", "--ref-window", "1.5s", "--model", "isothermal", "--manifest", man,
                    in});
  REQUIRE(r.status == 0);
  simdjson::dom::parser parser;
  simdjson::dom::element doc = parser.load(man);
  auto input = doc["inputs"].at(0);
  CHECK(std::string(input["sha256"].get_string().value()) == baroz::sha256_hex(kSmallLog));
  CHECK(input["rows_read"].get_uint64().value() == 4);
  CHECK(std::string(input["model"]["chosen"].get_string().value()) == "isothermal");
  CHECK(std::string(input["reference"]["kind"].get_string().value()) == "window");
  CHECK(input["reference"]["window"]["samples"].get_uint64().value() == 2);
  CHECK(input["reference"]["pressure_hpa"].get_double().value() == Approx(1013.25));
  // Isothermal reference temperature: the window's mean air temperature.
  CHECK(input["reference"]["temperature_k"].get_double().value() == Approx(288.15));
  CHECK(doc["constants"]["g0_m_s2"].get_double().value() == 9.80665);
  CHECK(doc["constants"]["r0_m"].get_double().value() == 6356766.0);
  CHECK(doc["options"]["sigma_p_hpa"].get_double().value() == Approx(0.05));
  CHECK(doc["options"]["confidence"].get_double().value() == Approx(0.95));
  bool found_height = false;
  for (auto c : doc["output_columns"].get_array()) {
    if (std::string(c["name"].get_string().value()) == "height_m") {
      found_height = true;
      CHECK(std::string(c["units"].get_string().value()) == "m");
      CHECK(std::string(c["standard_name"].get_string().value()) == "height");
    }
  }
  CHECK(found_height);
}

TEST_CASE("batch mode writes one output per input and names files in the count lines",
          "[cli]") {
  TempDir d;
  auto a = d.file("a.csv", kSmallLog);
  auto b = d.file("b.csv", kSmallLog);
  auto outdir = d / "out";
  auto r = run_cli({"height", "--ref-pressure", "1013.25", "-j", "2", "-o", outdir, a, b});
  REQUIRE(r.status == 0);
  CHECK(std::filesystem::exists(outdir + "/a.csv"));
  CHECK(std::filesystem::exists(outdir + "/b.csv"));
  CHECK(r.err.find("baroz: " + a + ": 4 rows read, 4 written, 0 rejected") != std::string::npos);
  CHECK(r.err.find("baroz: " + b + ": 4 rows read, 4 written, 0 rejected") != std::string::npos);
  CHECK(run_cli({"height", a, b}).status == 1);  // several inputs need -o DIR
}

TEST_CASE("baroz atmosphere prints the 1976 standard atmosphere", "[cli][models]") {
  auto r = run_cli({"atmosphere", "--heights", "0,11km,20000"});
  REQUIRE(r.status == 0);
  auto lines = split_lines(r.out);
  REQUIRE(lines.size() == 4);
  CHECK(lines[0] ==
        "height_m,geopotential_height_m,pressure_hpa,temperature_k,temperature_c,density_kg_m3");
  // Source: U.S. Standard Atmosphere 1976, Table I (reference-values.md §1.4):
  // 11000 m: 2.2699E+04 Pa, 216.774 K; 20000 m: 5.5293E+03 Pa, 216.650 K.
  auto r11 = split(lines[2], ',');
  CHECK(field_as_double(r11[2]) == Approx(226.99).epsilon(1e-4));
  CHECK(field_as_double(r11[3]) == Approx(216.774).margin(0.001));
  auto r20 = split(lines[3], ',');
  CHECK(field_as_double(r20[2]) == Approx(55.293).epsilon(1e-4));
  CHECK(field_as_double(r20[5]) == Approx(8.8910e-2).epsilon(1e-4));

  auto p = run_cli({"atmosphere", "--pressures", "500"});
  REQUIRE(p.status == 0);
  // Source: reference-values.md §1.5: 500 hPa -> Z = 5579.33 m, H = 5574.44 m'.
  auto row = split(split_lines(p.out)[1], ',');
  CHECK(field_as_double(row[0]) == Approx(5579.33).margin(0.01));
  CHECK(field_as_double(row[1]) == Approx(5574.44).margin(0.01));
  CHECK(run_cli({"atmosphere", "--heights", "90km"}).status == 1);
}

TEST_CASE("baroz inspect reports columns, units, rate and rejects", "[cli]") {
  auto r = run_cli({"inspect", "-"}, "utc,press_pa,temp_ext_c,temp_int_c\n"
                                     "2026-05-16T08:40:00Z,98805,13.5,22\n"
                                     "2026-05-16T08:40:02Z,98806,13.5,22\n"
                                     "2026-05-16T08:40:04Z,oops,13.5,22\n");
  CHECK(r.status == 0);
  CHECK(r.out.find("'press_pa' (Pa, unit from name)") != std::string::npos);
  CHECK(r.out.find("temperature  <- 'temp_ext_c'") != std::string::npos);
  CHECK(r.out.find("'temp_int_c'") != std::string::npos);  // listed as unused
  CHECK(r.out.find("3 read, 2 usable, 1 rejected") != std::string::npos);
  CHECK(r.err.find("<stdin>:4: column 'press_pa': \"oops\" is not a number") != std::string::npos);
}

TEST_CASE("repeatable options take one value each and the input may follow them", "[cli]") {
  // Guards: a repeatable option (--col, --precision, --above) must not
  // swallow the input file that follows it (POSIX utility syntax: operands
  // after options).
  TempDir d;
  auto in = d.file("log.csv", "t_s,p_hpa\n0,1013.25\n1,1013.25\n2,900\n");
  auto r = run_cli({"height", "--col", "time=t_s", "--col", "pressure=p_hpa", "--precision", "1",
                    "--ref-pressure", "1013.25", in});
  REQUIRE(r.status == 0);
  const auto lines = split_lines(r.out);
  REQUIRE(lines.size() == 4);
  CHECK(lines[3].find(",988.7,") != std::string::npos);  // reference-values.md §1.5: 988.65 m
}
