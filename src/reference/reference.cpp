#include "baroz/reference/reference.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/models/geopotential.hpp"

namespace baroz {

std::string_view reference_kind_name(ReferenceKind kind) {
  switch (kind) {
    case ReferenceKind::kPressure: return "pressure";
    case ReferenceKind::kQnh: return "qnh";
    case ReferenceKind::kWindow: return "window";
    case ReferenceKind::kBase: return "base";
  }
  return "window";
}

std::string_view outside_base_policy_name(OutsideBasePolicy policy) {
  return policy == OutsideBasePolicy::kReject ? "reject" : "hold";
}

void ReferenceResolver::set_base(std::shared_ptr<const BaseSeries> base, BaseReport report) {
  base_ = std::move(base);
  base_report_ = std::move(report);
}

void ReferenceResolver::set_landing(RestSegment landing) { landing_ = std::move(landing); }

ReferenceResolver::ReferenceResolver(const ReferenceOptions& options, bool needs_temperature,
                                     bool has_temperature_column)
    : options_(options),
      needs_temperature_(needs_temperature),
      has_temperature_column_(has_temperature_column),
      detector_(options.stationary) {
  const bool temperature_from_window =
      needs_temperature_ && !options_.temperature_k && has_temperature_column_;
  switch (options_.kind) {
    case ReferenceKind::kWindow: needs_window_ = true; break;
    case ReferenceKind::kPressure: needs_window_ = temperature_from_window; break;
    case ReferenceKind::kQnh:
      // height_m is measured from the window's altitude unless --elevation.
      needs_window_ = !options_.elevation_m || temperature_from_window;
      break;
    case ReferenceKind::kBase:
      // The tie and the clock-offset estimate use the pre-launch window, the
      // hypsometric move of the base its temperature.
      needs_window_ = options_.base.tie || options_.base.offset_auto || temperature_from_window ||
                      (options_.base.elevation_m && has_temperature_column_ &&
                       !options_.temperature_k);
      break;
  }
}

bool ReferenceResolver::feed(const Sample& s) {
  if (done_) return true;
  times_.push_back(s.time_ns);
  pressures_.push_back(s.pressure_pa);
  temperatures_.push_back(s.temperature_k);
  if (options_.window_s) {
    const auto span = static_cast<TimeNs>(*options_.window_s * 1e9);
    if (s.time_ns - times_.front() > span) {
      done_ = true;
      window_end_ = times_.size() - 1;
    }
  } else if (detector_.feed(s.time_ns, s.pressure_pa)) {
    done_ = true;
  }
  if (!done_ && times_.size() >= options_.max_window_samples) {
    // Memory bound: the samples held so far are the window.
    done_ = true;
    window_end_ = times_.size();
    capped_ = true;
  }
  return done_;
}

Reference ReferenceResolver::resolve(bool end_of_input, std::string_view source) {
  Reference ref;
  ref.kind = options_.kind;
  ref.qnh_pa = options_.kind == ReferenceKind::kQnh ? options_.pressure_pa : kMissing;

  std::vector<unsigned char> use(times_.size(), 1);
  if (needs_window_) {
    ReferenceWindow w;
    if (options_.window_s) {
      if (!done_) window_end_ = times_.size();
      w.auto_detected = false;
      if (capped_)
        ref.notes.push_back(fmt::format(
            "--ref-window: only the first {} samples are averaged (the memory bound)",
            times_.size()));
    } else {
      if (!detector_.result().decided) detector_.finish();
      const StationaryResult& r = detector_.result();
      window_end_ = r.window_end;
      for (std::size_t i = 0; i < window_end_; ++i) use[i] = detector_.used(i) ? 1 : 0;
      w.auto_detected = true;
      w.launch_found = r.launch_found;
      w.noise_sigma_pa = r.noise_sigma_pa;
      w.threshold_pa = r.threshold_pa;
      if (!r.launch_found) {
        if (end_of_input)
          ref.notes.push_back("no launch detected: the whole log is stationary and is the "
                              "reference window");
        else
          ref.notes.push_back(fmt::format(
              "no launch within the first {} samples; they are taken as the reference window",
              times_.size()));
      }
      if (r.launch_found && r.used < options_.stationary.min_samples) {
        if (options_.kind == ReferenceKind::kWindow)
          throw input_error(fmt::format(
              "{}: no stationary pre-launch segment found (the log seems to start in flight); "
              "give the ground pressure with --ref-pressure, --qnh with --elevation, or a "
              "fixed --ref-window DUR",
              source));
        throw input_error(fmt::format(
            "{}: no stationary pre-launch segment found to take the reference temperature "
            "from (the log seems to start in flight); give --ref-temperature or a fixed "
            "--ref-window DUR",
            source));
      }
    }
    if (window_end_ == 0)
      throw input_error(fmt::format("{}: the reference window holds no sample", source));
    w.samples = window_end_;
    w.start_ns = times_.front();
    w.end_ns = times_[window_end_ - 1];
    if (w.launch_found && window_end_ < times_.size()) w.launch_ns = times_[window_end_];
    double sum = 0.0, sum_t = 0.0;
    std::size_t n = 0, n_t = 0;
    for (std::size_t i = 0; i < window_end_; ++i) {
      if (!use[i]) continue;
      sum += pressures_[i];
      ++n;
      if (!std::isnan(temperatures_[i])) {
        sum_t += temperatures_[i];
        ++n_t;
      }
    }
    w.used = n;
    w.pressure_pa = sum / static_cast<double>(n);
    double ss = 0.0;
    for (std::size_t i = 0; i < window_end_; ++i)
      if (use[i]) ss += (pressures_[i] - w.pressure_pa) * (pressures_[i] - w.pressure_pa);
    w.pressure_sd_pa = n > 1 ? std::sqrt(ss / static_cast<double>(n - 1)) : 0.0;
    w.temperature_samples = n_t;
    w.temperature_k = n_t > 0 ? sum_t / static_cast<double>(n_t) : kMissing;
    ref.window = w;
  }

  if (options_.temperature_k) {
    ref.point.temperature_k = *options_.temperature_k;
    ref.temperature_source = "option";
  } else if (ref.window && !std::isnan(ref.window->temperature_k)) {
    ref.point.temperature_k = ref.window->temperature_k;
    ref.point.temperature_samples = static_cast<std::uint32_t>(ref.window->temperature_samples);
    ref.temperature_source = "window";
  } else if (base_ && !std::isnan(base_->mean_temperature_k())) {
    ref.point.temperature_k = base_->mean_temperature_k();
    ref.temperature_source = "base";
  } else {
    ref.point.temperature_k = constants::kT0;
    ref.temperature_source = "standard";
    if (needs_temperature_ || (options_.kind == ReferenceKind::kBase && options_.base.elevation_m))
      ref.notes.push_back(has_temperature_column_
                              ? "no air temperature in the reference window: the reference "
                                "temperature is 288.15 K (give --ref-temperature)"
                              : "no air-temperature column: the reference temperature is "
                                "288.15 K (give --ref-temperature)");
  }

  std::vector<RestSample> window_used;
  if (ref.window)
    for (std::size_t i = 0; i < window_end_; ++i)
      if (use[i]) window_used.push_back({times_[i], pressures_[i]});

  switch (options_.kind) {
    case ReferenceKind::kWindow:
      ref.point.pressure_pa = ref.window->pressure_pa;
      if (options_.drift == DriftCorrection::kLinear)
        build_drift_track(ref, window_used, source);
      else
        ref.track = ReferenceTrack::constant(ref.point.pressure_pa);
      break;
    case ReferenceKind::kPressure:
      ref.point.pressure_pa = options_.pressure_pa;
      ref.track = ReferenceTrack::constant(ref.point.pressure_pa);
      break;
    case ReferenceKind::kQnh:
      // The model measures from the window's pressure (or is offset by the
      // elevation); the pipeline applies the altimeter relation.
      ref.point.pressure_pa = ref.window ? ref.window->pressure_pa : options_.pressure_pa;
      ref.track = ReferenceTrack::constant(ref.point.pressure_pa);
      break;
    case ReferenceKind::kBase:
      build_base_track(ref, window_used, source);
      ref.point.pressure_pa = ref.track.at(times_.empty() ? base_->first_ns() : times_.front()).pressure_pa;
      break;
  }

  ref.point.datum_geopotential_m =
      options_.elevation_m ? geopotential_from_geometric(*options_.elevation_m) : kMissing;
  set_budget_inputs(ref, window_used);
  return ref;
}

void ReferenceResolver::set_budget_inputs(Reference& ref,
                                          const std::vector<RestSample>& window) const {
  // The window mean's own error: the sensor noise over sqrt(n) (the
  // detector's robust noise; the spread of the samples for a fixed window).
  double window_se = 0.0;
  if (ref.window && ref.window->used > 0) {
    const ReferenceWindow& w = *ref.window;
    const double noise = w.auto_detected ? w.noise_sigma_pa : w.pressure_sd_pa;
    window_se = noise / std::sqrt(static_cast<double>(w.used));
  }
  DriftUncertainty& d = ref.drift_uncertainty;
  if (!window.empty()) {
    RestSegment pre;
    pre.used = window;
    d.t_ref_ns = pre.mean_time_ns();
    d.at_first_row = false;
  }
  switch (options_.kind) {
    case ReferenceKind::kWindow:
      ref.sigma_ref_default_pa = window_se;
      ref.sigma_ref_default_source = "standard error of the window mean";
      ref.offset_common = true;
      if (ref.drift) {
        d.kind = DriftUncertainty::Kind::kBridge;
        d.a_ns = ref.drift->pre_time_ns;
        d.b_ns = ref.drift->post_time_ns;
      }
      break;
    case ReferenceKind::kPressure:
      ref.sigma_ref_default_pa = 10.0;
      ref.sigma_ref_default_source = "0.1 hPa, an external reference pressure";
      ref.offset_common = false;
      break;
    case ReferenceKind::kQnh:
      ref.sigma_ref_default_pa = 10.0;
      ref.sigma_ref_default_source = "0.1 hPa, the altimeter setting";
      // height_m from the window's altitude: the sensor's offset cancels
      // there; from --elevation it does not.
      ref.offset_common = !options_.elevation_m.has_value();
      break;
    case ReferenceKind::kBase: {
      const bool tie = ref.base && ref.base->tie;
      const double base_noise = base_ ? base_->noise_sigma_pa() : 0.0;
      // The tie's mean of (flight - base) over the window, or the base's
      // absolute calibration without it.
      ref.sigma_ref_default_pa =
          tie ? std::hypot(window_se, base_noise / std::sqrt(static_cast<double>(
                                                      std::max<std::size_t>(ref.base->tie_samples, 1))))
              : 10.0;
      ref.sigma_ref_default_source =
          tie ? "standard error of the tie over the window" : "0.1 hPa, the base's calibration";
      ref.offset_common = tie;
      d.kind = DriftUncertainty::Kind::kBase;
      d.base_noise_pa = base_noise;
      break;
    }
  }
}

double DriftUncertainty::sigma_pa(TimeNs t, double outside_s, double rate) const {
  switch (kind) {
    case Kind::kSinceReference:
      return rate * std::fabs(static_cast<double>(t - t_ref_ns)) * 1e-9;
    case Kind::kBridge: {
      const double ta = static_cast<double>(t - a_ns) * 1e-9;
      const double tb = static_cast<double>(b_ns - t) * 1e-9;
      if (ta <= 0.0) return rate * -ta;
      if (tb <= 0.0) return rate * -tb;
      return rate * ta * tb / (ta + tb);
    }
    case Kind::kBase:
      return std::hypot(base_noise_pa, rate * outside_s);
  }
  return 0.0;
}

}  // namespace baroz

namespace baroz {
namespace {

/// Factor moving a pressure measured `dz_m` above a level down to it, by the
/// isothermal hypsometric equation at temperature `t_k`:
/// p_level = p exp(g0 dz / (R T)) (docs/reference.md).
double hypsometric_factor(double dz_m, double t_k) {
  return std::exp(constants::kG0 * dz_m / (constants::kRAir * t_k));
}

}  // namespace

void ReferenceResolver::build_base_track(Reference& ref, const std::vector<RestSample>& window,
                                         std::string_view source) {
  if (!base_) throw input_error(fmt::format("{}: no base-station log was read", source));
  BaseReport b = base_report_;
  const BaseOptions& bo = options_.base;
  b.tie = bo.tie;
  b.outside = bo.outside;
  b.launch_elevation_m = options_.elevation_m.value_or(0.0);
  b.move_temperature_k = ref.point.temperature_k;
  if (bo.elevation_m) {
    b.elevation_m = *bo.elevation_m;
    b.scale = hypsometric_factor(b.elevation_m - b.launch_elevation_m, ref.point.temperature_k);
    ref.notes.push_back(fmt::format(
        "base station {:+.2f} m from the launch point{}: its pressure is moved to the launch "
        "level hypsometrically at {:.2f} K (factor {:.6f})",
        b.elevation_m - b.launch_elevation_m,
        options_.elevation_m ? "" : " (no --elevation: --base-elevation is read as height above "
                                    "the launch point)",
        ref.point.temperature_k, b.scale));
  }

  if (bo.offset_s) {
    b.offset_s = *bo.offset_s;
    b.offset_source = "option";
  } else if (bo.offset_auto) {
    std::vector<std::span<const RestSample>> segments;
    segments.emplace_back(window);
    if (landing_ && landing_->found) segments.emplace_back(landing_->used);
    const ClockOffsetEstimate est =
        estimate_clock_offset(segments, *base_, b.scale, bo.offset_search);
    if (!est.ok)
      throw input_error(fmt::format("{}: --base-offset auto: cannot determine the base clock "
                                    "offset: {}; give --base-offset SECONDS",
                                    source, est.why));
    b.offset_s = est.offset_s;
    b.offset_source = "auto";
    b.offset_estimate = est;
    ref.notes.push_back(fmt::format(
        "base clock offset (auto): {:+.2f} s +/- {:.2f} s (1 sigma) from {} resting samples in {} "
        "segment{}{}, residual rms {:.3f} hPa",
        est.offset_s, est.sigma_s, est.samples, est.segments, est.segments == 1 ? "" : "s",
        est.segments == 1 ? " (pre-launch only)" : " (pre-launch and post-landing)",
        est.rms_pa / 100.0));
  } else {
    b.offset_s = 0.0;
    b.offset_source = "default";
  }

  const auto shift = static_cast<TimeNs>(std::llround(b.offset_s * 1e9));
  if (bo.tie) {
    double sum = 0.0;
    std::size_t n = 0;
    for (const RestSample& s : window) {
      const BaseValue v = base_->at(s.time_ns - shift);
      if (!v.inside) continue;
      sum += s.pressure_pa - b.scale * v.pressure_pa;
      ++n;
    }
    if (n == 0) {
      // Times from 2001-09-09 on are dates (the decoder's rule for epoch numbers).
      auto when = [](TimeNs t) {
        return t >= 1'000'000'000'000'000'000 ? format_rfc3339_utc(t)
                                              : fmt::format("{:.1f} s", static_cast<double>(t) * 1e-9);
      };
      throw input_error(fmt::format(
          "{}: the base log ({} to {} on the flight's clock, with --base-offset {:+.1f} s) does "
          "not cover the reference window ({} to {}); check --base-offset, or give --no-tie",
          source, when(base_->first_ns() + shift), when(base_->last_ns() + shift), b.offset_s,
          when(window.empty() ? 0 : window.front().time_ns),
          when(window.empty() ? 0 : window.back().time_ns)));
    }
    b.tie_pa = sum / static_cast<double>(n);
    b.tie_samples = n;
    ref.notes.push_back(fmt::format(
        "flight sensor tied to the base over the reference window: offset {:+.3f} hPa from {} "
        "samples (--no-tie to keep the base's absolute pressure)",
        b.tie_pa / 100.0, n));
  }
  ref.notes.push_back(fmt::format(
      "reference from the base station {} ({} samples every {:.1f} s, clock offset {:+.2f} s "
      "({})); samples outside its span are flagged no_base and {}",
      b.path, b.rows_used, b.interval_s, b.offset_s, b.offset_source,
      bo.outside == OutsideBasePolicy::kReject ? "rejected"
                                               : "hold its nearest value with a widened band"));
  ref.track = ReferenceTrack::base(base_, b.offset_s, b.scale, b.tie_pa);
  ref.base = std::move(b);
}

void ReferenceResolver::build_drift_track(Reference& ref, const std::vector<RestSample>& window,
                                          std::string_view source) {
  if (!landing_)
    throw input_error(fmt::format(
        "{}: --drift linear needs the post-landing segment, found by reading the log twice: "
        "give a file, not a stream",
        source));
  const RestSegment& land = *landing_;
  if (!land.found || land.used.empty() || !ref.window || !ref.window->launch_found)
    throw input_error(fmt::format(
        "{}: --drift linear: no {} found ({}; the log must rest on the ground before the "
        "launch and after the landing)",
        source,
        ref.window && ref.window->launch_found ? "stationary post-landing segment"
                                               : "flight between two resting segments",
        land.why.empty() ? std::string("no launch in the log") : land.why));
  if (land.start_ns <= ref.window->launch_ns)
    throw input_error(fmt::format("{}: --drift linear: the post-landing segment starts before "
                                  "the launch",
                                  source));
  DriftReport d;
  RestSegment pre;
  pre.used = window;
  d.pre_time_ns = pre.mean_time_ns();
  d.pre_pa = ref.window->pressure_pa;
  d.landing = land;
  d.landing.used.clear();
  d.landing.used.shrink_to_fit();
  d.post_time_ns = land.mean_time_ns();
  d.post_pa = land.pressure_pa;
  d.landing_height_given = options_.landing_height_m.has_value();
  d.landing_height_m = options_.landing_height_m.value_or(0.0);
  d.post_launch_pa = d.post_pa * hypsometric_factor(d.landing_height_m, ref.point.temperature_k);
  const double dt_s = static_cast<double>(d.post_time_ns - d.pre_time_ns) * 1e-9;
  d.rate_pa_per_s = (d.post_launch_pa - d.pre_pa) / dt_s;
  const double rate_hpa_h = d.rate_pa_per_s * 3600.0 / 100.0;
  ref.notes.push_back(fmt::format(
      "drift linear: ground {:.2f} hPa before the launch, {:.2f} hPa after the landing ({:.0f} s "
      "later, {} samples{}): drift {:+.3f} hPa/h",
      d.pre_pa / 100.0, d.post_launch_pa / 100.0, dt_s, land.used.size(),
      d.landing_height_given
          ? fmt::format(", landed {:+.2f} m from the launch point (--landing-height)",
                        d.landing_height_m)
          : std::string(", landing taken at the launch level: give --landing-height H if it "
                        "landed elsewhere"),
      rate_hpa_h));
  // Common practice: a synoptic tendency of 3 hPa in 3 h already counts as
  // rapid; 3 hPa in one hour more likely means a landing at another height.
  if (std::fabs(rate_hpa_h) > 3.0)
    ref.notes.push_back(fmt::format(
        "drift linear: {:+.2f} hPa/h is unusually fast for the weather; if the flight landed "
        "at another height than it started, give --landing-height H",
        rate_hpa_h));
  ref.track = ReferenceTrack::linear(d.pre_time_ns, d.pre_pa, d.post_time_ns, d.post_launch_pa);
  ref.drift = std::move(d);
}

}  // namespace baroz
