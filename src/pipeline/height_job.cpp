#include "baroz/pipeline/height_job.hpp"

#include <algorithm>
#include <cmath>
#include <memory>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/models/geopotential.hpp"
#include "baroz/models/humidity.hpp"
#include "baroz/models/profile_model.hpp"
#include "baroz/models/standard_model.hpp"
#include "baroz/output/rejects_writer.hpp"
#include "baroz/pipeline/base_source.hpp"
#include "baroz/pipeline/log_survey.hpp"
#include "baroz/pipeline/sample_feed.hpp"
#include "baroz/uncertainty/monte_carlo.hpp"

namespace baroz {
namespace {

std::string format_hpa(double pa) { return fmt::format("{:.2f} hPa", pa / 100.0); }

/// Seconds between two times, for notes.
double seconds(TimeNs a, TimeNs b) { return static_cast<double>(b - a) * 1e-9; }

/// The job's state while it runs.
class HeightJob {
 public:
  HeightJob(ByteSource& input, ByteSink& output, const HeightOptions& options,
            Diagnostics& diagnostics, RejectsWriter* rejects, FlightSeries* collect)
      : input_(input),
        output_(output),
        options_(options),
        diag_(diagnostics),
        rejects_(rejects),
        collect_(collect) {}

  HeightReport run();

 private:
  void choose_model();
  void run_first_pass();
  void read_base();
  void setup_profile_model();
  void fit_checkpoints_and_gnss();
  bool feed_causal_profile(const Sample& sample);
  bool reject(const RowProblem& problem);
  void output_row(const SeriesRow& row);
  void write_out(SeriesRow& row);
  void drain_smoother(bool finish);
  bool emit(Sample& sample, bool in_window);
  // The model (or the altimeter relation) at one sample; without the
  // derivatives for the Monte Carlo runs, which need the height only.
  HeightEval evaluate_sample(double pressure_pa, double temperature_k, double reference_pa,
                             double& altitude_m, bool derivatives = true);
  void hold(const Sample& sample);
  bool release_held();
  void start_writer(bool time_is_number);
  void resolve_reference(bool end_of_input);

  ByteSource& input_;
  ByteSink& output_;
  const HeightOptions& options_;
  Diagnostics& diag_;
  RejectsWriter* rejects_;
  FlightSeries* collect_;
  HeightReport report_;

  std::unique_ptr<RecordReader> reader_;
  std::unique_ptr<HeightModel> model_;
  std::unique_ptr<StandardModel> altimeter_;  // --qnh
  std::unique_ptr<ErrorBudget> budget_;
  std::unique_ptr<MonteCarlo> monte_carlo_;  // --monte-carlo N
  std::unique_ptr<ReferenceResolver> resolver_;
  std::unique_ptr<SeriesWriter> writer_;
  Reference reference_;
  std::optional<LogSurvey> survey_;   // the first pass, when one was needed and possible
  bool have_reference_ = false;
  bool have_first_time_ = false;
  TimeNs first_time_ns_ = 0;
  // --qnh without --elevation: altitude of the reference window.
  HeightEval altitude_ref_{};
  double elevation_m_ = kMissing;

  // Samples held back until the reference is known (bounded, see
  // ReferenceOptions::max_window_samples). Their time text lives in one arena.
  struct Held {
    Sample sample;
    std::size_t text_offset = 0;
    std::size_t text_size = 0;
    std::size_t raw_size = 0;
  };
  std::vector<Held> held_;
  std::string held_text_;
  RowProblem problem_;

  // Profile model built causally from the samples as they arrive (a stream).
  std::unique_ptr<ProfileBuilder> causal_builder_;
  ProfileModel* profile_model_ = nullptr;
  std::size_t causal_revision_ = static_cast<std::size_t>(-1);
  std::size_t causal_used_ = 0;

  // Delay line for --vspeed / --despike: rows wait until the smoother's
  // window around them is complete. A ring whose strings keep their
  // capacity, so there is no allocation per row once it has grown.
  struct Pending {
    SeriesRow row;
    std::string time_text;
    std::array<double, kErrorTermCount> sigma{};
  };
  std::unique_ptr<FlightSmoother> smoother_;
  std::vector<Pending> ring_;
  std::size_t ring_head_ = 0;
  std::size_t ring_count_ = 0;
};

void HeightJob::choose_model() {
  const bool has_temperature = report_.columns.has(Role::kTemperature);
  const bool qnh = options_.reference.kind == ReferenceKind::kQnh;
  ModelKind kind = options_.model;
  if (kind == ModelKind::kAuto) {
    if (qnh) {
      kind = ModelKind::kStandard;
      report_.model_reason = "auto: --qnh uses the standard atmosphere's altimeter relation";
    } else if (!options_.profile.file.empty()) {
      kind = ModelKind::kProfile;
      report_.model_reason = "auto: a temperature profile was given with --profile";
    } else if (has_temperature) {
      kind = ModelKind::kProfile;
      report_.model_reason = fmt::format("auto: the log has an air-temperature column '{}'",
                                         report_.columns.name[static_cast<std::size_t>(
                                             Role::kTemperature)]);
    } else {
      kind = ModelKind::kStandard;
      report_.model_reason = "auto: no air-temperature column";
    }
  } else {
    report_.model_reason = fmt::format("{}: chosen with --model", model_name(kind));
  }
  if (qnh && !options_.profile.file.empty())
    throw usage_error("--profile goes with the profile model; --qnh uses the standard "
                      "atmosphere's altimeter relation");
  if (qnh && kind != ModelKind::kStandard)
    throw usage_error(fmt::format(
        "--qnh uses the standard atmosphere's altimeter relation; it cannot be combined with "
        "--model {}",
        model_name(kind)));
  report_.model = kind;
  report_.gravity = "standard";
  if (kind == ModelKind::kIsothermal) {
    if (options_.temperature_model == IsothermalTemperature::kMean && !has_temperature)
      throw input_error(fmt::format(
          "{}: --temperature-model mean needs an air-temperature column", input_.name()));
    model_ = std::make_unique<IsothermalModel>(options_.temperature_model);
  } else if (kind == ModelKind::kStandard) {
    model_ = std::make_unique<StandardModel>();
  }  // profile: set up after the first pass (setup_profile_model)
  if (options_.latitude_deg && kind != ModelKind::kProfile)
    diag_.note(input_.name(),
               fmt::format("--latitude applies to the profile model; the {} model keeps the "
                           "1976 standard's gravity (g0, r0)",
                           model_name(kind)));
}

void HeightJob::setup_profile_model() {
  const std::string& src = input_.name();
  const ProfileSettings& ps = options_.profile;
  std::optional<ProfileBuild> build;
  if (!ps.file.empty()) {
    std::unique_ptr<ByteSource> table = open_file_source(ps.file);
    build = read_profile_table(*table, ReaderOptions{}, options_.validation, ps.saturation);
  } else {
    if (!report_.columns.has(Role::kTemperature))
      throw input_error(fmt::format(
          "{}: the profile model needs an air-temperature column or --profile FILE", src));
    if (survey_ && survey_->profile) build = std::move(survey_->profile);
  }

  GravityFrame frame = GravityFrame::standard();
  if (options_.latitude_deg) {
    frame = GravityFrame::wgs84(*options_.latitude_deg);
    report_.latitude_source = "option";
  } else if (build && !std::isnan(build->first_latitude_deg) &&
             report_.columns.has(Role::kLat)) {
    frame = GravityFrame::wgs84(build->first_latitude_deg);
    report_.latitude_source = "column";
  } else if (!build && report_.columns.has(Role::kLat)) {
    diag_.note(src, "the input is a stream: its latitude column is not used for gravity; "
                    "give --latitude for WGS 84 gravity");
  } else if (build && !ps.file.empty() && report_.columns.has(Role::kLat)) {
    diag_.note(src, "with --profile FILE the log's latitude column is not read for gravity; "
                    "give --latitude for WGS 84 gravity");
  }
  if (!frame.is_standard()) {
    report_.gravity = "wgs84";
    report_.latitude_deg = frame.latitude_deg();
    diag_.note(src, fmt::format("gravity: WGS 84 normal gravity at {:.4f} deg ({}): g = {:.6f} "
                                "m/s^2, effective radius {:.0f} m",
                                frame.latitude_deg(),
                                report_.latitude_source == "option" ? "--latitude"
                                                                    : "first latitude of the log",
                                frame.surface_gravity(), frame.radius_m()));
  }

  if (build) {
    const TemperatureProfile& prof = *build->profile;
    diag_.note(src, fmt::format("profile from {}: {} layer{} from {} sample{}, {:.2f} to "
                                "{:.2f} hPa; {}",
                                build->source, build->layers, build->layers == 1 ? "" : "s",
                                build->samples, build->samples == 1 ? "" : "s",
                                prof.covered_bottom_pa() / 100.0, prof.covered_top_pa() / 100.0,
                                build->humidity
                                    ? "virtual temperature from the humidity column"
                                    : "no humidity: dry air"));
    auto model = std::make_unique<ProfileModel>(prof, frame);
    // A profile from the log's own samples moves with the sensor's offset.
    model->set_profile_from_sensor(ps.file.empty());
    profile_model_ = model.get();
    model_ = std::move(model);
    report_.profile = std::move(build);
    report_.profile->profile.reset();  // the report keeps the description only
  } else {
    // A stream: the profile grows from the samples as they arrive.
    causal_builder_ = std::make_unique<ProfileBuilder>(ps.builder);
    report_.causal_profile = true;
    ProfileBuild desc;
    desc.source = fmt::format("log {} (causal)", profile_leg_name(ps.builder.leg));
    report_.profile = desc;
    diag_.note(src, "the input is a stream: the temperature profile is built causally from the "
                    "samples that have arrived, so early rows use a shorter profile (read a "
                    "file for a profile from the whole flight)");
    auto model = std::make_unique<ProfileModel>(
        TemperatureProfile({ProfileNode{constants::kP0, constants::kT0, kMissing}}), frame);
    model->set_profile_from_sensor(true);
    profile_model_ = model.get();
    model_ = std::move(model);
  }
}

void HeightJob::run_first_pass() {
  const ReferenceOptions& ro = options_.reference;
  SurveyRequest req;
  if (report_.model == ModelKind::kProfile && options_.profile.file.empty() &&
      report_.columns.has(Role::kTemperature))
    req.profile = &options_.profile;
  const bool drift = ro.drift == DriftCorrection::kLinear;
  req.landing = drift || (ro.kind == ReferenceKind::kBase && ro.base.offset_auto);
  req.stationary = ro.stationary;
  req.landing_capacity = ro.max_window_samples;
  req.checkpoints = ro.checkpoints;
  req.gnss = ro.gnss_datum;
  if (!req.any()) return;
  std::unique_ptr<ByteSource> second =
      options_.series.line_buffered ? nullptr : input_.reopen();
  if (!second) {
    const char* what = drift                       ? "--drift linear"
                       : !ro.checkpoints.empty()   ? "--checkpoint"
                       : ro.gnss_datum             ? "--ref-gnss"
                                                   : nullptr;
    if (what)
      throw input_error(fmt::format("{}: {} needs the whole log before the first row is "
                                    "written (it reads the log twice): give a file{}",
                                    input_.name(), what,
                                    options_.series.line_buffered ? " without --line-buffered"
                                                                  : ", not a stream"));
    if (req.landing)
      diag_.note(input_.name(), "the input is a stream: --base-offset auto uses the pre-launch "
                                "segment only");
    return;  // the profile is then built causally
  }
  survey_ = survey_log(*second, options_.reader, options_.columns, options_.decimal_comma,
                       options_.validation, req);
}

void HeightJob::read_base() {
  const BaseOptions& bo = options_.reference.base;
  std::unique_ptr<ByteSource> file = open_file_source(bo.file);
  BaseRead base = read_base_log(*file, options_.columns.tz_offset_s, ValidationOptions{}, diag_);
  resolver_->set_base(std::move(base.series), std::move(base.report));
}

void HeightJob::fit_checkpoints_and_gnss() {
  const ReferenceOptions& ro = options_.reference;
  const std::string& src = input_.name();
  auto height_at = [&](TimeNs t, double p, double temp, double delta_pa) {
    ReferencePoint rp = reference_.point;
    rp.pressure_pa = reference_.track.at(t).pressure_pa + delta_pa;
    return model_->evaluate(p, temp, rp);
  };
  if (!ro.checkpoints.empty()) {
    const std::vector<CheckpointObservation>& obs = survey_->checkpoints;
    const CheckpointFit fit =
        fit_checkpoints(ro.checkpoints, obs, [&](std::size_t i, double delta) {
          const HeightEval e = height_at(obs[i].time_ns, obs[i].pressure_pa,
                                         obs[i].temperature_k, delta);
          return e.valid ? std::pair{e.height_m, e.dh_dpref}
                         : std::pair{kMissing, kMissing};
        });
    reference_.track.set_correction(fit.offset_pa, fit.rate_pa_per_s, fit.centre_ns);
    std::string list;
    for (std::size_t i = 0; i < fit.residual_m.size(); ++i)
      list += fmt::format("{}{} ({:+.3f} m)", i ? ", " : "", ro.checkpoints[i].text,
                          fit.residual_m[i]);
    diag_.note(src, fmt::format(
                        "checkpoints: reference corrected by {:+.3f} hPa{} from {} checkpoint{}; "
                        "residuals {}; rms {:.3f} m",
                        fit.offset_pa / 100.0,
                        fit.parameters == 2
                            ? fmt::format(" and {:+.3f} hPa/h", fit.rate_pa_per_s * 36.0)
                            : std::string(),
                        obs.size(), obs.size() == 1 ? "" : "s", list, fit.rms_m));
    if (!fit.note.empty()) diag_.note(src, fmt::format("checkpoints: {}", fit.note));
    reference_.checkpoint_observations = obs;
    reference_.checkpoint_fit = fit;
  }
  if (ro.gnss_datum) {
    std::vector<double> diffs;
    diffs.reserve(survey_->gnss.size());
    for (const GnssPair& g : survey_->gnss) {
      const HeightEval e = height_at(g.time_ns, g.pressure_pa, g.temperature_k, 0.0);
      if (e.valid && e.height_m <= ro.gnss_below_m) diffs.push_back(g.gnss_alt_m - e.height_m);
    }
    constexpr std::size_t kMinPairs = 10;
    if (diffs.size() < kMinPairs)
      throw input_error(fmt::format("{}: --ref-gnss: {} samples with a GNSS altitude below {:.0f} "
                                    "m (at least {} needed)",
                                    src, diffs.size(), ro.gnss_below_m, kMinPairs));
    const GnssFit fit = fit_gnss_datum(diffs, ro.gnss_below_m);
    elevation_m_ = fit.datum_m;
    reference_.point.datum_geopotential_m =
        profile_model_ && !profile_model_->frame().is_standard()
            ? profile_model_->frame().geopotential_from_geometric(elevation_m_)
            : geopotential_from_geometric(elevation_m_);
    diag_.note(src, fmt::format("GNSS fit (--ref-gnss): the launch point is at {:.2f} m above "
                                "MSL (median of {} differences GNSS - height below {:.0f} m{}; "
                                "spread {:.2f} m, standard error {:.2f} m with ~{:.0f} independent "
                                "differences); altitude_m uses it, the heights stay barometric",
                                fit.datum_m, fit.pairs, ro.gnss_below_m,
                                survey_->gnss_stride > 1
                                    ? fmt::format(", every {}th sample", survey_->gnss_stride)
                                    : std::string(),
                                fit.spread_m, fit.standard_error_m, fit.effective_pairs));
    reference_.gnss = fit;
  }
}

bool HeightJob::feed_causal_profile(const Sample& s) {
  double tv = kMissing;
  if (!std::isnan(s.temperature_k) && !std::isnan(s.humidity_pct)) {
    tv = virtual_temperature_from_rh_k(s.temperature_k, s.humidity_pct, s.pressure_pa,
                                       options_.profile.saturation);
    report_.profile->humidity = true;
  }
  causal_builder_->add(s.pressure_pa, s.temperature_k, tv);
  const std::size_t used = causal_builder_->samples_used();
  if (used == 0) return false;
  // Rebuild when a new layer opens (the builder's revision), and otherwise
  // on a geometric schedule (every 25 % more samples, so that the medians of
  // a long hover are refreshed): a long stream costs O(layers + log n)
  // rebuilds, not one per row.
  const std::size_t revision = causal_builder_->revision();
  if (revision != causal_revision_ ||
      used >= causal_used_ + std::max<std::size_t>(1, causal_used_ / 4)) {
    profile_model_->set_profile(causal_builder_->build());
    causal_revision_ = revision;
    causal_used_ = used;
    report_.profile->samples = used;
    report_.profile->layers = causal_builder_->layers();
  }
  return true;
}

bool HeightJob::reject(const RowProblem& problem) {
  ++report_.rows_rejected;
  ++report_.rejected_by_reason[static_cast<std::size_t>(problem.reason)];
  if (rejects_) rejects_->write(input_.name(), problem);
  if (options_.strict && !report_.stopped_by_strict) {
    diag_.fatal_row_problem(input_.name(), problem);
    report_.stopped_by_strict = true;
    return false;
  }
  if (report_.stopped_by_strict) return true;  // releasing held rows after the stop
  diag_.row_problem(input_.name(), problem);
  return true;
}

void HeightJob::start_writer(bool time_is_number) {
  SeriesOptions so = options_.series;
  so.altitude = options_.reference.kind == ReferenceKind::kQnh ||
                options_.reference.elevation_m.has_value() || options_.reference.gnss_datum;
  so.gnss_alt = report_.columns.has(Role::kGnssAlt);
  so.vspeed = options_.vspeed;
  if (options_.sigma_columns)
    for (std::size_t t = 0; t < kErrorTermCount; ++t)
      so.sigma_columns.emplace_back(error_term_name(static_cast<ErrorTerm>(t)));
  writer_ = std::make_unique<SeriesWriter>(output_, so, time_is_number);
  report_.output_columns = writer_->columns();
  writer_->write_header();
}

bool HeightJob::emit(Sample& s, bool in_window) {
  if (in_window) s.flags |= kFlagReferenceWindow;
  ReferencePoint ref = reference_.point;
  const TrackValue track = reference_.track.at(s.time_ns);
  ref.pressure_pa = track.pressure_pa;
  if (track.outside_base) {
    s.flags |= kFlagNoBase;
    ++report_.no_base_rows;
    if (options_.reference.base.outside == OutsideBasePolicy::kReject) {
      problem_.reason = RejectReason::kOutsideBase;
      problem_.line = s.line;
      problem_.record = s.record;
      problem_.column = report_.columns.name[static_cast<std::size_t>(Role::kTime)];
      problem_.field = report_.columns.at(Role::kTime);
      problem_.message = fmt::format(
          "no base-station pressure: {:.1f} s outside the base log (--outside-base hold keeps "
          "such rows)",
          track.outside_s);
      problem_.raw = s.raw;
      return reject(problem_);
    }
  }
  HeightEval e;
  double altitude = kMissing;
  // The reference pressure the height's dh_dpref refers to: QNH for the
  // altimeter relation from --elevation, the window's pressure for it
  // without, else p_ref(t).
  const double reference_pa = altimeter_ ? (!std::isnan(elevation_m_) ? reference_.qnh_pa
                                                                      : reference_.point.pressure_pa)
                                         : ref.pressure_pa;
  if (causal_builder_ && !altimeter_ && !feed_causal_profile(s)) {
    e.valid = false;
    e.reason = options_.profile.builder.leg == ProfileLeg::kDescent
                   ? "the descent leg of the profile has no sample yet (it starts after the "
                     "top; on a stream the rows before it cannot use it)"
                   : "no temperature sample has arrived yet to build the profile from";
  } else {
    e = evaluate_sample(s.pressure_pa, s.temperature_k, reference_pa, altitude);
  }
  if (!e.valid) {
    problem_.reason =
        std::isnan(s.temperature_k) && (model_->needs_sample_temperature() || causal_builder_)
            ? RejectReason::kNoTemperature
            : RejectReason::kOutsideModel;
    problem_.line = s.line;
    problem_.record = s.record;
    problem_.column = report_.columns.name[static_cast<std::size_t>(
        problem_.reason == RejectReason::kNoTemperature ? Role::kTemperature : Role::kPressure)];
    problem_.field = report_.columns.at(problem_.reason == RejectReason::kNoTemperature
                                            ? Role::kTemperature
                                            : Role::kPressure);
    problem_.message = fmt::format("{}: {}", model_name(report_.model), e.reason);
    problem_.raw = s.raw;
    return reject(problem_);
  }
  if (e.extrapolated) {
    s.flags |= kFlagExtrapolated;
    ++report_.extrapolated_rows;
  }
  DriftUncertainty& drift = reference_.drift_uncertainty;
  if (drift.at_first_row) {
    drift.t_ref_ns = s.time_ns;  // an external reference: taken as valid at the first row
    drift.at_first_row = false;
  }
  BudgetInputs inputs;
  inputs.reference_sigma_pa = report_.sigma_ref_pa;
  inputs.offset_common = reference_.offset_common;
  inputs.drift_pa =
      drift.sigma_pa(s.time_ns, track.outside_s, options_.budget.drift_sigma_pa_per_s);
  const HeightSigma sigma = budget_->evaluate(e, inputs);
  double low = e.height_m - budget_->coverage_factor() * sigma.total_m;
  double high = e.height_m + budget_->coverage_factor() * sigma.total_m;
  if (monte_carlo_) {
    const double temperature = s.temperature_k;
    const MonteCarloBand mc = monte_carlo_->band(
        [&](double p, double p_ref) {
          double unused = kMissing;
          const HeightEval h = evaluate_sample(p, temperature, p_ref, unused, false);
          return h.valid ? h.height_m : kMissing;
        },
        s.pressure_pa, reference_pa, e, inputs, report_.rows_read);
    if (mc.valid_runs < monte_carlo_->runs()) ++report_.monte_carlo->with_failed_runs;
    if (mc.complete()) {
      low = mc.low_m;
      high = mc.high_m;
    } else {  // too many runs went past the model's edge: keep the linear band
      s.flags |= kFlagLinearBand;
      ++report_.monte_carlo->linear_band;
    }
  }

  if (!have_first_time_) {
    have_first_time_ = true;
    first_time_ns_ = s.time_ns;
    report_.first_time_ns = s.time_ns;
  }
  report_.last_time_ns = s.time_ns;
  const double elapsed_s = static_cast<double>(s.time_ns - first_time_ns_) * 1e-9;
  if (std::isnan(report_.max_height_m) || e.height_m > report_.max_height_m) {
    report_.max_height_m = e.height_m;
    report_.budget_at_max = {true, elapsed_s, e.height_m, sigma};
  }
  report_.budget_at_end = {true, elapsed_s, e.height_m, sigma};

  SeriesRow row;
  row.time_text = s.time_text;
  row.elapsed_ns = s.time_ns - first_time_ns_;
  row.pressure_pa = s.pressure_pa;
  row.temperature_k = s.temperature_k;
  row.height_m = e.height_m;
  row.height_low_m = low;
  row.height_high_m = high;
  row.sigma_m = sigma.term_m.data();
  row.altitude_m = altitude;
  row.geopotential_m = e.geopotential_m;
  row.gnss_alt_m = s.gnss_alt_m;
  row.flags = s.flags;
  output_row(row);
  return true;
}

HeightEval HeightJob::evaluate_sample(double p, double t, double reference_pa, double& altitude,
                                      bool derivatives) {
  HeightEval e;
  altitude = kMissing;
  if (altimeter_) {
    // Altimeter relation: altitude = Z(H(p) - H(QNH)) (product spec, --qnh).
    const bool from_elevation = !std::isnan(elevation_m_);
    const ReferencePoint msl{from_elevation ? reference_pa : reference_.qnh_pa,
                             reference_.point.temperature_k, 0.0};
    e = altimeter_->evaluate(p, t, msl);
    if (!e.valid) return e;
    altitude = e.height_m;
    if (from_elevation) {
      e.height_m -= elevation_m_;
      e.geopotential_m -= geopotential_from_geometric(elevation_m_);
      return e;
    }
    // Measured from the window's altitude: the QNH error cancels, the
    // window's pressure error enters instead.
    HeightEval base = altitude_ref_;
    if (reference_pa != reference_.point.pressure_pa) {  // a perturbed window (Monte Carlo)
      base = altimeter_->evaluate(reference_pa, kMissing, msl);
      if (!base.valid) return base;
    }
    e.height_m -= base.height_m;
    e.geopotential_m -= base.geopotential_m;
    e.dh_dpref = -base.dh_dp;
    e.dh_dtmodel -= base.dh_dtmodel;
    return e;
  }
  ReferencePoint ref = reference_.point;
  ref.pressure_pa = reference_pa;
  e = derivatives ? model_->evaluate(p, t, ref) : model_->evaluate_height(p, t, ref);
  if (e.valid && !std::isnan(elevation_m_)) altitude = elevation_m_ + e.height_m;
  return e;
}

void HeightJob::output_row(const SeriesRow& row) {
  if (!smoother_) {
    SeriesRow r = row;
    write_out(r);
    return;
  }
  if (ring_count_ == ring_.size()) {
    // Grow the ring, keeping the order (rare: only while the window fills).
    std::vector<Pending> bigger(std::max<std::size_t>(64, ring_.size() * 2));
    for (std::size_t i = 0; i < ring_count_; ++i)
      bigger[i] = std::move(ring_[(ring_head_ + i) % ring_.size()]);
    ring_ = std::move(bigger);
    ring_head_ = 0;
  }
  Pending& p = ring_[(ring_head_ + ring_count_) % ring_.size()];
  ++ring_count_;
  p.time_text.assign(row.time_text);
  p.row = row;
  if (row.sigma_m) std::copy(row.sigma_m, row.sigma_m + kErrorTermCount, p.sigma.begin());
  smoother_->push(static_cast<double>(row.elapsed_ns) * 1e-9, row.height_m);
  drain_smoother(false);
}

void HeightJob::drain_smoother(bool finish) {
  if (!smoother_) return;
  if (finish) smoother_->finish();
  SmoothedRow done;
  while (smoother_->pop(done)) {
    Pending& p = ring_[ring_head_];
    ring_head_ = (ring_head_ + 1) % ring_.size();
    --ring_count_;
    SeriesRow& r = p.row;
    r.time_text = p.time_text;
    if (r.sigma_m) r.sigma_m = p.sigma.data();
    if (options_.despike && done.spike) r.flags |= kFlagSpike;
    if (options_.vspeed) r.vspeed_mps = done.vspeed_mps;
    write_out(r);
  }
}

void HeightJob::write_out(SeriesRow& row) {
  if (row.flags & kFlagSpike) ++report_.spike_rows;
  writer_->write_row(row);
  ++report_.rows_written;
  if (collect_) {
    FlightPoint pt;
    pt.time_s = static_cast<double>(row.elapsed_ns) * 1e-9;
    pt.height_m = static_cast<float>(row.height_m);
    pt.low_m = static_cast<float>(row.height_low_m);
    pt.high_m = static_cast<float>(row.height_high_m);
    pt.temperature_c = static_cast<float>(row.temperature_k - constants::kZeroCelsius);
    pt.vspeed_mps = static_cast<float>(row.vspeed_mps);
    pt.flags = row.flags;
    collect_->points.push_back(pt);
  }
}

void HeightJob::hold(const Sample& s) {
  Held h;
  h.sample = s;
  h.sample.time_text = {};
  h.sample.raw = {};
  h.text_offset = held_text_.size();
  h.text_size = s.time_text.size();
  h.raw_size = s.raw.size();
  held_text_.append(s.time_text);
  held_text_.append(s.raw);
  held_.push_back(h);
}

bool HeightJob::release_held() {
  for (std::size_t i = 0; i < held_.size(); ++i) {
    Held& h = held_[i];
    h.sample.time_text = std::string_view(held_text_).substr(h.text_offset, h.text_size);
    h.sample.raw = std::string_view(held_text_).substr(h.text_offset + h.text_size, h.raw_size);
    // After a --strict stop the remaining held rows are still written (or
    // counted as rejected), so that read = written + rejected.
    emit(h.sample, resolver_->in_window(i));
  }
  held_.clear();
  held_text_.clear();
  return !report_.stopped_by_strict;
}

void HeightJob::resolve_reference(bool end_of_input) {
  reference_ = resolver_->resolve(end_of_input, input_.name());
  have_reference_ = true;
  if (options_.budget.sigma_ref_pa) {
    report_.sigma_ref_pa = *options_.budget.sigma_ref_pa;
    report_.sigma_ref_source = "option";
  } else {
    report_.sigma_ref_pa = reference_.sigma_ref_default_pa;
    report_.sigma_ref_source = reference_.sigma_ref_default_source;
  }
  for (const auto& n : reference_.notes) diag_.note(input_.name(), n);
  if (profile_model_ && !profile_model_->frame().is_standard() && !std::isnan(elevation_m_))
    reference_.point.datum_geopotential_m =
        profile_model_->frame().geopotential_from_geometric(elevation_m_);
  if (survey_) fit_checkpoints_and_gnss();
  const std::string& src = input_.name();
  if (reference_.window) {
    const ReferenceWindow& w = *reference_.window;
    std::string t = std::isnan(w.temperature_k)
                        ? std::string()
                        : fmt::format(", {:.2f} C", w.temperature_k - constants::kZeroCelsius);
    std::string msg = fmt::format(
        "reference window {} {:.3f} to {:.3f} s ({} samples{}, mean {}, sd {:.3f} hPa{})",
        w.auto_detected ? "(auto)" : "(--ref-window)", seconds(w.start_ns, w.start_ns),
        seconds(w.start_ns, w.end_ns), w.samples,
        w.used != w.samples ? fmt::format(", {} averaged", w.used) : std::string(),
        format_hpa(w.pressure_pa), w.pressure_sd_pa / 100.0, t);
    if (w.launch_found) msg += fmt::format("; launch at {:.3f} s", seconds(w.start_ns, w.launch_ns));
    diag_.note(src, msg);
    if (!input_.is_regular_file() && !end_of_input)
      diag_.note(src, fmt::format("the input is a stream: the reference was formed causally "
                                  "from the {} samples that had arrived; rows held back until "
                                  "then are written now",
                                  held_.size()));
  }
  if (reference_.kind == ReferenceKind::kPressure)
    diag_.note(src, fmt::format("reference pressure {} (--ref-pressure)",
                                format_hpa(reference_.point.pressure_pa)));
  if (reference_.kind == ReferenceKind::kQnh) {
    diag_.note(src, fmt::format("altimeter setting QNH {}", format_hpa(reference_.qnh_pa)));
    altimeter_ = std::make_unique<StandardModel>();
    if (std::isnan(elevation_m_)) {
      const ReferencePoint msl{reference_.qnh_pa, reference_.point.temperature_k, 0.0};
      altitude_ref_ = altimeter_->evaluate(reference_.point.pressure_pa, kMissing, msl);
      if (!altitude_ref_.valid)
        throw input_error(fmt::format("{}: the reference window's pressure is outside the "
                                      "standard atmosphere", src));
      diag_.note(src, fmt::format("height_m is measured from the window's altitude {:.3f} m "
                                  "(give --elevation to measure from the site elevation)",
                                  altitude_ref_.height_m));
    }
  }
  if (model_->kind() == ModelKind::kIsothermal)
    diag_.note(src, fmt::format("isothermal reference temperature {:.2f} K ({})",
                                reference_.point.temperature_k, reference_.temperature_source));
  report_.reference = reference_;
}

HeightReport HeightJob::run() {
  report_.source = input_.name();
  reader_ = open_record_reader(input_, options_.reader);
  report_.layout = reader_->layout();
  report_.columns = map_columns(report_.layout.columns, options_.columns, input_.name());
  choose_model();
  run_first_pass();
  if (report_.model == ModelKind::kProfile) setup_profile_model();
  diag_.note(input_.name(), fmt::format("model {} ({})", model_name(report_.model),
                                        report_.model_reason));
  if (options_.vspeed || options_.despike)
    smoother_ = std::make_unique<FlightSmoother>(options_.smoothing);
  budget_ = std::make_unique<ErrorBudget>(options_.budget);
  report_.coverage_factor = budget_->coverage_factor();
  if (options_.budget.monte_carlo_runs > 0) {
    monte_carlo_ = std::make_unique<MonteCarlo>(options_.budget);
    report_.monte_carlo.emplace();
    report_.band_method = fmt::format("monte carlo ({} runs, seed {})",
                                      options_.budget.monte_carlo_runs, options_.budget.seed);
    diag_.note(input_.name(),
               fmt::format("band by Monte Carlo: {} runs per row, seed {} (--seed to change)",
                           options_.budget.monte_carlo_runs, options_.budget.seed));
  } else {
    report_.band_method = "linear";
  }
  elevation_m_ = options_.reference.elevation_m ? *options_.reference.elevation_m : kMissing;
  resolver_ = std::make_unique<ReferenceResolver>(
      options_.reference, model_->kind() == ModelKind::kIsothermal,
      report_.columns.has(Role::kTemperature));
  if (options_.reference.kind == ReferenceKind::kBase) read_base();
  if (survey_ && survey_->landing) resolver_->set_landing(std::move(*survey_->landing));

  // Parse on a second thread when the input can be read ahead (a file) and
  // rows need not appear one by one (no --line-buffered).
  const bool threaded = input_.is_regular_file() && !options_.series.line_buffered;
  std::unique_ptr<SampleFeed> feed = make_sample_feed(
      *reader_, report_.columns, options_.decimal_comma, options_.validation, threaded);
  bool writer_started = false;
  bool holding = resolver_->needs_window();
  if (!holding) resolve_reference(false);

  FeedItem item;
  while (feed->next(item)) {
    ++report_.rows_read;
    if (item.problem) {
      if (!reject(*item.problem)) {
        feed->stop();
        break;
      }
      continue;
    }
    Sample& sample = *item.sample;
    if (!writer_started) {
      // The first accepted row tells whether times are numbers or RFC 3339.
      start_writer(!parse_rfc3339(sample.time_text, 0).has_value());
      writer_started = true;
    }
    if (holding) {
      hold(sample);
      if (resolver_->feed(sample)) {
        resolve_reference(false);
        holding = false;
        if (!release_held()) {
          feed->stop();
          break;
        }
      }
      continue;
    }
    if (!emit(sample, false)) {
      feed->stop();
      break;
    }
  }
  if (holding && !held_.empty()) {
    if (!report_.stopped_by_strict) {
      resolve_reference(true);
      release_held();
    } else {
      // --strict stopped while rows were held for the reference: write them
      // (as at the end of the input) so that read = written + rejected.
      try {
        resolve_reference(true);
        release_held();
      } catch (const Error&) {
        report_.rows_read -= held_.size();  // never processed
      }
    }
  }
  const FeedStats stats = feed->stats();
  report_.columns = stats.columns;
  report_.absolute_time = stats.absolute_time;
  report_.nominal_interval_ns = stats.nominal_interval_ns;
  report_.gaps = stats.gaps;
  report_.time_backwards = stats.backwards;
  report_.time_duplicates = stats.duplicates;
  if (!writer_started) start_writer(true);
  drain_smoother(true);
  writer_->flush();
  if (report_.monte_carlo && report_.monte_carlo->with_failed_runs > 0) {
    diag_.note(
        input_.name(),
        fmt::format("Monte Carlo: in {} rows some runs gave no height (their perturbed "
                    "pressure left the model's range); they count in the tail that "
                    "widens the band. {} rows, where too many failed to draw a limit, "
                    "carry the linear band instead (flag linear_band)",
                    report_.monte_carlo->with_failed_runs, report_.monte_carlo->linear_band));
  }
  if (collect_) {
    collect_->source = input_.name();
    collect_->absolute_time = report_.absolute_time;
    collect_->start_time_ns = report_.first_time_ns;
    collect_->elevation_m = elevation_m_;
    collect_->model = std::string(model_name(report_.model));
    collect_->confidence = options_.budget.confidence;
    auto budget_at = [](const BudgetPoint& b) {
      BudgetAt a;
      a.set = b.set;
      a.elapsed_s = b.elapsed_s;
      a.height_m = b.height_m;
      a.sigma_m = b.sigma.total_m;
      for (std::size_t t = 0; t < kErrorTermCount; ++t)
        a.terms.emplace_back(std::string(error_term_name(static_cast<ErrorTerm>(t))),
                             b.sigma.term_m[t]);
      return a;
    };
    collect_->budget_at_max = budget_at(report_.budget_at_max);
    collect_->budget_at_end = budget_at(report_.budget_at_end);
  }
  // Hash the whole input, also when --strict stopped early.
  if (input_.hashing()) {
    char drain[1 << 16];
    while (input_.read(drain, sizeof drain) > 0) {
    }
  }
  report_.bytes = input_.bytes_read();
  report_.sha256 = input_.sha256_hex();
  diag_.finish_source(input_.name());
  return report_;
}

}  // namespace

HeightReport run_height_job(ByteSource& input, ByteSink& output, const HeightOptions& options,
                            Diagnostics& diagnostics, RejectsWriter* rejects,
                            FlightSeries* collect) {
  HeightJob job(input, output, options, diagnostics, rejects, collect);
  return job.run();
}

}  // namespace baroz
