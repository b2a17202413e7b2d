// `baroz height`: the main job.
#include <atomic>
#include <cmath>
#include <filesystem>
#include <iostream>
#include <mutex>
#include <optional>
#include <set>
#include <thread>

#include <fmt/format.h>
#include <unistd.h>

#include "baroz/cli/cli.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"
#include "baroz/output/atomic_file.hpp"
#include "baroz/output/manifest.hpp"
#include "baroz/output/rejects_writer.hpp"
#include "baroz/output/summary_writer.hpp"
#include "baroz/output/svg_plot.hpp"
#include "baroz/pipeline/flight_analysis.hpp"
#include "baroz/pipeline/height_job.hpp"
#include "analysis_output.hpp"
#include "cli_common.hpp"
#include "pipeline_args.hpp"
#include "rerun.hpp"

namespace baroz::cli {
namespace {

struct HeightArgs {
  PipelineArgs pipeline;
  std::string output;
  std::string format;
  std::string height_unit = "m";
  std::vector<std::string> precision;
  std::string manifest, rejects, summary, plot;
  bool no_flags = false;
  bool geopotential = false;
  bool vspeed = false;
  bool despike = false;
  bool sigma_columns = false;
  bool line_buffered = false;
  bool quiet = false;
  int jobs = 0;
  std::string rerun;  ///< --rerun MANIFEST
};

int parse_decimals(const std::string& text, const std::string& spec) {
  int v = -1;
  if (text.size() == 1 && text[0] >= '0' && text[0] <= '9') v = text[0] - '0';
  if (v < 0)
    throw usage_error(fmt::format("--precision: \"{}\" is not a number of decimals 0 to 9", spec));
  return v;
}

HeightOptions resolve_options(const HeightArgs& a) {
  HeightOptions o = resolve_pipeline_options(a.pipeline);
  SeriesOptions& s = o.series;
  s.height_unit = a.height_unit == "ft" ? LengthUnit::kFoot : LengthUnit::kMetre;
  for (const auto& spec : a.precision) {
    auto eq = spec.find('=');
    if (eq == std::string::npos) {
      s.height_decimals = parse_decimals(spec, spec);
      continue;
    }
    const std::string kind = spec.substr(0, eq);
    const int d = parse_decimals(spec.substr(eq + 1), spec);
    if (kind == "height") s.height_decimals = d;
    else if (kind == "pressure") s.pressure_decimals = d;
    else if (kind == "temperature") s.temperature_decimals = d;
    else if (kind == "elapsed") s.elapsed_decimals = d;
    else
      throw usage_error(fmt::format(
          "--precision: \"{}\" is not height, pressure, temperature or elapsed", kind));
  }
  s.flags = !a.no_flags;
  s.geopotential = a.geopotential;
  o.vspeed = a.vspeed;
  o.despike = a.despike;
  o.sigma_columns = a.sigma_columns;
  s.line_buffered = a.line_buffered;
  if (a.format == "ndjson") s.format = OutputFormat::kNdjson;
  else if (a.format == "csv") s.format = OutputFormat::kCsv;
  else if (a.format.empty()) {
    const std::string ext = std::filesystem::path(a.output).extension().string();
    s.format = (ext == ".ndjson" || ext == ".jsonl" || ext == ".json") ? OutputFormat::kNdjson
                                                                         : OutputFormat::kCsv;
  }
  return o;
}

/// One input's run with its own output; returns its exit status.
struct InputResult {
  HeightReport report;
  int status = 0;
  bool ran = false;
};

InputResult run_one(const std::string& input, const std::string& output,
                    const HeightOptions& options, const Streams& streams, Diagnostics& diag,
                    RejectsWriter* rejects, bool batch, bool hash_inputs,
                    FlightSeries* collect = nullptr) {
  InputResult result;
  try {
    std::unique_ptr<ByteSource> source = open_input(input, streams);
    if (hash_inputs) source->enable_hashing();
    std::unique_ptr<ByteSink> sink = output == "-"
                                         ? make_ostream_sink(streams.out, "standard output")
                                         : make_atomic_file_sink(output);
    result.report = run_height_job(*source, *sink, options, diag, rejects, collect);
    result.ran = true;
    const HeightReport& r = result.report;
    diag.counts(r.source, batch, r.rows_read, r.rows_written, r.rows_rejected);
    if (r.stopped_by_strict) {
      diag.error(fmt::format("{}: stopped at the first rejected row (--strict){}", r.source,
                             output == "-" ? "" : "; the output file is not written"));
      result.status = static_cast<int>(ExitCode::kStrictReject);
      return result;  // the atomic sink is discarded without commit
    }
    if (r.rows_written == 0) {
      diag.error(fmt::format("{}: no usable rows ({} read, {} rejected)", r.source,
                             r.rows_read, r.rows_rejected));
      result.status = static_cast<int>(ExitCode::kInput);
      if (output == "-") sink->commit();
      return result;
    }
    sink->commit();
  } catch (const Error& e) {
    diag.error(e.what());
    result.status = static_cast<int>(e.code());
  }
  return result;
}

int run_height(const HeightArgs& a, const Streams& streams,
               const std::vector<std::string>& arguments) {
  HeightOptions options = resolve_options(a);
  Diagnostics diag(streams.err,
                   a.pipeline.reader.error_format == "json" ? ErrorFormat::kJson : ErrorFormat::kText,
                   a.quiet);

  std::vector<std::string> inputs = a.pipeline.reader.inputs;
  if (inputs.empty()) inputs.push_back("-");
  {
    std::size_t stdin_count = 0;
    for (const auto& i : inputs) stdin_count += i == "-";
    if (stdin_count > 1) throw usage_error("standard input ('-') can be read only once");
  }
  const bool output_is_dir =
      !a.output.empty() && a.output != "-" &&
      (std::filesystem::is_directory(a.output) || a.output.back() == '/');
  const bool batch = inputs.size() > 1 || output_is_dir;
  std::vector<std::string> outputs;
  if (batch) {
    if (a.output.empty() || a.output == "-")
      throw usage_error("several inputs need -o DIR (one output file per input)");
    std::error_code ec;
    std::filesystem::create_directories(a.output, ec);
    if (!std::filesystem::is_directory(a.output))
      throw output_error(fmt::format("cannot create the output directory '{}'", a.output));
    const std::string ext = options.series.format == OutputFormat::kNdjson ? ".ndjson" : ".csv";
    std::set<std::string> seen;
    for (const auto& in : inputs) {
      if (in == "-") throw usage_error("batch mode (-o DIR) reads files, not standard input");
      std::string name = std::filesystem::path(in).stem().string() + ext;
      if (!seen.insert(name).second)
        throw usage_error(fmt::format(
            "two inputs would both be written to '{}' in '{}'; rename one", name, a.output));
      outputs.push_back((std::filesystem::path(a.output) / name).string());
    }
  } else {
    outputs.push_back(a.output.empty() ? "-" : a.output);
  }

  std::unique_ptr<RejectsWriter> rejects;
  if (!a.rejects.empty())
    rejects = std::make_unique<RejectsWriter>(make_atomic_file_sink(a.rejects));

  std::vector<InputResult> results(inputs.size());
  if (batch && (!a.summary.empty() || !a.plot.empty()))
    throw usage_error("--summary and --plot go with one input, not batch mode");
  if (!batch) {
    const bool analyse = !a.summary.empty() || !a.plot.empty();
    FlightSeries series;
    results[0] = run_one(inputs[0], outputs[0], options, streams, diag, rejects.get(), false,
                         !a.manifest.empty(), analyse ? &series : nullptr);
    if (analyse && results[0].status == 0) {
      AnalysisOptions ao;
      ao.smoothing = options.smoothing;
      const FlightAnalysis fa = analyse_flight(series, ao);
      if (!a.summary.empty())
        write_text_output(a.summary, summary_json(series, fa.events, fa.summary), streams);
      if (!a.plot.empty()) {
        PlotOptions po;
        po.height_unit = options.series.height_unit;
        std::string svg;
        write_svg_plot(series, fa.events, po, svg);
        write_text_output(a.plot, svg, streams);
      }
    }
  } else {
    unsigned jobs = a.jobs > 0 ? static_cast<unsigned>(a.jobs)
                               : std::max(1u, std::thread::hardware_concurrency());
    jobs = std::min<unsigned>(jobs, static_cast<unsigned>(inputs.size()));
    const bool progress = &streams.err == &std::cerr && ::isatty(2) && !a.quiet;
    std::atomic<std::size_t> next{0}, done{0};
    std::mutex progress_mutex;
    auto worker = [&] {
      for (std::size_t i = next++; i < inputs.size(); i = next++) {
        results[i] = run_one(inputs[i], outputs[i], options, streams, diag, rejects.get(), true,
                             !a.manifest.empty());
        const std::size_t d = ++done;
        if (progress) {
          std::lock_guard lock(progress_mutex);
          streams.err << fmt::format("\rbaroz: {}/{} files", d, inputs.size())
                      << (d == inputs.size() ? "\n" : "") << std::flush;
        }
      }
    };
    std::vector<std::thread> pool;
    for (unsigned t = 1; t < jobs; ++t) pool.emplace_back(worker);
    worker();
    for (auto& t : pool) t.join();
  }

  int status = 0;
  for (const auto& r : results) status = std::max(status, r.status);
  if (rejects) rejects->commit();

  if (!a.manifest.empty()) {
    std::vector<HeightReport> reports;
    for (const auto& r : results)
      if (r.ran) reports.push_back(r.report);
    ManifestRun run;
    run.arguments = arguments;
    run.outputs = outputs;
    run.rejects_path = a.rejects;
    run.time_zone = a.pipeline.reader.tz.empty() ? "UTC" : a.pipeline.reader.tz;
    const std::string doc = height_manifest(run, options, reports);
    AtomicFile file(a.manifest);
    file.write(doc.data(), doc.size());
    file.commit();
  }
  return status;
}

}  // namespace

void add_height_command(CLI::App& app, const Streams& streams, int& status,
                        const std::vector<std::string>& arguments) {
  auto args = std::make_shared<HeightArgs>();
  CLI::App* cmd = app.add_subcommand(
      "height", "Convert logs to a height series with an error band (the main job)");
  cmd->footer(std::string("\n") + std::string(kCaution));
  HeightArgs& a = *args;

  cmd->add_option("-o,--output", a.output,
                  "Output file (written atomically), or a directory for batch mode; default "
                  "standard output")
      ->type_name("FILE|DIR")->group("Output");
  cmd->add_option("-f,--format", a.format, "Output format: csv (default) or ndjson")
      ->check(CLI::IsMember({"csv", "ndjson"}))->type_name("FORMAT")->group("Output");
  cmd->add_option("--height-unit", a.height_unit, "Unit of the height columns: m or ft")
      ->check(CLI::IsMember({"m", "ft"}))->type_name("m|ft")->group("Output");
  cmd->add_option("--precision", a.precision,
                  "Decimals: N for heights, or height=N, pressure=N, temperature=N, elapsed=N "
                  "(defaults 3, 4, 3, 3)")
      ->allow_extra_args(false)->type_name("SPEC")->group("Output");
  cmd->add_flag("--geopotential", a.geopotential, "Also write geopotential_height_m")
      ->group("Output");
  cmd->add_flag("--vspeed", a.vspeed,
                "Also write vspeed_mps, the vertical speed from a local fit of the height")
      ->group("Output");
  cmd->add_flag("--sigma-columns", a.sigma_columns,
                "Also write one column per error-budget term: its 1-sigma contribution to the "
                "height (sigma_p_m, sigma_p_abs_m, sigma_ref_m, sigma_t_m, sigma_t_random_m, "
                "drift_sigma_m, sigma_t_model_m)")
      ->group("Output");
  cmd->add_flag("--despike", a.despike,
                "Flag pressure spikes (rows kept, flag 'spike') with a Hampel filter")
      ->group("Output");
  cmd->add_flag("--no-flags", a.no_flags, "Leave out the flags column")->group("Output");
  cmd->add_flag("--line-buffered", a.line_buffered,
                "Write each row as soon as it is computed (live telemetry)")
      ->group("Output");
  cmd->add_option("--manifest", a.manifest,
                  "Write a JSON run manifest (inputs with SHA-256, options, constants, model, "
                  "reference)")
      ->type_name("FILE")->group("Output");
  cmd->add_option("--summary", a.summary,
                  "Also write the flight summary (JSON, as baroz summary) to FILE")
      ->type_name("FILE")->group("Output");
  cmd->add_option("--plot", a.plot, "Also write the SVG plot (as baroz plot) to FILE")
      ->type_name("FILE")->group("Output");
  cmd->add_option("--rejects", a.rejects,
                  "Write every rejected row as source,line,reason,raw")
      ->type_name("FILE")->group("Output");

  add_pipeline_options(*cmd, a.pipeline);
  cmd->add_option("-j,--jobs", a.jobs, "Files processed in parallel in batch mode (default: cores)")
      ->type_name("N")->check(CLI::PositiveNumber)->group("Batch");
  cmd->add_flag("-q,--quiet", a.quiet, "No notes on stderr (problems and counts remain)")
      ->group("Messages");

  CLI::Option* rerun_option =
      cmd->add_option("--rerun", a.rerun,
                      "Repeat the run recorded in MANIFEST (written by --manifest) with only "
                      "the options given here changed; every input read again is first "
                      "checked against its recorded SHA-256 (exit 2 when missing or changed); "
                      "the recorded outputs are not written again: the series goes to "
                      "standard output unless -o is given")
          ->type_name("MANIFEST")->group("Re-run");

  cmd->callback([args, cmd, rerun_option, &streams, &status, &arguments] {
    if (rerun_option->count() > 0)
      status = rerun_height(*cmd, args->rerun, arguments, streams);
    else
      status = run_height(*args, streams, arguments);
  });
}

}  // namespace baroz::cli
