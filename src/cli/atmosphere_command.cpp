// `baroz atmosphere`: the U.S. Standard Atmosphere 1976 as a table.
#include <cmath>
#include <sstream>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/standard_atmosphere.hpp"
#include "baroz/output/atomic_file.hpp"
#include "cli_common.hpp"

namespace baroz::cli {
namespace {

struct AtmosphereArgs {
  std::string heights;
  std::string pressures;
  bool geopotential = false;
  std::string height_unit = "m";
  std::string format = "csv";
  std::string output;
};

/// "FROM:TO:STEP" or "A,B,C"; each value parsed by `parse` (SI result).
std::vector<double> parse_range(const std::string& text, const char* option,
                                double (*parse)(std::string_view, std::string_view)) {
  std::vector<double> values;
  if (text.find(':') != std::string::npos) {
    std::vector<std::string> parts;
    std::stringstream ss(text);
    for (std::string part; std::getline(ss, part, ':');) parts.push_back(part);
    if (parts.size() != 3)
      throw usage_error(fmt::format("{}: \"{}\" is not FROM:TO:STEP", option, text));
    const double from = parse(parts[0], option);
    const double to = parse(parts[1], option);
    const double step = std::fabs(parse(parts[2], option));
    if (!(step > 0.0)) throw usage_error(fmt::format("{}: the step must not be zero", option));
    const double n = std::floor(std::fabs(to - from) / step + 1e-9);
    if (n > 1e6) throw usage_error(fmt::format("{}: more than a million rows", option));
    const double dir = to >= from ? 1.0 : -1.0;
    for (double i = 0; i <= n; ++i) values.push_back(from + dir * i * step);
  } else {
    std::stringstream ss(text);
    for (std::string part; std::getline(ss, part, ',');) values.push_back(parse(part, option));
  }
  if (values.empty()) throw usage_error(fmt::format("{}: no values", option));
  return values;
}

int run_atmosphere(const AtmosphereArgs& a, const Streams& streams) {
  if (!a.heights.empty() && !a.pressures.empty())
    throw usage_error("give either --heights or --pressures, not both");
  const bool ft = a.height_unit == "ft";
  const double hscale = ft ? 1.0 / constants::kFoot : 1.0;
  const std::string hs = ft ? "_ft" : "_m";

  struct Row {
    double z, h, p, t, rho;
  };
  std::vector<Row> rows;
  auto add_geopotential = [&](double h, const std::string& what) {
    if (h < ussa76::kMinGeopotentialM - 1e-6 || h > ussa76::kMaxGeopotentialM + 1e-6)
      throw usage_error(fmt::format(
          "{} is outside the standard atmosphere's range (-5000 to 84852 m' geopotential, "
          "about -4996 to 86000 m geometric)",
          what));
    rows.push_back({geometric_from_geopotential(h), h, ussa76::pressure_at(h),
                    ussa76::temperature_at(h), ussa76::density_at(h)});
  };
  if (!a.pressures.empty()) {
    for (double p : parse_range(a.pressures, "--pressures", parse_pressure_option)) {
      if (!ussa76::pressure_in_range(p))
        throw usage_error(fmt::format(
            "--pressures: {:g} hPa is outside the standard atmosphere's range", p / 100.0));
      add_geopotential(ussa76::geopotential_at_pressure(p), fmt::format("{:g} hPa", p / 100.0));
    }
  } else {
    const std::string spec = a.heights.empty() ? "0:86km:2km" : a.heights;
    for (double z : parse_range(spec, "--heights", parse_length_option)) {
      const double h = a.geopotential ? z : geopotential_from_geometric(z);
      add_geopotential(std::fabs(h - ussa76::kMaxGeopotentialM) < 0.1 ? ussa76::kMaxGeopotentialM : h,
                       fmt::format("{:g} m", z));
    }
  }

  const std::vector<std::string> names = {"height" + hs, "geopotential_height" + hs,
                                          "pressure_hpa", "temperature_k", "temperature_c",
                                          "density_kg_m3"};
  std::string doc;
  auto cells = [&](const Row& r) {
    return std::vector<std::string>{
        fmt::format("{:.3f}", r.z * hscale + 0.0), fmt::format("{:.3f}", r.h * hscale + 0.0),
        fmt::format("{:.6g}", r.p / 100.0), fmt::format("{:.3f}", r.t),
        fmt::format("{:.3f}", r.t - constants::kZeroCelsius + 0.0),
        fmt::format("{:.6g}", r.rho)};
  };
  if (a.format == "ndjson") {
    for (const auto& r : rows) {
      auto c = cells(r);
      doc += '{';
      for (std::size_t i = 0; i < names.size(); ++i)
        doc += fmt::format("{}\"{}\":{}", i ? "," : "", names[i], c[i]);
      doc += "}\n";
    }
  } else if (a.format == "text") {
    std::vector<std::size_t> width(names.size());
    for (std::size_t i = 0; i < names.size(); ++i) width[i] = names[i].size();
    std::vector<std::vector<std::string>> all;
    for (const auto& r : rows) {
      all.push_back(cells(r));
      for (std::size_t i = 0; i < names.size(); ++i)
        width[i] = std::max(width[i], all.back()[i].size());
    }
    for (std::size_t i = 0; i < names.size(); ++i)
      doc += fmt::format("{}{:>{}}", i ? "  " : "", names[i], width[i]);
    doc += '\n';
    for (const auto& c : all) {
      for (std::size_t i = 0; i < names.size(); ++i)
        doc += fmt::format("{}{:>{}}", i ? "  " : "", c[i], width[i]);
      doc += '\n';
    }
    doc += "Source: U.S. Standard Atmosphere, 1976 (NOAA-S/T 76-1562); temperature is the "
           "molecular-scale temperature T_M.\n";
  } else {
    for (std::size_t i = 0; i < names.size(); ++i) doc += (i ? "," : "") + names[i];
    doc += '\n';
    for (const auto& r : rows) {
      auto c = cells(r);
      for (std::size_t i = 0; i < c.size(); ++i) doc += (i ? "," : "") + c[i];
      doc += '\n';
    }
  }
  if (a.output.empty() || a.output == "-") {
    streams.out << doc;
    streams.out.flush();
    if (!streams.out) throw output_error("cannot write to standard output");
  } else {
    AtomicFile file(a.output);
    file.write(doc.data(), doc.size());
    file.commit();
  }
  return 0;
}

}  // namespace

void add_atmosphere_command(CLI::App& app, const Streams& streams, int& status) {
  auto args = std::make_shared<AtmosphereArgs>();
  CLI::App* cmd = app.add_subcommand(
      "atmosphere",
      "Print the U.S. Standard Atmosphere 1976 (height, pressure, temperature, density)");
  AtmosphereArgs& a = *args;
  cmd->add_option("--heights", a.heights,
                  "Heights FROM:TO:STEP or a comma list, with units (default 0:86km:2km)")
      ->type_name("RANGE");
  cmd->add_option("--pressures", a.pressures,
                  "Pressures FROM:TO:STEP or a comma list, with units (bare hPa)")
      ->type_name("RANGE");
  cmd->add_flag("--geopotential", a.geopotential,
                "The --heights are geopotential (default: geometric)");
  cmd->add_option("--height-unit", a.height_unit, "Unit of the height columns: m or ft")
      ->check(CLI::IsMember({"m", "ft"}))->type_name("m|ft");
  cmd->add_option("-f,--format", a.format, "csv (default), ndjson or text")
      ->check(CLI::IsMember({"csv", "ndjson", "text"}))->type_name("FORMAT");
  cmd->add_option("-o,--output", a.output, "Output file (default standard output)")
      ->type_name("FILE");
  cmd->callback([args, &streams, &status] { status = run_atmosphere(*args, streams); });
}

}  // namespace baroz::cli
