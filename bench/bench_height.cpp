// Benchmark: `baroz height` end to end against a plain mawk one-liner that
// computes only the isothermal formula, on the same generated log, in the
// same run. Not a test: it prints figures for docs/performance.md.
//
//   baroz_bench [--rows N] [--mc-rows M] [--runs K] [--baroz PATH] [--dir DIR] [--keep]
//
// Then the --monte-carlo band on a 1 Hz log of M rows (default 10 000, the
// size the uncertainty issue asks to handle with N = 200 in seconds; 0 skips).
//
// Each command reads the log and writes to /dev/null; wall time is measured
// around posix_spawn + wait4, peak memory is the child's ru_maxrss.
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/models/geopotential.hpp"

extern char** environ;

namespace {

struct Measure {
  double seconds = 0.0;
  long max_rss_kib = 0;
  int status = 0;
};

Measure run_command(const std::vector<std::string>& argv) {
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, 1, "/dev/null", O_WRONLY, 0);
  posix_spawn_file_actions_addopen(&actions, 2, "/dev/null", O_WRONLY, 0);
  std::vector<char*> args;
  for (const auto& a : argv) args.push_back(const_cast<char*>(a.c_str()));
  args.push_back(nullptr);
  const auto start = std::chrono::steady_clock::now();
  pid_t pid = 0;
  if (posix_spawnp(&pid, args[0], &actions, nullptr, args.data(), environ) != 0) {
    std::perror("posix_spawnp");
    std::exit(1);
  }
  int status = 0;
  rusage usage{};
  wait4(pid, &status, 0, &usage);
  const auto end = std::chrono::steady_clock::now();
  posix_spawn_file_actions_destroy(&actions);
  Measure m;
  m.seconds = std::chrono::duration<double>(end - start).count();
  m.max_rss_kib = usage.ru_maxrss;
  m.status = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return m;
}

/// A log at `interval_s` (0.01: 100 Hz): 60 s at rest at 1013.25 hPa, then a
/// balloon-like climb and fall between the ground and 30 km (triangle wave,
/// 3 h period), with the standard temperature and a little deterministic
/// pressure jitter.
void generate(const std::string& path, long rows, double interval_s = 0.01) {
  std::FILE* f = std::fopen(path.c_str(), "w");
  if (!f) {
    std::perror(path.c_str());
    std::exit(1);
  }
  std::fputs("time_s,pressure_hpa,temperature_c\n", f);
  std::vector<char> buf(1 << 20);
  std::setvbuf(f, buf.data(), _IOFBF, buf.size());
  const double period = 3 * 3600.0;
  for (long i = 0; i < rows; ++i) {
    const double t = static_cast<double>(i) * interval_s;
    double z = 0.0;
    if (t > 60.0) {
      const double phase = std::fmod(t - 60.0, period) / period;
      z = 30000.0 * (phase < 0.5 ? 2 * phase : 2 - 2 * phase);
    }
    const double h = baroz::geopotential_from_geometric(z);
    const double p = baroz::ussa76::pressure_at(h) / 100.0 + 0.01 * std::sin(0.7 * static_cast<double>(i));
    const double tc = baroz::ussa76::temperature_at(h) - 273.15;
    std::fprintf(f, "%.2f,%.4f,%.2f\n", t, p, tc);
  }
  std::fclose(f);
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  return v[v.size() / 2];
}

}  // namespace

int main(int argc, char** argv) {
  long rows = 10'000'000;
  long mc_rows = 10'000;
  int runs = 5;
  std::string baroz = "./build/baroz";
  std::string dir = std::filesystem::temp_directory_path().string();
  bool keep = false;
  for (int i = 1; i < argc; ++i) {
    std::string a = argv[i];
    auto next = [&]() -> std::string { return i + 1 < argc ? argv[++i] : ""; };
    if (a == "--rows") rows = std::atol(next().c_str());
    else if (a == "--mc-rows") mc_rows = std::atol(next().c_str());
    else if (a == "--runs") runs = std::atoi(next().c_str());
    else if (a == "--baroz") baroz = next();
    else if (a == "--dir") dir = next();
    else if (a == "--keep") keep = true;
    else {
      fmt::print(stderr,
                 "usage: baroz_bench [--rows N] [--mc-rows M] [--runs K] [--baroz PATH] "
                 "[--dir DIR] [--keep]\n");
      return 1;
    }
  }
  const std::string log = dir + "/baroz_bench_" + std::to_string(rows) + ".csv";
  if (!std::filesystem::exists(log)) {
    fmt::print("generating {} rows into {}\n", rows, log);
    generate(log, rows);
  }
  const double mb = static_cast<double>(std::filesystem::file_size(log)) / 1e6;
  fmt::print("log: {} ({} rows, {:.1f} MB)\n\n", log, rows, mb);

  struct Case {
    std::string name;
    std::vector<std::string> argv;
  };
  const std::vector<Case> cases = {
      {"mawk isothermal one-liner",
       {"mawk", "-F,",
        "NR>1{printf \"%s,%.3f\\n\",$1,29.27*($3+273.15)*log(1013.25/$2)}", log}},
      {"baroz height --model isothermal --ref-pressure 1013.25",
       {baroz, "height", "--model", "isothermal", "--ref-pressure", "1013.25", log}},
      {"baroz height (defaults: auto model, auto reference window)", {baroz, "height", log}},
      {"baroz height --model standard --ref-pressure 1013.25 -f ndjson",
       {baroz, "height", "--model", "standard", "--ref-pressure", "1013.25", "-f", "ndjson", log}},
      {"cat LOG | baroz height - (a stream: causal profile)",
       {"sh", "-c", "cat '" + log + "' | '" + baroz + "' height -"}},
  };
  auto table = [&](const std::vector<Case>& list, long n_rows, double size_mb, bool vs_first) {
    fmt::print("{:<62} {:>9} {:>11} {:>9} {:>10}\n", "command (stdout to /dev/null)", "median s",
               "rows/s", "MB/s", "peak MiB");
    double first_rate = 0.0;
    for (const auto& c : list) {
      std::vector<double> times;
      long rss = 0;
      for (int r = 0; r < runs; ++r) {
        Measure m = run_command(c.argv);
        if (m.status != 0) {
          fmt::print(stderr, "{} exited with {}\n", c.name, m.status);
          std::exit(1);
        }
        times.push_back(m.seconds);
        rss = std::max(rss, m.max_rss_kib);
      }
      const double t = median(times);
      const double rate = static_cast<double>(n_rows) / t;
      if (first_rate == 0.0) first_rate = rate;
      fmt::print("{:<62} {:>9.3f} {:>11.3e} {:>9.1f} {:>10.1f}", c.name, t, rate, size_mb / t,
                 static_cast<double>(rss) / 1024.0);
      if (vs_first) fmt::print("   x{:.2f} vs mawk", rate / first_rate);
      fmt::print("\n");
    }
  };
  table(cases, rows, mb, true);
  if (!keep) std::filesystem::remove(log);

  if (mc_rows > 0) {
    const std::string mc_log = dir + "/baroz_bench_mc_" + std::to_string(mc_rows) + ".csv";
    generate(mc_log, mc_rows, 1.0);
    const double mc_mb = static_cast<double>(std::filesystem::file_size(mc_log)) / 1e6;
    fmt::print("\nMonte Carlo band: {} ({} rows at 1 Hz, {:.2f} MB)\n\n", mc_log, mc_rows, mc_mb);
    const std::vector<Case> mc_cases = {
        {"baroz height (profile, linear band)", {baroz, "height", mc_log}},
        {"baroz height --monte-carlo 200 (profile)",
         {baroz, "height", "--monte-carlo", "200", mc_log}},
        {"baroz height --model standard --monte-carlo 200",
         {baroz, "height", "--model", "standard", "--monte-carlo", "200", mc_log}},
        {"baroz height --model standard --monte-carlo 2000",
         {baroz, "height", "--model", "standard", "--monte-carlo", "2000", mc_log}},
    };
    table(mc_cases, mc_rows, mc_mb, false);
    if (!keep) std::filesystem::remove(mc_log);
  }
  return 0;
}
