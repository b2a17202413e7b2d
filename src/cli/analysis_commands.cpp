// `baroz summary` and `baroz plot`: the height pipeline, then the analysis
// stage (events, summary) and its writers (JSON / text summary, SVG plot).
#include <memory>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "baroz/cli/cli.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"
#include "baroz/output/atomic_file.hpp"
#include "baroz/output/byte_sink.hpp"
#include "baroz/output/summary_writer.hpp"
#include "baroz/output/svg_plot.hpp"
#include "baroz/pipeline/flight_analysis.hpp"
#include "analysis_output.hpp"
#include "cli_common.hpp"
#include "pipeline_args.hpp"

namespace baroz::cli {

std::vector<double> parse_above_heights(const std::vector<std::string>& above) {
  std::vector<double> out;
  for (const auto& a : above) out.push_back(parse_length_option(a, "--above"));
  return out;
}

void write_text_output(const std::string& path, const std::string& text, const Streams& streams) {
  if (path.empty() || path == "-") {
    streams.out << text;
    streams.out.flush();
    if (!streams.out) throw output_error("cannot write to standard output");
    return;
  }
  AtomicFile file(path);
  file.write(text.data(), text.size());
  file.commit();
}

namespace {

struct AnalysisArgs {
  PipelineArgs pipeline;
  std::string output;
  bool quiet = false;
  // summary
  bool text = false;
  std::vector<std::string> above;
  // plot
  bool elapsed = false;
  bool no_temperature_panel = false;
  std::string title;
  std::string height_unit = "m";
};

/// Runs the pipeline on the one input into a series; exit status in `status`.
bool collect_series(const AnalysisArgs& a, const HeightOptions& options, const Streams& streams,
                    Diagnostics& diag, FlightSeries& series, int& status) {
  if (a.pipeline.reader.inputs.size() > 1)
    throw usage_error("summary and plot read one input");
  const std::string input = a.pipeline.reader.inputs.empty() ? "-" : a.pipeline.reader.inputs[0];
  std::unique_ptr<ByteSource> source = open_input(input, streams);
  std::unique_ptr<ByteSink> sink = make_null_sink();
  const HeightReport r = run_height_job(*source, *sink, options, diag, nullptr, &series);
  diag.counts(r.source, false, r.rows_read, r.rows_written, r.rows_rejected);
  if (r.stopped_by_strict) {
    diag.error(fmt::format("{}: stopped at the first rejected row (--strict)", r.source));
    status = static_cast<int>(ExitCode::kStrictReject);
    return false;
  }
  if (r.rows_written == 0) {
    diag.error(fmt::format("{}: no usable rows ({} read, {} rejected)", r.source, r.rows_read,
                           r.rows_rejected));
    status = static_cast<int>(ExitCode::kInput);
    return false;
  }
  return true;
}

int run_analysis(const AnalysisArgs& a, const Streams& streams, bool plot) {
  HeightOptions options = resolve_pipeline_options(a.pipeline);
  Diagnostics diag(streams.err,
                   a.pipeline.reader.error_format == "json" ? ErrorFormat::kJson
                                                            : ErrorFormat::kText,
                   a.quiet);
  AnalysisOptions analysis;
  analysis.smoothing = options.smoothing;
  analysis.summary.above_m = parse_above_heights(a.above);
  int status = 0;
  FlightSeries series;
  try {
    if (!collect_series(a, options, streams, diag, series, status)) return status;
  } catch (const Error& e) {
    diag.error(e.what());
    return static_cast<int>(e.code());
  }
  const FlightAnalysis result = analyse_flight(series, analysis);
  if (plot) {
    PlotOptions po;
    po.height_unit = a.height_unit == "ft" ? LengthUnit::kFoot : LengthUnit::kMetre;
    po.clock_time = !a.elapsed;
    po.temperature_panel = !a.no_temperature_panel;
    po.title = a.title;
    std::string svg;
    write_svg_plot(series, result.events, po, svg);
    write_text_output(a.output, svg, streams);
  } else {
    write_text_output(a.output,
                      a.text ? summary_text(series, result.events, result.summary)
                             : summary_json(series, result.events, result.summary),
                      streams);
  }
  return 0;
}

void add_common(CLI::App& cmd, AnalysisArgs& a) {
  add_pipeline_options(cmd, a.pipeline);
  cmd.add_flag("-q,--quiet", a.quiet, "No notes on stderr (problems and counts remain)")
      ->group("Messages");
}

}  // namespace

void add_summary_command(CLI::App& app, const Streams& streams, int& status) {
  auto args = std::make_shared<AnalysisArgs>();
  CLI::App* cmd = app.add_subcommand(
      "summary",
      "Flight events (launch, burst/apogee, landing), maximum height with its band, rates and "
      "durations: JSON, or a text table with --text");
  cmd->footer(std::string("\n") + std::string(kCaution));
  AnalysisArgs& a = *args;
  cmd->add_option("-o,--output", a.output, "Output file (written atomically); default stdout")
      ->type_name("FILE")->group("Output");
  cmd->add_flag("--text", a.text, "A text table instead of JSON")->group("Output");
  cmd->add_option("--above", a.above,
                  "Also report the time spent above this height (repeatable, e.g. 100m)")
      ->allow_extra_args(false)->type_name("H")->group("Output");
  add_common(*cmd, a);
  cmd->callback([args, &streams, &status] { status = run_analysis(*args, streams, false); });
}

void add_plot_command(CLI::App& app, const Streams& streams, int& status) {
  auto args = std::make_shared<AnalysisArgs>();
  CLI::App* cmd = app.add_subcommand(
      "plot", "An SVG plot of height against time with the band shaded and the events marked");
  cmd->footer(std::string("\n") + std::string(kCaution));
  AnalysisArgs& a = *args;
  cmd->add_option("-o,--output", a.output, "Output SVG file (written atomically); default stdout")
      ->type_name("FILE")->group("Output");
  cmd->add_option("--height-unit", a.height_unit, "Unit of the height axis: m or ft")
      ->check(CLI::IsMember({"m", "ft"}))->type_name("m|ft")->group("Output");
  cmd->add_flag("--elapsed", a.elapsed, "Time axis as elapsed time instead of UTC clock time")
      ->group("Output");
  cmd->add_flag("--no-temperature-panel", a.no_temperature_panel,
                "Leave out the panel of temperature against height")
      ->group("Output");
  cmd->add_option("--title", a.title, "Title of the plot")->type_name("TEXT")->group("Output");
  add_common(*cmd, a);
  cmd->callback([args, &streams, &status] { status = run_analysis(*args, streams, true); });
}

}  // namespace baroz::cli
