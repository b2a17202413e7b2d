#include "cli_common.hpp"

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/core/units.hpp"

namespace baroz::cli {

void add_reader_options(CLI::App& app, ReaderArgs& a) {
  app.add_option("inputs", a.inputs, "Input logs (CSV or NDJSON); '-' or none: standard input")
      ->type_name("FILE...");
  app.add_option("--input-format", a.input_format,
                 "Input format: auto (from the extension, else sniffed), csv, ndjson")
      ->check(CLI::IsMember({"auto", "csv", "ndjson"}))
      ->type_name("FORMAT")
      ->group("Input");
  app.add_option("--delimiter", a.delimiter,
                 "CSV delimiter: ',', ';' or 'tab' (default: detected from the header)")
      ->type_name("CHAR")
      ->group("Input");
  app.add_option("--col", a.cols,
                 "Column for a role (time, pressure, temperature, humidity, lat, lon, "
                 "gnss_alt); an empty NAME ignores the role; repeatable")
      ->allow_extra_args(false)->type_name("ROLE=NAME")
      ->group("Input");
  app.add_option("--pressure-unit", a.pressure_unit,
                 "Unit of the pressure column: Pa, hPa, kPa, mbar, bar, inHg, mmHg, psi, atm "
                 "(default: from the column name)")
      ->type_name("UNIT")
      ->group("Input");
  app.add_option("--temperature-unit", a.temperature_unit,
                 "Unit of the temperature column: C, K, F (default: from the column name)")
      ->type_name("UNIT")
      ->group("Input");
  app.add_option("--time-unit", a.time_unit,
                 "Unit of a numeric time column: s, ms, us, ns (default: from the column "
                 "name, else s)")
      ->type_name("UNIT")
      ->group("Input");
  app.add_option("--tz", a.tz,
                 "Offset for RFC 3339 times without a zone, e.g. +02:00 (default: UTC; the "
                 "host's zone is never used)")
      ->type_name("OFFSET")
      ->group("Input");
  app.add_flag("--decimal-comma", a.decimal_comma,
               "Read numbers with a decimal comma (1013,25); the delimiter must then be ';' "
               "or tab")
      ->group("Input");
  app.add_option("--error-format", a.error_format,
                 "Problems on stderr as text lines or one JSON object each")
      ->check(CLI::IsMember({"text", "json"}))
      ->type_name("text|json")
      ->group("Messages");
}

ReaderOptions reader_options(const ReaderArgs& a) {
  ReaderOptions r;
  if (a.input_format == "csv") r.format = LogFormat::kCsv;
  else if (a.input_format == "ndjson") r.format = LogFormat::kNdjson;
  if (!a.delimiter.empty()) {
    if (a.delimiter == "," || a.delimiter == "comma") r.delimiter = ',';
    else if (a.delimiter == ";" || a.delimiter == "semicolon") r.delimiter = ';';
    else if (a.delimiter == "tab" || a.delimiter == "\t" || a.delimiter == "\\t")
      r.delimiter = '\t';
    else
      throw usage_error(fmt::format("--delimiter: \"{}\" is not one of ',', ';', 'tab'",
                                    a.delimiter));
  }
  if (a.decimal_comma && r.delimiter == ',')
    throw usage_error("--decimal-comma cannot be used with the ',' delimiter");
  return r;
}

ColumnOptions column_options(const ReaderArgs& a) {
  ColumnOptions c;
  for (const auto& spec : a.cols) {
    auto eq = spec.find('=');
    if (eq == std::string::npos)
      throw usage_error(fmt::format("--col: \"{}\" is not ROLE=NAME", spec));
    auto role = parse_role(spec.substr(0, eq));
    if (!role)
      throw usage_error(fmt::format(
          "--col: \"{}\" is not a role (time, pressure, temperature, humidity, lat, lon, "
          "gnss_alt)",
          spec.substr(0, eq)));
    c.overrides.emplace_back(*role, spec.substr(eq + 1));
  }
  if (!a.pressure_unit.empty()) {
    c.pressure_unit = parse_pressure_unit(a.pressure_unit);
    if (!c.pressure_unit)
      throw usage_error(fmt::format(
          "--pressure-unit: \"{}\" is not a pressure unit (Pa, hPa, kPa, mbar, bar, inHg, "
          "mmHg, psi, atm)",
          a.pressure_unit));
  }
  if (!a.temperature_unit.empty()) {
    c.temperature_unit = parse_temperature_unit(a.temperature_unit);
    if (!c.temperature_unit)
      throw usage_error(fmt::format(
          "--temperature-unit: \"{}\" is not a temperature unit (C, K, F)", a.temperature_unit));
  }
  if (!a.time_unit.empty()) {
    c.time_unit = parse_time_unit(a.time_unit);
    if (!c.time_unit)
      throw usage_error(
          fmt::format("--time-unit: \"{}\" is not a time unit (s, ms, us, ns)", a.time_unit));
  }
  if (!a.tz.empty()) {
    auto off = parse_utc_offset(a.tz);
    if (!off)
      throw usage_error(fmt::format(
          "--tz: \"{}\" is not a fixed UTC offset (UTC, Z, +hh:mm, -hh:mm); named zones are "
          "not supported",
          a.tz));
    c.tz_offset_s = *off;
  }
  return c;
}

std::unique_ptr<ByteSource> open_input(const std::string& path, const Streams& streams) {
  if (path == "-") {
    if (streams.in) return make_istream_source(*streams.in, "<stdin>");
    return make_fd_source(0, "<stdin>");
  }
  return open_file_source(path);
}

}  // namespace baroz::cli
