#include "baroz/output/manifest.hpp"

#include <cmath>

#include "baroz/core/constants.hpp"
#include "baroz/core/time.hpp"
#include "baroz/output/json_writer.hpp"

namespace baroz {
namespace {

std::string_view format_name(LogFormat f) {
  switch (f) {
    case LogFormat::kCsv: return "csv";
    case LogFormat::kNdjson: return "ndjson";
    case LogFormat::kAuto: break;
  }
  return "auto";
}

std::string delimiter_name(char d) {
  if (d == '\t') return "tab";
  return std::string(1, d);
}

void write_time(JsonWriter& j, bool absolute, TimeNs t) {
  if (absolute) j.value(format_rfc3339_utc(t));
  else j.value(static_cast<double>(t) * 1e-9);
}

void write_reference(JsonWriter& j, const HeightReport& r) {
  if (!r.reference) {
    j.null();
    return;
  }
  const Reference& ref = *r.reference;
  j.begin_object();
  j.key("kind"); j.value(reference_kind_name(ref.kind));
  j.key("pressure_hpa"); j.value(ref.point.pressure_pa / 100.0);
  j.key("temperature_k"); j.value(ref.point.temperature_k);
  j.key("temperature_source"); j.value(ref.temperature_source);
  j.key("qnh_hpa");
  if (std::isnan(ref.qnh_pa)) j.null(); else j.value(ref.qnh_pa / 100.0);
  j.key("datum_geopotential_m"); j.value(ref.point.datum_geopotential_m);
  j.key("window");
  if (!ref.window) {
    j.null();
  } else {
    const ReferenceWindow& w = *ref.window;
    j.begin_object();
    j.key("auto_detected"); j.value(w.auto_detected);
    j.key("start"); write_time(j, r.absolute_time, w.start_ns);
    j.key("end"); write_time(j, r.absolute_time, w.end_ns);
    j.key("start_elapsed_s"); j.value(static_cast<double>(w.start_ns - r.first_time_ns) * 1e-9);
    j.key("end_elapsed_s"); j.value(static_cast<double>(w.end_ns - r.first_time_ns) * 1e-9);
    j.key("samples"); j.value(static_cast<std::uint64_t>(w.samples));
    j.key("samples_averaged"); j.value(static_cast<std::uint64_t>(w.used));
    j.key("pressure_hpa"); j.value(w.pressure_pa / 100.0);
    j.key("pressure_sd_hpa"); j.value(w.pressure_sd_pa / 100.0);
    j.key("temperature_k"); j.value(w.temperature_k);
    j.key("launch_found"); j.value(w.launch_found);
    j.key("launch");
    if (w.launch_found) write_time(j, r.absolute_time, w.launch_ns); else j.null();
    j.key("launch_elapsed_s");
    if (w.launch_found) j.value(static_cast<double>(w.launch_ns - r.first_time_ns) * 1e-9);
    else j.null();
    j.key("noise_sigma_hpa"); j.value(w.noise_sigma_pa / 100.0);
    j.key("departure_threshold_hpa"); j.value(w.threshold_pa / 100.0);
    j.end_object();
  }
  auto elapsed = [&](TimeNs t) { return static_cast<double>(t - r.first_time_ns) * 1e-9; };
  j.key("base");
  if (!ref.base) {
    j.null();
  } else {
    const BaseReport& b = *ref.base;
    j.begin_object();
    j.key("path"); j.value(b.path);
    j.key("sha256"); j.value(b.sha256);
    j.key("rows_read"); j.value(b.rows_read);
    j.key("rows_used"); j.value(b.rows_used);
    j.key("rows_rejected"); j.value(b.rows_rejected);
    j.key("first_time"); write_time(j, b.absolute_time, b.first_ns);
    j.key("last_time"); write_time(j, b.absolute_time, b.last_ns);
    j.key("interval_s"); j.value(b.interval_s);
    j.key("interpolation"); j.value("linear");
    j.key("clock_offset_s"); j.value(b.offset_s);
    j.key("clock_offset_from"); j.value(b.offset_source);
    j.key("clock_offset_estimate");
    if (!b.offset_estimate) {
      j.null();
    } else {
      const ClockOffsetEstimate& e = *b.offset_estimate;
      j.begin_object();
      j.key("offset_s"); j.value(e.offset_s);
      j.key("sigma_s"); j.value(e.sigma_s);
      j.key("samples"); j.value(static_cast<std::uint64_t>(e.samples));
      j.key("segments"); j.value(static_cast<std::uint64_t>(e.segments));
      j.key("residual_rms_hpa"); j.value(e.rms_pa / 100.0);
      j.key("searched_s");
      j.begin_array();
      j.value(e.range_low_s);
      j.value(e.range_high_s);
      j.end_array();
      j.end_object();
    }
    j.key("base_elevation_m"); j.value(b.elevation_m);
    j.key("launch_elevation_m"); j.value(b.launch_elevation_m);
    j.key("level_factor"); j.value(b.scale);
    j.key("level_temperature_k"); j.value(b.move_temperature_k);
    j.key("tie"); j.value(b.tie);
    j.key("tie_offset_hpa");
    if (b.tie) j.value(b.tie_pa / 100.0); else j.null();
    j.key("tie_samples"); j.value(static_cast<std::uint64_t>(b.tie_samples));
    j.key("outside_policy"); j.value(outside_base_policy_name(b.outside));
    j.key("rows_outside"); j.value(r.no_base_rows);
    j.end_object();
  }
  j.key("drift");
  if (!ref.drift) {
    j.null();
  } else {
    const DriftReport& d = *ref.drift;
    j.begin_object();
    j.key("kind"); j.value("linear");
    j.key("pre_launch_time"); write_time(j, r.absolute_time, d.pre_time_ns);
    j.key("pre_launch_elapsed_s"); j.value(elapsed(d.pre_time_ns));
    j.key("pre_launch_pressure_hpa"); j.value(d.pre_pa / 100.0);
    j.key("landing_segment_start_elapsed_s"); j.value(elapsed(d.landing.start_ns));
    j.key("landing_segment_end_elapsed_s"); j.value(elapsed(d.landing.end_ns));
    j.key("landing_segment_samples"); j.value(static_cast<std::uint64_t>(d.landing.samples));
    j.key("post_landing_time"); write_time(j, r.absolute_time, d.post_time_ns);
    j.key("post_landing_elapsed_s"); j.value(elapsed(d.post_time_ns));
    j.key("post_landing_pressure_hpa"); j.value(d.post_pa / 100.0);
    j.key("landing_height_m"); j.value(d.landing_height_m);
    j.key("landing_height_from"); j.value(d.landing_height_given ? "option" : "assumed 0");
    j.key("post_landing_at_launch_level_hpa"); j.value(d.post_launch_pa / 100.0);
    j.key("drift_hpa_per_h"); j.value(d.rate_pa_per_s * 36.0);
    j.end_object();
  }
  j.key("checkpoints");
  if (!ref.checkpoint_fit) {
    j.null();
  } else {
    const CheckpointFit& f = *ref.checkpoint_fit;
    j.begin_object();
    j.key("parameters"); j.value(static_cast<std::uint64_t>(f.parameters));
    j.key("offset_hpa"); j.value(f.offset_pa / 100.0);
    j.key("drift_hpa_per_h"); j.value(f.rate_pa_per_s * 36.0);
    j.key("centre"); write_time(j, r.absolute_time, f.centre_ns);
    j.key("rms_m"); j.value(f.rms_m);
    j.key("points");
    j.begin_array();
    for (std::size_t i = 0; i < f.residual_m.size(); ++i) {
      const CheckpointObservation& o = ref.checkpoint_observations[i];
      j.begin_object();
      j.key("time"); write_time(j, r.absolute_time, o.time_ns);
      j.key("elapsed_s"); j.value(elapsed(o.time_ns));
      j.key("pressure_hpa"); j.value(o.pressure_pa / 100.0);
      j.key("known_height_m"); j.value(f.fitted_m[i] + f.residual_m[i]);
      j.key("fitted_height_m"); j.value(f.fitted_m[i]);
      j.key("residual_m"); j.value(f.residual_m[i]);
      j.end_object();
    }
    j.end_array();
    j.end_object();
  }
  j.key("gnss");
  if (!ref.gnss) {
    j.null();
  } else {
    const GnssFit& g = *ref.gnss;
    j.begin_object();
    j.key("launch_altitude_m"); j.value(g.datum_m);
    j.key("method"); j.value("median of GNSS altitude minus height");
    j.key("below_m"); j.value(g.below_m);
    j.key("pairs"); j.value(static_cast<std::uint64_t>(g.pairs));
    j.key("spread_m"); j.value(g.spread_m);
    j.key("effective_pairs"); j.value(g.effective_pairs);
    j.key("standard_error_m"); j.value(g.standard_error_m);
    j.end_object();
  }
  j.key("notes");
  j.begin_array();
  for (const auto& n : ref.notes) j.value(n);
  j.end_array();
  j.end_object();
}

void write_budget_point(JsonWriter& j, const BudgetPoint& b) {
  if (!b.set) {
    j.null();
    return;
  }
  j.begin_object();
  j.key("elapsed_s"); j.value(b.elapsed_s);
  j.key("height_m"); j.value(b.height_m);
  j.key("sigma_m"); j.value(b.sigma.total_m);
  j.key("terms");
  j.begin_object();
  const double v = b.sigma.total_m * b.sigma.total_m;
  for (std::size_t t = 0; t < kErrorTermCount; ++t) {
    j.key(error_term_name(static_cast<ErrorTerm>(t)));
    j.begin_object();
    j.key("sigma_m"); j.value(b.sigma.term_m[t]);
    j.key("variance_share"); j.value(v > 0.0 ? b.sigma.term_m[t] * b.sigma.term_m[t] / v : 0.0);
    j.end_object();
  }
  j.end_object();
  j.end_object();
}

void write_uncertainty(JsonWriter& j, const HeightReport& r) {
  j.begin_object();
  j.key("band"); j.value(r.band_method);
  j.key("monte_carlo");
  if (r.monte_carlo) {
    j.begin_object();
    j.key("rows_with_failed_runs"); j.value(r.monte_carlo->with_failed_runs);
    j.key("rows_linear_band"); j.value(r.monte_carlo->linear_band);
    j.end_object();
  } else {
    j.null();
  }
  j.key("coverage_factor"); j.value(r.coverage_factor);
  j.key("sigma_ref_hpa"); j.value(r.sigma_ref_pa / 100.0);
  j.key("sigma_ref_from"); j.value(r.sigma_ref_source);
  if (r.reference) {
    const Reference& ref = *r.reference;
    j.key("offset_common_to_reference"); j.value(ref.offset_common);
    j.key("drift_model");
    switch (ref.drift_uncertainty.kind) {
      case DriftUncertainty::Kind::kSinceReference: j.value("since the reference"); break;
      case DriftUncertainty::Kind::kBridge: j.value("bridge between the rests (drift linear)"); break;
      case DriftUncertainty::Kind::kBase: j.value("base-station noise"); break;
    }
    j.key("base_noise_hpa");
    if (ref.drift_uncertainty.kind == DriftUncertainty::Kind::kBase)
      j.value(ref.drift_uncertainty.base_noise_pa / 100.0);
    else
      j.null();
  }
  j.key("at_max_height"); write_budget_point(j, r.budget_at_max);
  j.key("at_end"); write_budget_point(j, r.budget_at_end);
  j.end_object();
}

}  // namespace

std::string height_manifest(const ManifestRun& run, const HeightOptions& o,
                            std::span<const HeightReport> reports) {
  JsonWriter j(JsonStyle::kPretty);
  j.begin_object();
  j.key("tool"); j.value("baroz");
  j.key("version"); j.value(BAROZ_VERSION);
  j.key("command"); j.value("height");
  j.key("arguments");
  j.begin_array();
  for (const auto& a : run.arguments) j.value(a);
  j.end_array();

  j.key("inputs");
  j.begin_array();
  for (std::size_t i = 0; i < reports.size(); ++i) {
    const HeightReport& r = reports[i];
    j.begin_object();
    j.key("path"); j.value(r.source);
    j.key("sha256"); j.value(r.sha256);
    j.key("bytes"); j.value(r.bytes);
    j.key("output"); j.value(i < run.outputs.size() ? run.outputs[i] : std::string("-"));
    j.key("format"); j.value(format_name(r.layout.format));
    if (r.layout.format == LogFormat::kCsv) {
      j.key("delimiter"); j.value(delimiter_name(r.layout.delimiter));
    }
    j.key("byte_order_mark"); j.value(r.layout.had_bom);
    j.key("crlf"); j.value(r.layout.crlf);
    j.key("columns");
    j.begin_object();
    for (std::size_t role = 0; role < kRoleCount; ++role) {
      j.key(role_name(static_cast<Role>(role)));
      if (!r.columns.has(static_cast<Role>(role))) {
        j.null();
        continue;
      }
      j.begin_object();
      j.key("name"); j.value(r.columns.name[role]);
      std::string unit;
      switch (static_cast<Role>(role)) {
        case Role::kTime:
          unit = r.columns.time_format == TimeFormat::kRfc3339
                     ? "rfc3339"
                     : std::string(time_unit_name(r.columns.time_unit));
          break;
        case Role::kPressure: unit = unit_name(r.columns.pressure_unit); break;
        case Role::kTemperature: unit = unit_name(r.columns.temperature_unit); break;
        case Role::kHumidity: unit = "%"; break;
        case Role::kLat:
        case Role::kLon: unit = "degrees"; break;
        case Role::kGnssAlt: unit = unit_name(r.columns.gnss_alt_unit); break;
        case Role::kCount: break;
      }
      j.key("unit"); j.value(unit);
      j.key("unit_from"); j.value(r.columns.unit_source[role]);
      j.end_object();
    }
    j.end_object();
    j.key("time_zone_for_times_without_zone"); j.value(run.time_zone);
    j.key("absolute_time"); j.value(r.absolute_time);
    j.key("first_time"); write_time(j, r.absolute_time, r.first_time_ns);
    j.key("last_time"); write_time(j, r.absolute_time, r.last_time_ns);
    j.key("nominal_interval_s"); j.value(static_cast<double>(r.nominal_interval_ns) * 1e-9);
    j.key("rows_read"); j.value(r.rows_read);
    j.key("rows_written"); j.value(r.rows_written);
    j.key("rows_rejected"); j.value(r.rows_rejected);
    j.key("rejected_by_reason");
    j.begin_object();
    for (std::size_t k = 0; k < r.rejected_by_reason.size(); ++k)
      if (r.rejected_by_reason[k] > 0) {
        j.key(reject_code(static_cast<RejectReason>(k)));
        j.value(r.rejected_by_reason[k]);
      }
    j.end_object();
    j.key("flagged");
    j.begin_object();
    j.key("gap"); j.value(r.gaps);
    j.key("time_backwards"); j.value(r.time_backwards);
    j.key("time_duplicate"); j.value(r.time_duplicates);
    j.end_object();
    j.key("stopped_by_strict"); j.value(r.stopped_by_strict);
    j.key("model");
    j.begin_object();
    j.key("requested"); j.value(model_name(o.model));
    j.key("chosen"); j.value(model_name(r.model));
    j.key("reason"); j.value(r.model_reason);
    j.key("profile");
    if (r.profile) {
      const ProfileBuild& pb = *r.profile;
      j.begin_object();
      j.key("source"); j.value(pb.source);
      j.key("sha256");
      if (pb.sha256.empty()) j.null(); else j.value(pb.sha256);
      j.key("causal"); j.value(r.causal_profile);
      j.key("leg"); j.value(profile_leg_name(o.profile.builder.leg));
      j.key("layer_m"); j.value(o.profile.builder.layer_m);
      j.key("samples"); j.value(pb.samples);
      j.key("layers"); j.value(pb.layers);
      j.key("humidity");
      j.value(pb.humidity ? "virtual temperature from relative humidity (WMO-No. 8 Annex 4.B)"
                          : "none: dry air (T_v = T)");
      j.key("saturation");
      j.value(o.profile.saturation == SaturationPhase::kIceBelowZero ? "ice below 0 C"
                                                                       : "water");
      j.end_object();
    } else {
      j.null();
    }
    j.key("gravity");
    j.begin_object();
    j.key("frame"); j.value(r.gravity.empty() ? std::string("standard") : r.gravity);
    j.key("latitude_deg"); j.value(r.latitude_deg);
    j.key("latitude_from");
    if (r.latitude_source.empty()) j.null(); else j.value(r.latitude_source);
    j.end_object();
    j.key("rows_extrapolated"); j.value(r.extrapolated_rows);
    j.key("rows_spike"); j.value(r.spike_rows);
    j.end_object();
    j.key("reference"); write_reference(j, r);
    j.key("uncertainty"); write_uncertainty(j, r);
    j.end_object();
  }
  j.end_array();

  j.key("options");
  j.begin_object();
  j.key("model"); j.value(model_name(o.model));
  j.key("temperature_model");
  j.value(o.temperature_model == IsothermalTemperature::kMean ? "mean" : "reference");
  j.key("profile_file");
  if (o.profile.file.empty()) j.null(); else j.value(o.profile.file);
  j.key("profile_leg"); j.value(profile_leg_name(o.profile.builder.leg));
  j.key("profile_layer_m"); j.value(o.profile.builder.layer_m);
  j.key("saturation");
  j.value(o.profile.saturation == SaturationPhase::kIceBelowZero ? "ice" : "water");
  j.key("latitude_deg");
  if (o.latitude_deg) j.value(*o.latitude_deg); else j.null();
  j.key("vspeed"); j.value(o.vspeed);
  j.key("despike"); j.value(o.despike);
  j.key("spike_window_s"); j.value(o.smoothing.spike_window_s);
  j.key("vspeed_window_s"); j.value(o.smoothing.vspeed_window_s);
  j.key("reference_kind"); j.value(reference_kind_name(o.reference.kind));
  j.key("ref_pressure_hpa");
  if (o.reference.kind == ReferenceKind::kPressure) j.value(o.reference.pressure_pa / 100.0);
  else j.null();
  j.key("qnh_hpa");
  if (o.reference.kind == ReferenceKind::kQnh) j.value(o.reference.pressure_pa / 100.0);
  else j.null();
  j.key("ref_window_s");
  if (o.reference.window_s) j.value(*o.reference.window_s); else j.value("auto");
  j.key("ref_temperature_k");
  if (o.reference.temperature_k) j.value(*o.reference.temperature_k); else j.null();
  j.key("elevation_m");
  if (o.reference.elevation_m) j.value(*o.reference.elevation_m); else j.null();
  const ReferenceOptions& ro = o.reference;
  const bool base = ro.kind == ReferenceKind::kBase;
  j.key("ref_base");
  if (base) j.value(ro.base.file); else j.null();
  j.key("base_offset");
  if (!base) j.null();
  else if (ro.base.offset_auto) j.value("auto");
  else j.value(ro.base.offset_s.value_or(0.0));
  j.key("base_elevation_m");
  if (base && ro.base.elevation_m) j.value(*ro.base.elevation_m); else j.null();
  j.key("tie");
  if (base) j.value(ro.base.tie); else j.null();
  j.key("outside_base");
  if (base) j.value(outside_base_policy_name(ro.base.outside)); else j.null();
  j.key("drift"); j.value(ro.drift == DriftCorrection::kLinear ? "linear" : "none");
  j.key("landing_height_m");
  if (ro.landing_height_m) j.value(*ro.landing_height_m); else j.null();
  j.key("checkpoints");
  j.begin_array();
  for (const auto& c : ro.checkpoints) j.value(c.text);
  j.end_array();
  j.key("ref_gnss"); j.value(ro.gnss_datum);
  j.key("gnss_below_m");
  if (ro.gnss_datum) j.value(ro.gnss_below_m); else j.null();
  j.key("stationary_min_departure_hpa"); j.value(o.reference.stationary.min_departure_pa / 100.0);
  j.key("stationary_noise_multiple"); j.value(o.reference.stationary.noise_multiple);
  j.key("stationary_sustain_s"); j.value(o.reference.stationary.sustain_s);
  j.key("stationary_baseline_span_s"); j.value(o.reference.stationary.baseline_span_s);
  j.key("sigma_p_hpa"); j.value(o.budget.sigma_p_pa / 100.0);
  j.key("sigma_p_abs_hpa"); j.value(o.budget.sigma_p_abs_pa / 100.0);
  j.key("sigma_ref_hpa");
  if (o.budget.sigma_ref_pa) j.value(*o.budget.sigma_ref_pa / 100.0); else j.value("default");
  j.key("sigma_t_k"); j.value(o.budget.sigma_t_k);
  j.key("sigma_t_random_k"); j.value(o.budget.sigma_t_random_k);
  j.key("sigma_t_model_k"); j.value(o.budget.sigma_t_model_k);
  j.key("drift_sigma_hpa_per_h"); j.value(o.budget.drift_sigma_pa_per_s * 36.0);
  j.key("confidence"); j.value(o.budget.confidence);
  j.key("monte_carlo_runs"); j.value(static_cast<std::uint64_t>(o.budget.monte_carlo_runs));
  j.key("seed");
  if (o.budget.monte_carlo_runs > 0) j.value(o.budget.seed); else j.null();
  j.key("sigma_columns"); j.value(o.sigma_columns);
  j.key("coverage_factor");
  j.value(reports.empty() ? kMissing : reports.front().coverage_factor);
  j.key("p_range_hpa");
  j.begin_array();
  j.value(o.validation.p_min_pa / 100.0);
  j.value(o.validation.p_max_pa / 100.0);
  j.end_array();
  j.key("temperature_range_k");
  j.begin_array();
  j.value(o.validation.t_min_k);
  j.value(o.validation.t_max_k);
  j.end_array();
  j.key("gap_factor"); j.value(o.validation.gap_factor);
  j.key("height_unit"); j.value(unit_name(o.series.height_unit));
  j.key("output_format"); j.value(o.series.format == OutputFormat::kCsv ? "csv" : "ndjson");
  j.key("height_decimals"); j.value(static_cast<std::int64_t>(o.series.height_decimals));
  j.key("pressure_decimals"); j.value(static_cast<std::int64_t>(o.series.pressure_decimals));
  j.key("temperature_decimals");
  j.value(static_cast<std::int64_t>(o.series.temperature_decimals));
  j.key("elapsed_decimals"); j.value(static_cast<std::int64_t>(o.series.elapsed_decimals));
  j.key("strict"); j.value(o.strict);
  j.key("decimal_comma"); j.value(o.decimal_comma);
  j.key("rejects"); if (run.rejects_path.empty()) j.null(); else j.value(run.rejects_path);
  j.end_object();

  j.key("constants");
  j.begin_object();
  j.key("g0_m_s2"); j.value(constants::kG0);
  j.key("r_star_j_mol_k"); j.value(constants::kRStar);
  j.key("m0_kg_mol"); j.value(constants::kM0);
  j.key("r_air_j_kg_k"); j.value(constants::kRAir);
  j.key("r0_m"); j.value(constants::kR0);
  j.key("p0_pa"); j.value(constants::kP0);
  j.key("t0_k"); j.value(constants::kT0);
  j.key("foot_m"); j.value(constants::kFoot);
  j.key("epsilon_water_air"); j.value(constants::kEpsilon);
  j.key("wgs84_gamma_e_m_s2"); j.value(constants::kWgs84GammaE);
  j.key("wgs84_gamma_p_m_s2"); j.value(constants::kWgs84GammaP);
  j.key("source");
  j.value("U.S. Standard Atmosphere, 1976 (NOAA-S/T 76-1562), Table 2 and Table 4; "
          "NIMA TR8350.2 (WGS 84); WMO-No. 8 Annex 4.B (humidity)");
  j.end_object();

  j.key("output_columns");
  j.begin_array();
  if (!reports.empty())
    for (const auto& c : reports.front().output_columns) {
      j.begin_object();
      j.key("name"); j.value(c.name);
      j.key("units"); if (c.units.empty()) j.null(); else j.value(c.units);
      j.key("standard_name");
      if (c.standard_name.empty()) j.null(); else j.value(c.standard_name);
      j.key("description"); j.value(c.description);
      j.end_object();
    }
  j.end_array();
  j.end_object();
  std::string doc = j.str();
  doc += '\n';
  return doc;
}

}  // namespace baroz
