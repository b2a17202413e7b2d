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
#include "baroz/pipeline/height_job.hpp"
#include "cli_common.hpp"

namespace baroz::cli {
namespace {

struct HeightArgs {
  ReaderArgs reader;
  std::string output;
  std::string format;
  std::string model = "auto";
  std::string temperature_model = "reference";
  std::string ref_pressure, qnh, elevation, ref_window, ref_temperature;
  std::string sigma_p, sigma_ref, sigma_t, sigma_t_model, confidence;
  std::string height_unit = "m";
  std::vector<std::string> precision;
  std::string manifest, rejects, p_range;
  bool strict = false;
  bool no_flags = false;
  bool geopotential = false;
  bool line_buffered = false;
  bool quiet = false;
  int jobs = 0;
};

int parse_decimals(const std::string& text, const std::string& spec) {
  int v = -1;
  if (text.size() == 1 && text[0] >= '0' && text[0] <= '9') v = text[0] - '0';
  if (v < 0)
    throw usage_error(fmt::format("--precision: \"{}\" is not a number of decimals 0 to 9", spec));
  return v;
}

HeightOptions resolve_options(const HeightArgs& a) {
  HeightOptions o;
  o.reader = reader_options(a.reader);
  o.columns = column_options(a.reader);
  o.decimal_comma = a.reader.decimal_comma;

  auto model = parse_model_name(a.model);
  if (!model)
    throw usage_error(fmt::format(
        "--model: \"{}\" is not a model (auto, isothermal, standard, profile)", a.model));
  o.model = *model;
  if (o.model == ModelKind::kProfile)
    throw usage_error("--model profile: the profile model is not available in this version");
  if (a.temperature_model == "mean") o.temperature_model = IsothermalTemperature::kMean;
  else o.temperature_model = IsothermalTemperature::kReference;

  ReferenceOptions& r = o.reference;
  if (!a.ref_pressure.empty()) {
    r.kind = ReferenceKind::kPressure;
    r.pressure_pa = parse_pressure_option(a.ref_pressure, "--ref-pressure");
  } else if (!a.qnh.empty()) {
    r.kind = ReferenceKind::kQnh;
    r.pressure_pa = parse_pressure_option(a.qnh, "--qnh");
  } else {
    r.kind = ReferenceKind::kWindow;
  }
  if (!std::isnan(r.pressure_pa) && !(r.pressure_pa > 0.0))
    throw usage_error("the reference pressure must be positive");
  if (!a.ref_window.empty() && a.ref_window != "auto") {
    r.window_s = parse_duration_option(a.ref_window, "--ref-window");
    if (!(*r.window_s > 0.0)) throw usage_error("--ref-window: the duration must be positive");
  }
  if (!a.ref_temperature.empty()) {
    r.temperature_k = parse_temperature_option(a.ref_temperature, "--ref-temperature");
    if (!(*r.temperature_k > 0.0))
      throw usage_error("--ref-temperature: the temperature must be above 0 K");
  }
  if (!a.elevation.empty()) r.elevation_m = parse_length_option(a.elevation, "--elevation");
  if (r.kind == ReferenceKind::kQnh && o.model == ModelKind::kIsothermal)
    throw usage_error(
        "--qnh uses the standard atmosphere's altimeter relation; it cannot be combined with "
        "--model isothermal");
  if (o.temperature_model == IsothermalTemperature::kMean && o.model != ModelKind::kIsothermal)
    throw usage_error("--temperature-model applies to --model isothermal only");

  ErrorBudgetOptions& b = o.budget;
  auto sigma = [](const std::string& text, const char* option, double (*parse)(std::string_view, std::string_view),
                  double& value) {
    if (text.empty()) return;
    value = parse(text, option);
    if (!(value >= 0.0)) throw usage_error(fmt::format("{}: a sigma cannot be negative", option));
  };
  sigma(a.sigma_p, "--sigma-p", parse_pressure_option, b.sigma_p_pa);
  sigma(a.sigma_ref, "--sigma-ref", parse_pressure_option, b.sigma_ref_pa);
  sigma(a.sigma_t, "--sigma-t", parse_temperature_difference_option, b.sigma_t_k);
  sigma(a.sigma_t_model, "--sigma-t-model", parse_temperature_difference_option,
        b.sigma_t_model_k);
  if (!a.confidence.empty()) {
    b.confidence = parse_number_option(a.confidence, "--confidence");
    if (!(b.confidence > 0.0 && b.confidence < 1.0))
      throw usage_error(fmt::format("--confidence: {} is not between 0 and 1", a.confidence));
  }

  if (!a.p_range.empty()) {
    auto colon = a.p_range.find(':');
    if (colon == std::string::npos)
      throw usage_error(fmt::format("--p-range: \"{}\" is not LOW:HIGH", a.p_range));
    const double lo = parse_pressure_option(a.p_range.substr(0, colon), "--p-range");
    const double hi = parse_pressure_option(a.p_range.substr(colon + 1), "--p-range");
    if (!(lo >= 0.0 && hi > lo))
      throw usage_error(fmt::format("--p-range: \"{}\" needs 0 <= LOW < HIGH", a.p_range));
    o.validation.p_min_pa = lo;
    o.validation.p_max_pa = hi;
    o.validation.p_min_inclusive = lo > 0.0;
  }

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
  s.line_buffered = a.line_buffered;
  if (a.format == "ndjson") s.format = OutputFormat::kNdjson;
  else if (a.format == "csv") s.format = OutputFormat::kCsv;
  else if (a.format.empty()) {
    const std::string ext = std::filesystem::path(a.output).extension().string();
    s.format = (ext == ".ndjson" || ext == ".jsonl" || ext == ".json") ? OutputFormat::kNdjson
                                                                         : OutputFormat::kCsv;
  }
  o.strict = a.strict;
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
                    RejectsWriter* rejects, bool batch, bool hash_inputs) {
  InputResult result;
  try {
    std::unique_ptr<ByteSource> source = open_input(input, streams);
    if (hash_inputs) source->enable_hashing();
    std::unique_ptr<ByteSink> sink = output == "-"
                                         ? make_ostream_sink(streams.out, "standard output")
                                         : make_atomic_file_sink(output);
    result.report = run_height_job(*source, *sink, options, diag, rejects);
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
                   a.reader.error_format == "json" ? ErrorFormat::kJson : ErrorFormat::kText,
                   a.quiet);

  std::vector<std::string> inputs = a.reader.inputs;
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
  if (!batch) {
    results[0] = run_one(inputs[0], outputs[0], options, streams, diag, rejects.get(), false,
                         !a.manifest.empty());
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
    run.time_zone = a.reader.tz.empty() ? "UTC" : a.reader.tz;
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
  add_reader_options(*cmd, args->reader);
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
      ->type_name("SPEC")->group("Output");
  cmd->add_flag("--geopotential", a.geopotential, "Also write geopotential_height_m")
      ->group("Output");
  cmd->add_flag("--no-flags", a.no_flags, "Leave out the flags column")->group("Output");
  cmd->add_flag("--line-buffered", a.line_buffered,
                "Write each row as soon as it is computed (live telemetry)")
      ->group("Output");
  cmd->add_option("--manifest", a.manifest,
                  "Write a JSON run manifest (inputs with SHA-256, options, constants, model, "
                  "reference)")
      ->type_name("FILE")->group("Output");
  cmd->add_option("--rejects", a.rejects,
                  "Write every rejected row as source,line,reason,raw")
      ->type_name("FILE")->group("Output");

  cmd->add_option("-m,--model", a.model,
                  "Height model: auto (default), isothermal, standard, profile")
      ->type_name("MODEL")->group("Model");
  cmd->add_option("--temperature-model", a.temperature_model,
                  "Isothermal model temperature: reference (ground, default) or mean (of "
                  "ground and sample)")
      ->check(CLI::IsMember({"reference", "mean"}))->type_name("reference|mean")->group("Model");

  auto* rp = cmd->add_option("--ref-pressure", a.ref_pressure,
                             "Known ground pressure (QFE), e.g. 1013.25 or 101325Pa")
                 ->type_name("P")->group("Reference");
  auto* qnh = cmd->add_option("--qnh", a.qnh,
                              "Altimeter setting: altitude_m by the standard atmosphere with "
                              "sea-level pressure QNH")
                  ->type_name("P")->group("Reference");
  cmd->add_option("--ref-window", a.ref_window,
                             "Reference from the mean of the first DUR (e.g. 90s, 2min), or "
                             "auto: the detected stationary pre-launch segment (default)")
                 ->type_name("DUR|auto")->group("Reference");
  rp->excludes(qnh);
  // --ref-window may go with --qnh (the height datum) or --ref-pressure (T_ref).
  cmd->add_option("--elevation", a.elevation,
                  "Site elevation above MSL (e.g. 412m, 1350ft): adds altitude_m")
      ->type_name("H")->group("Reference");
  cmd->add_option("--ref-temperature", a.ref_temperature,
                  "Reference temperature for isothermal (bare K, or 15C); default: mean of "
                  "the reference window, else 288.15 K")
      ->type_name("T")->group("Reference");

  cmd->add_option("--sigma-p", a.sigma_p, "1-sigma noise of each pressure sample (default 0.05 hPa)")
      ->type_name("P")->group("Uncertainty");
  cmd->add_option("--sigma-ref", a.sigma_ref,
                  "1-sigma error of the reference pressure (default 0.1 hPa)")
      ->type_name("P")->group("Uncertainty");
  cmd->add_option("--sigma-t", a.sigma_t,
                  "1-sigma error of the temperature the model uses (default 0.5 K)")
      ->type_name("K")->group("Uncertainty");
  cmd->add_option("--sigma-t-model", a.sigma_t_model,
                  "standard model: 1-sigma deviation of the real column temperature from the "
                  "standard one (default 5 K)")
      ->type_name("K")->group("Uncertainty");
  cmd->add_option("--confidence", a.confidence,
                  "Two-sided confidence of the band (default 0.95)")
      ->type_name("P")->group("Uncertainty");

  cmd->add_option("--p-range", a.p_range,
                  "Accepted pressure range LOW:HIGH (default 0:1500 hPa, physical "
                  "plausibility)")
      ->type_name("LOW:HIGH")->group("Validation");
  cmd->add_flag("--strict", a.strict, "Stop at the first rejected row (exit status 3)")
      ->group("Validation");
  cmd->add_option("-j,--jobs", a.jobs, "Files processed in parallel in batch mode (default: cores)")
      ->type_name("N")->check(CLI::PositiveNumber)->group("Batch");
  cmd->add_flag("-q,--quiet", a.quiet, "No notes on stderr (problems and counts remain)")
      ->group("Messages");

  cmd->callback([args, &streams, &status, &arguments] {
    status = run_height(*args, streams, arguments);
  });
}

}  // namespace baroz::cli
