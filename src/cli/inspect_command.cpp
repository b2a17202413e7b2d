// `baroz inspect`: what the reader found, without computing heights.
#include <cmath>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/output/json_writer.hpp"
#include "baroz/pipeline/inspect_job.hpp"
#include "cli_common.hpp"

namespace baroz::cli {
namespace {

struct InspectArgs {
  ReaderArgs reader;
  bool json = false;
};

std::string unit_text(const ColumnMap& m, Role role) {
  switch (role) {
    case Role::kTime:
      return m.time_format == TimeFormat::kRfc3339
                 ? std::string("RFC 3339")
                 : fmt::format("numeric, {}", time_unit_name(m.time_unit));
    case Role::kPressure: return std::string(unit_name(m.pressure_unit));
    case Role::kTemperature: return std::string(unit_name(m.temperature_unit));
    case Role::kHumidity: return "%";
    case Role::kLat:
    case Role::kLon: return "degrees";
    case Role::kGnssAlt: return std::string(unit_name(m.gnss_alt_unit));
    case Role::kCount: break;
  }
  return "";
}

std::string time_text(const InspectReport& r, TimeNs t) {
  if (r.absolute_time) return format_rfc3339_utc(t);
  return fmt::format("{:.3f} s", static_cast<double>(t) * 1e-9);
}

std::string duration_text(TimeNs ns) {
  const double s = static_cast<double>(ns) * 1e-9;
  if (s < 120) return fmt::format("{:.3f} s", s);
  const auto total = static_cast<long long>(std::llround(s));
  if (total < 3600) return fmt::format("{} min {} s", total / 60, total % 60);
  return fmt::format("{} h {} min {} s", total / 3600, (total % 3600) / 60, total % 60);
}

std::string text_report(const InspectReport& r) {
  std::string o;
  auto line = [&](std::string_view key, const std::string& value) {
    o += fmt::format("{:<13}{}\n", key, value);
  };
  line("file", fmt::format("{} ({} bytes, sha256 {})", r.source, r.bytes, r.sha256));
  if (r.layout.format == LogFormat::kCsv)
    line("format", fmt::format("CSV, delimiter {}, {} line ends{}{}",
                               r.layout.delimiter == '\t' ? std::string("tab")
                                                          : fmt::format("'{}'", r.layout.delimiter),
                               r.layout.crlf ? "CRLF" : "LF",
                               r.layout.had_bom ? ", UTF-8 byte order mark" : "",
                               r.layout.preamble_lines
                                   ? fmt::format(", {} comment lines before the header",
                                                 r.layout.preamble_lines)
                                   : std::string()));
  else
    line("format", "NDJSON (one JSON object per line)");
  std::string header;
  for (const auto& c : r.layout.columns) header += (header.empty() ? "" : ", ") + c;
  line("header", fmt::format("line {}: {}", r.layout.header_line, header));
  bool first = true;
  for (std::size_t i = 0; i < kRoleCount; ++i) {
    const Role role = static_cast<Role>(i);
    if (!r.columns.has(role)) continue;
    line(first ? "columns" : "",
         fmt::format("{:<12} <- '{}' ({}, unit from {})", role_name(role), r.columns.name[i],
                     unit_text(r.columns, role), r.columns.unit_source[i]));
    first = false;
  }
  std::string unused;
  for (std::size_t c = 0; c < r.layout.columns.size(); ++c) {
    bool used = false;
    for (std::size_t i = 0; i < kRoleCount; ++i)
      used = used || r.columns.index[i] == static_cast<std::int32_t>(c);
    if (!used) unused += (unused.empty() ? "'" : ", '") + r.layout.columns[c] + "'";
  }
  if (!unused.empty()) line("unused", unused);
  line("rows", fmt::format("{} read, {} usable, {} rejected{}", r.rows_read, r.rows_usable,
                           r.rows_rejected,
                           r.blank_lines ? fmt::format(" ({} blank lines skipped)", r.blank_lines)
                                         : std::string()));
  for (std::size_t k = 0; k < r.rejected_by_reason.size(); ++k)
    if (r.rejected_by_reason[k])
      line("", fmt::format("{:>8} rejected as {}", r.rejected_by_reason[k],
                           reject_code(static_cast<RejectReason>(k))));
  if (r.rows_usable > 0) {
    line("time", fmt::format("{} to {} ({})", time_text(r, r.first_time_ns),
                             time_text(r, r.last_time_ns),
                             duration_text(r.last_time_ns - r.first_time_ns)));
    if (r.nominal_interval_ns > 0)
      line("rate", fmt::format("nominal interval {:.3f} s ({:.3g} Hz)",
                               static_cast<double>(r.nominal_interval_ns) * 1e-9,
                               1e9 / static_cast<double>(r.nominal_interval_ns)));
    line("time order", fmt::format("{} gaps (longest interval {}), {} backwards, {} duplicates",
                                   r.gaps, duration_text(r.longest_gap_ns), r.time_backwards,
                                   r.time_duplicates));
    line("pressure", fmt::format("{:.4f} to {:.4f} hPa", r.min_pressure_pa / 100.0,
                                 r.max_pressure_pa / 100.0));
    if (!std::isnan(r.min_temperature_k))
      line("temperature",
           fmt::format("{:.3f} to {:.3f} C", r.min_temperature_k - constants::kZeroCelsius,
                       r.max_temperature_k - constants::kZeroCelsius));
    if (r.missing_temperature || r.missing_humidity || r.missing_gnss)
      line("missing", fmt::format("temperature {}, humidity {}, gnss {} rows",
                                  r.missing_temperature, r.missing_humidity, r.missing_gnss));
  }
  if (r.reference && r.reference->window) {
    const ReferenceWindow& w = *r.reference->window;
    std::string msg = fmt::format(
        "stationary {:.3f} to {:.3f} s, {} samples, mean {:.4f} hPa (sd {:.4f})",
        static_cast<double>(w.start_ns - r.first_time_ns) * 1e-9,
        static_cast<double>(w.end_ns - r.first_time_ns) * 1e-9, w.samples,
        w.pressure_pa / 100.0, w.pressure_sd_pa / 100.0);
    if (w.launch_found)
      msg += fmt::format("; launch at {:.3f} s",
                         static_cast<double>(w.launch_ns - r.first_time_ns) * 1e-9);
    else
      msg += "; no launch detected";
    line("pre-launch", msg);
  } else if (!r.reference_error.empty()) {
    line("pre-launch", r.reference_error);
  }
  return o;
}

std::string json_report(const InspectReport& r) {
  JsonWriter j(JsonStyle::kPretty);
  j.begin_object();
  j.key("file"); j.value(r.source);
  j.key("bytes"); j.value(r.bytes);
  j.key("sha256"); j.value(r.sha256);
  j.key("format"); j.value(r.layout.format == LogFormat::kCsv ? "csv" : "ndjson");
  if (r.layout.format == LogFormat::kCsv) {
    j.key("delimiter");
    j.value(r.layout.delimiter == '\t' ? std::string("tab") : std::string(1, r.layout.delimiter));
    j.key("crlf"); j.value(r.layout.crlf);
    j.key("byte_order_mark"); j.value(r.layout.had_bom);
  }
  j.key("header");
  j.begin_array();
  for (const auto& c : r.layout.columns) j.value(c);
  j.end_array();
  j.key("columns");
  j.begin_object();
  for (std::size_t i = 0; i < kRoleCount; ++i) {
    const Role role = static_cast<Role>(i);
    j.key(role_name(role));
    if (!r.columns.has(role)) {
      j.null();
      continue;
    }
    j.begin_object();
    j.key("name"); j.value(r.columns.name[i]);
    j.key("unit"); j.value(unit_text(r.columns, role));
    j.key("unit_from"); j.value(r.columns.unit_source[i]);
    j.end_object();
  }
  j.end_object();
  j.key("rows_read"); j.value(r.rows_read);
  j.key("rows_usable"); j.value(r.rows_usable);
  j.key("rows_rejected"); j.value(r.rows_rejected);
  j.key("rejected_by_reason");
  j.begin_object();
  for (std::size_t k = 0; k < r.rejected_by_reason.size(); ++k)
    if (r.rejected_by_reason[k]) {
      j.key(reject_code(static_cast<RejectReason>(k)));
      j.value(r.rejected_by_reason[k]);
    }
  j.end_object();
  j.key("blank_lines"); j.value(r.blank_lines);
  j.key("absolute_time"); j.value(r.absolute_time);
  j.key("first_time"); j.value(time_text(r, r.first_time_ns));
  j.key("last_time"); j.value(time_text(r, r.last_time_ns));
  j.key("duration_s"); j.value(static_cast<double>(r.last_time_ns - r.first_time_ns) * 1e-9);
  j.key("nominal_interval_s"); j.value(static_cast<double>(r.nominal_interval_ns) * 1e-9);
  j.key("gaps"); j.value(r.gaps);
  j.key("longest_interval_s"); j.value(static_cast<double>(r.longest_gap_ns) * 1e-9);
  j.key("time_backwards"); j.value(r.time_backwards);
  j.key("time_duplicates"); j.value(r.time_duplicates);
  j.key("min_pressure_hpa"); j.value(r.min_pressure_pa / 100.0);
  j.key("max_pressure_hpa"); j.value(r.max_pressure_pa / 100.0);
  j.key("min_temperature_c"); j.value(r.min_temperature_k - constants::kZeroCelsius);
  j.key("max_temperature_c"); j.value(r.max_temperature_k - constants::kZeroCelsius);
  j.key("pre_launch");
  if (r.reference && r.reference->window) {
    const ReferenceWindow& w = *r.reference->window;
    j.begin_object();
    j.key("start_elapsed_s"); j.value(static_cast<double>(w.start_ns - r.first_time_ns) * 1e-9);
    j.key("end_elapsed_s"); j.value(static_cast<double>(w.end_ns - r.first_time_ns) * 1e-9);
    j.key("samples"); j.value(static_cast<std::uint64_t>(w.samples));
    j.key("pressure_hpa"); j.value(w.pressure_pa / 100.0);
    j.key("pressure_sd_hpa"); j.value(w.pressure_sd_pa / 100.0);
    j.key("launch_found"); j.value(w.launch_found);
    j.key("launch_elapsed_s");
    if (w.launch_found) j.value(static_cast<double>(w.launch_ns - r.first_time_ns) * 1e-9);
    else j.null();
    j.end_object();
  } else {
    j.null();
  }
  j.end_object();
  return j.str() + "\n";
}

int run_inspect(const InspectArgs& a, const Streams& streams) {
  InspectOptions o;
  o.reader = reader_options(a.reader);
  o.columns = column_options(a.reader);
  o.decimal_comma = a.reader.decimal_comma;
  Diagnostics diag(streams.err,
                   a.reader.error_format == "json" ? ErrorFormat::kJson : ErrorFormat::kText);
  std::vector<std::string> inputs = a.reader.inputs;
  if (inputs.empty()) inputs.push_back("-");
  int status = 0;
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    try {
      auto source = open_input(inputs[i], streams);
      source->enable_hashing();
      InspectReport rep = run_inspect_job(*source, o, diag);
      if (i > 0 && !a.json) streams.out << '\n';
      streams.out << (a.json ? json_report(rep) : text_report(rep));
      if (rep.rows_usable == 0) status = std::max(status, static_cast<int>(ExitCode::kInput));
    } catch (const Error& e) {
      diag.error(e.what());
      status = std::max(status, static_cast<int>(e.code()));
    }
  }
  streams.out.flush();
  return status;
}

}  // namespace

void add_inspect_command(CLI::App& app, const Streams& streams, int& status) {
  auto args = std::make_shared<InspectArgs>();
  CLI::App* cmd = app.add_subcommand(
      "inspect", "Show what the reader finds in a log (columns, units, rate, gaps, rejects)");
  add_reader_options(*cmd, args->reader);
  cmd->add_flag("--json", args->json, "Write the report as JSON");
  cmd->callback([args, &streams, &status] { status = run_inspect(*args, streams); });
}

}  // namespace baroz::cli
