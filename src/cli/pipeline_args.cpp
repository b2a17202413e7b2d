#include "pipeline_args.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"
#include "baroz/reference/checkpoint_fit.hpp"

namespace baroz::cli {

namespace {

/// The base-station, drift, checkpoint and GNSS options, and which of them
/// go together.
void resolve_reference_manager_options(const PipelineArgs& a, HeightOptions& o) {
  ReferenceOptions& r = o.reference;
  const bool base = r.kind == ReferenceKind::kBase;
  auto needs_base = [&](bool given, const char* option) {
    if (given && !base) throw usage_error(fmt::format("{} goes with --ref-base FILE", option));
  };
  needs_base(!a.base_offset.empty(), "--base-offset");
  needs_base(!a.base_elevation.empty(), "--base-elevation");
  needs_base(a.no_tie, "--no-tie");
  needs_base(!a.outside_base.empty(), "--outside-base");
  if (base) {
    if (a.base_offset == "auto") {
      r.base.offset_auto = true;
    } else if (!a.base_offset.empty()) {
      r.base.offset_s = parse_duration_option(a.base_offset, "--base-offset");
    }
    if (!a.base_elevation.empty())
      r.base.elevation_m = parse_length_option(a.base_elevation, "--base-elevation");
    r.base.tie = !a.no_tie;
    if (a.outside_base == "reject") r.base.outside = OutsideBasePolicy::kReject;
  }

  if (a.drift == "linear") {
    if (r.kind != ReferenceKind::kWindow)
      throw usage_error(fmt::format(
          "--drift linear corrects the reference window's pressure; it cannot be combined with "
          "{}",
          base ? "--ref-base (the base station follows the drift itself)"
               : r.kind == ReferenceKind::kQnh ? "--qnh" : "--ref-pressure"));
    r.drift = DriftCorrection::kLinear;
  } else if (!a.drift.empty() && a.drift != "none") {
    throw usage_error(fmt::format("--drift: \"{}\" is not linear or none", a.drift));
  }
  if (!a.landing_height.empty()) {
    if (r.drift != DriftCorrection::kLinear)
      throw usage_error("--landing-height goes with --drift linear");
    r.landing_height_m = parse_length_option(a.landing_height, "--landing-height");
  }

  if (!a.checkpoints.empty() && r.kind == ReferenceKind::kQnh)
    throw usage_error("--checkpoint cannot be combined with --qnh (the altimeter relation "
                      "fixes the reference)");
  for (const auto& c : a.checkpoints)
    r.checkpoints.push_back(parse_checkpoint(c, o.columns.tz_offset_s));

  if (a.ref_gnss) {
    if (r.kind == ReferenceKind::kQnh || r.elevation_m)
      throw usage_error(fmt::format(
          "--ref-gnss fits the launch point's altitude from GNSS; it cannot be combined with {}",
          r.kind == ReferenceKind::kQnh ? "--qnh" : "--elevation (which gives it)"));
    r.gnss_datum = true;
  }
  if (!a.gnss_below.empty()) {
    if (!a.ref_gnss) throw usage_error("--gnss-below goes with --ref-gnss");
    r.gnss_below_m = parse_length_option(a.gnss_below, "--gnss-below");
    if (!(r.gnss_below_m > 0.0)) throw usage_error("--gnss-below: the height must be positive");
  }
}

}  // namespace

HeightOptions resolve_pipeline_options(const PipelineArgs& a) {
  HeightOptions o;
  o.reader = reader_options(a.reader);
  o.columns = column_options(a.reader);
  o.decimal_comma = a.reader.decimal_comma;

  auto model = parse_model_name(a.model);
  if (!model)
    throw usage_error(fmt::format(
        "--model: \"{}\" is not a model (auto, isothermal, standard, profile)", a.model));
  o.model = *model;
  if (a.temperature_model == "mean") o.temperature_model = IsothermalTemperature::kMean;
  else o.temperature_model = IsothermalTemperature::kReference;

  if (!a.profile_file.empty()) {
    if (o.model != ModelKind::kProfile && o.model != ModelKind::kAuto)
      throw usage_error(fmt::format("--profile applies to --model profile, not --model {}",
                                    model_name(o.model)));
    o.profile.file = a.profile_file;
  }
  if (auto leg = parse_profile_leg(a.profile_leg)) o.profile.builder.leg = *leg;
  else
    throw usage_error(fmt::format("--profile-leg: \"{}\" is not ascent, descent or all",
                                  a.profile_leg));
  if (!a.profile_layer.empty()) {
    o.profile.builder.layer_m = parse_length_option(a.profile_layer, "--profile-layer");
    if (!(o.profile.builder.layer_m >= ProfileBuilder::kMinLayerM &&
          o.profile.builder.layer_m <= ProfileBuilder::kMaxLayerM))
      throw usage_error("--profile-layer: the layer thickness must be 1 m to 1 km");
  }
  o.profile.saturation =
      a.saturation == "ice" ? SaturationPhase::kIceBelowZero : SaturationPhase::kWater;
  if (!a.latitude.empty()) {
    const double lat = parse_number_option(a.latitude, "--latitude");
    if (!(lat >= -90.0 && lat <= 90.0))
      throw usage_error(fmt::format("--latitude: {} is outside -90 to 90 degrees", a.latitude));
    o.latitude_deg = lat;
  }

  ReferenceOptions& r = o.reference;
  if (!a.ref_base.empty()) {
    if (!a.ref_pressure.empty() || !a.qnh.empty())
      throw usage_error(fmt::format("--ref-base cannot be combined with {}",
                                    a.qnh.empty() ? "--ref-pressure" : "--qnh"));
    r.kind = ReferenceKind::kBase;
    r.base.file = a.ref_base;
  } else if (!a.ref_pressure.empty()) {
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
  resolve_reference_manager_options(a, o);
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
  sigma(a.sigma_p_abs, "--sigma-p-abs", parse_pressure_option, b.sigma_p_abs_pa);
  if (!a.sigma_ref.empty()) {
    double v = 0.0;
    sigma(a.sigma_ref, "--sigma-ref", parse_pressure_option, v);
    b.sigma_ref_pa = v;
  }
  sigma(a.sigma_t, "--sigma-t", parse_temperature_difference_option, b.sigma_t_k);
  sigma(a.sigma_t_random, "--sigma-t-random", parse_temperature_difference_option,
        b.sigma_t_random_k);
  sigma(a.sigma_t_model, "--sigma-t-model", parse_temperature_difference_option,
        b.sigma_t_model_k);
  if (!a.monte_carlo.empty()) {
    const double n = parse_number_option(a.monte_carlo, "--monte-carlo");
    if (!(n >= 10.0 && n <= 1e6 && n == std::floor(n)))
      throw usage_error(fmt::format("--monte-carlo: \"{}\" is not a whole number of runs from 10 "
                                    "to 1000000",
                                    a.monte_carlo));
    b.monte_carlo_runs = static_cast<std::size_t>(n);
  }
  if (!a.seed.empty()) {
    if (a.monte_carlo.empty()) throw usage_error("--seed goes with --monte-carlo N");
    const double v = parse_number_option(a.seed, "--seed");
    if (!(v >= 0.0 && v < 9.0e15 && v == std::floor(v)))
      throw usage_error(fmt::format("--seed: \"{}\" is not a whole number from 0", a.seed));
    b.seed = static_cast<std::uint64_t>(v);
  }
  if (!a.drift_sigma.empty()) {
    // Bare hPa per hour (the pinned default unit), returned in Pa/s.
    b.drift_sigma_pa_per_s = parse_drift_option(a.drift_sigma, "--drift-sigma");
    if (!(b.drift_sigma_pa_per_s >= 0.0))
      throw usage_error("--drift-sigma: a sigma cannot be negative");
  }
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

  if (!a.spike_window.empty()) {
    o.smoothing.spike_window_s = parse_duration_option(a.spike_window, "--spike-window");
    if (!(o.smoothing.spike_window_s > 0.0))
      throw usage_error("--spike-window: the duration must be positive");
    o.smoothing.spike_min_rows = 0;  // the window as given, not widened to a row count
  }
  if (!a.vspeed_window.empty()) {
    o.smoothing.vspeed_window_s = parse_duration_option(a.vspeed_window, "--vspeed-window");
    if (!(o.smoothing.vspeed_window_s > 0.0))
      throw usage_error("--vspeed-window: the duration must be positive");
    o.smoothing.vspeed_min_rows = 0;
  }
  o.strict = a.strict;
  return o;
}

void add_pipeline_options(CLI::App& app, PipelineArgs& a) {
  add_reader_options(app, a.reader);
  app.add_option("-m,--model", a.model,
                  "Height model: isothermal, standard, profile, or auto (default): profile when "
                 "the log has an air-temperature column, else standard")
      ->type_name("MODEL")->group("Model");
  app.add_option("--temperature-model", a.temperature_model,
                  "Isothermal model temperature: reference (ground, default) or mean (of "
                  "ground and sample)")
      ->check(CLI::IsMember({"reference", "mean"}))->type_name("reference|mean")->group("Model");
  app.add_option("--profile", a.profile_file,
                  "profile model: temperature profile from a table of pressure and "
                  "temperature (optional humidity) instead of the log's own ascent")
      ->type_name("FILE")->group("Model");
  app.add_option("--profile-leg", a.profile_leg,
                  "profile model: build the profile from the ascent (default), the descent "
                  "or all samples")
      ->check(CLI::IsMember({"ascent", "descent", "all"}))->type_name("LEG")->group("Model");
  app.add_option("--profile-layer", a.profile_layer,
                  "profile model: layer thickness of the per-layer median (default 50 m)")
      ->type_name("H")->group("Model");
  app.add_option("--saturation", a.saturation,
                  "Saturation vapour pressure for the virtual temperature below 0 C: water "
                  "(default) or ice (WMO-No. 8, Annex 4.B)")
      ->check(CLI::IsMember({"water", "ice"}))->type_name("water|ice")->group("Model");
  app.add_option("--latitude", a.latitude,
                  "Latitude (deg) for WGS 84 normal gravity and the latitude-dependent "
                  "geopotential-to-geometric conversion (default: standard gravity, or the "
                  "log's latitude column)")
      ->type_name("DEG")->group("Model");

  auto* rp = app.add_option("--ref-pressure", a.ref_pressure,
                             "Known ground pressure (QFE), e.g. 1013.25 or 101325Pa")
                 ->type_name("P")->group("Reference");
  auto* qnh = app.add_option("--qnh", a.qnh,
                              "Altimeter setting: altitude_m by the standard atmosphere with "
                              "sea-level pressure QNH")
                  ->type_name("P")->group("Reference");
  app.add_option("--ref-window", a.ref_window,
                             "Reference from the mean of the first DUR (e.g. 90s, 2min), or "
                             "auto: the detected stationary pre-launch segment (default)")
                 ->type_name("DUR|auto")->group("Reference");
  rp->excludes(qnh);
  // --ref-window may go with --qnh (the height datum) or --ref-pressure (T_ref).
  app.add_option("--elevation", a.elevation,
                  "Site elevation above MSL (e.g. 412m, 1350ft): adds altitude_m")
      ->type_name("H")->group("Reference");
  app.add_option("--ref-temperature", a.ref_temperature,
                  "Reference temperature for isothermal and for moving a base station's pressure (bare K, or 15C); default: mean of "
                  "the reference window, else 288.15 K")
      ->type_name("T")->group("Reference");

  auto* base = app.add_option("--ref-base", a.ref_base,
                               "Reference from a ground base-station log (time, pressure, "
                               "optional temperature; any columns and units), interpolated at "
                               "each sample's time")
                   ->type_name("FILE")->group("Reference");
  base->excludes(rp)->excludes(qnh);
  app.add_option("--base-offset", a.base_offset,
                 "Seconds added to the base log's times to put them on the flight log's clock "
                 "(default 0), or auto: estimated where both sensors rest together")
      ->type_name("SECONDS|auto")->group("Reference");
  app.add_option("--base-elevation", a.base_elevation,
                 "Elevation of the base station, in the datum of --elevation (without it: "
                 "height above the launch point); its pressure is moved to the launch level")
      ->type_name("H")->group("Reference");
  app.add_flag("--no-tie", a.no_tie,
               "Do not tie the flight sensor to the base over the pre-launch window (keep the "
               "base's absolute pressure)")
      ->group("Reference");
  app.add_option("--outside-base", a.outside_base,
                 "Rows outside the base log's time span (flag no_base): hold the nearest base "
                 "value with a widened band (default) or reject them")
      ->check(CLI::IsMember({"hold", "reject"}))->type_name("hold|reject")->group("Reference");
  app.add_option("--drift", a.drift,
                 "linear: correct the ground-pressure drift between the pre-launch and "
                 "post-landing resting segments (default none)")
      ->check(CLI::IsMember({"linear", "none"}))->type_name("linear|none")->group("Reference");
  app.add_option("--landing-height", a.landing_height,
                 "--drift linear: height of the landing point above the launch point (default "
                 "0)")
      ->type_name("H")->group("Reference");
  app.add_option("--checkpoint", a.checkpoints,
                 "Known height above the launch point at a time (RFC 3339, or elapsed seconds "
                 "as in elapsed_s), repeatable: fits a reference offset (and drift, with two or "
                 "more)")
      ->allow_extra_args(false)->type_name("TIME=HEIGHT")->group("Reference");
  app.add_flag("--ref-gnss", a.ref_gnss,
               "Fit the launch point's altitude above MSL to the log's GNSS altitude (median "
               "over the low part); altitude_m uses it, heights stay barometric")
      ->group("Reference");
  app.add_option("--gnss-below", a.gnss_below,
                 "--ref-gnss: use the samples up to this height (default 1000 m)")
      ->type_name("H")->group("Reference");

  app.add_option("--sigma-p", a.sigma_p,
                 "1-sigma random noise of each pressure sample (default 0.05 hPa)")
      ->type_name("P")->group("Uncertainty");
  app.add_option("--sigma-p-abs", a.sigma_p_abs,
                 "1-sigma absolute offset of the sensor, common to the reference when it comes "
                 "from the same sensor (default 0.5 hPa)")
      ->type_name("P")->group("Uncertainty");
  app.add_option("--sigma-ref", a.sigma_ref,
                 "1-sigma error of the reference pressure itself (default 0.1 hPa for "
                 "--ref-pressure and --qnh, the standard error of the window mean otherwise)")
      ->type_name("P")->group("Uncertainty");
  app.add_option("--sigma-t", a.sigma_t,
                 "1-sigma systematic temperature bias (default 0.5 K): of the isothermal "
                 "model's temperature, or of the whole measured profile")
      ->type_name("K")->group("Uncertainty");
  app.add_option("--sigma-t-random", a.sigma_t_random,
                 "1-sigma random error of each temperature sample (default 0.2 K); averages "
                 "within the reference window and the profile's layers")
      ->type_name("K")->group("Uncertainty");
  app.add_option("--sigma-t-model", a.sigma_t_model,
                 "standard model: 1-sigma deviation of the real column temperature from the "
                 "standard one (default 5 K)")
      ->type_name("K")->group("Uncertainty");
  app.add_option("--drift-sigma", a.drift_sigma,
                 "1-sigma ground-pressure drift per hour since the reference was taken (default "
                 "0.5 hPa/h; reduced by --drift linear, the base's own noise with --ref-base)")
      ->type_name("P/h")->group("Uncertainty");
  app.add_option("--confidence", a.confidence,
                  "Two-sided confidence of the band (default 0.95)")
      ->type_name("P")->group("Uncertainty");
  app.add_option("--monte-carlo", a.monte_carlo,
                 "Band by sampling every term N times per row instead of linear propagation "
                 "(a cross-check, and for very low pressures)")
      ->type_name("N")->group("Uncertainty");
  app.add_option("--seed", a.seed, "--monte-carlo: seed of the random numbers (default 1)")
      ->type_name("S")->group("Uncertainty");

  app.add_option("--p-range", a.p_range,
                  "Accepted pressure range LOW:HIGH (default 0:1500 hPa, physical "
                  "plausibility)")
      ->type_name("LOW:HIGH")->group("Validation");
  app.add_option("--spike-window", a.spike_window,
                 "Analysis: time window of the spike filter (default 2 s, widened to 40 "
                 "sample intervals on slow logs; a value given is used as is)")
      ->type_name("DUR")->group("Analysis");
  app.add_option("--vspeed-window", a.vspeed_window,
                 "Analysis: time window of the vertical-speed fit (default 2 s, widened to 20 "
                 "sample intervals on slow logs; a value given is used as is)")
      ->type_name("DUR")->group("Analysis");
  app.add_flag("--strict", a.strict, "Stop at the first rejected row (exit status 3)")
      ->group("Validation");
}

}  // namespace baroz::cli
