#include "baroz/reference/reference.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"
#include "baroz/core/error.hpp"
#include "baroz/models/geopotential.hpp"

namespace baroz {

std::string_view reference_kind_name(ReferenceKind kind) {
  switch (kind) {
    case ReferenceKind::kPressure: return "pressure";
    case ReferenceKind::kQnh: return "qnh";
    case ReferenceKind::kWindow: return "window";
  }
  return "window";
}

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

  if (needs_window_) {
    ReferenceWindow w;
    std::vector<unsigned char> use(times_.size(), 1);
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

  switch (options_.kind) {
    case ReferenceKind::kWindow: ref.point.pressure_pa = ref.window->pressure_pa; break;
    case ReferenceKind::kPressure: ref.point.pressure_pa = options_.pressure_pa; break;
    case ReferenceKind::kQnh:
      // The model measures from the window's pressure (or is offset by the
      // elevation); the pipeline applies the altimeter relation.
      ref.point.pressure_pa = ref.window ? ref.window->pressure_pa : options_.pressure_pa;
      break;
  }

  if (options_.temperature_k) {
    ref.point.temperature_k = *options_.temperature_k;
    ref.temperature_source = "option";
  } else if (ref.window && !std::isnan(ref.window->temperature_k)) {
    ref.point.temperature_k = ref.window->temperature_k;
    ref.temperature_source = "window";
  } else {
    ref.point.temperature_k = constants::kT0;
    ref.temperature_source = "standard";
    if (needs_temperature_)
      ref.notes.push_back(has_temperature_column_
                              ? "no air temperature in the reference window: the reference "
                                "temperature is 288.15 K (give --ref-temperature)"
                              : "no air-temperature column: the reference temperature is "
                                "288.15 K (give --ref-temperature)");
  }

  ref.point.datum_geopotential_m =
      options_.elevation_m ? geopotential_from_geometric(*options_.elevation_m) : kMissing;
  return ref;
}

}  // namespace baroz
