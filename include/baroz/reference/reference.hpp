// The reference manager stage: the ground reference the heights are measured
// from (p_ref, T_ref, datum), chosen by one of --ref-pressure, --qnh or
// --ref-window DUR|auto (the default).
#pragma once

#include <cstddef>
#include <optional>
#include <string>
#include <vector>

#include "baroz/core/sample.hpp"
#include "baroz/models/height_model.hpp"
#include "baroz/reference/stationary_detector.hpp"

namespace baroz {

enum class ReferenceKind { kPressure, kQnh, kWindow };
std::string_view reference_kind_name(ReferenceKind kind);  ///< "pressure", "qnh", "window"

struct ReferenceOptions {
  ReferenceKind kind = ReferenceKind::kWindow;
  double pressure_pa = kMissing;             ///< --ref-pressure or --qnh value [Pa]
  std::optional<double> window_s;            ///< --ref-window DUR [s]; nullopt = auto
  std::optional<double> temperature_k;       ///< --ref-temperature [K]
  std::optional<double> elevation_m;         ///< --elevation, geometric [m] above MSL
  StationaryOptions stationary;
  /// At most this many samples are held back while looking for the launch;
  /// past it the samples seen so far are taken as the window (memory bound).
  std::size_t max_window_samples = 500000;
};

/// The resting segment the reference was taken from.
struct ReferenceWindow {
  bool auto_detected = false;
  bool launch_found = false;
  TimeNs start_ns = 0;          ///< first sample of the window
  TimeNs end_ns = 0;            ///< last sample of the window
  TimeNs launch_ns = 0;         ///< first sample after the window (if launch_found)
  std::size_t samples = 0;      ///< samples in the window
  std::size_t used = 0;         ///< samples averaged (transients left out)
  double pressure_pa = kMissing;     ///< mean pressure [Pa]
  double pressure_sd_pa = kMissing;  ///< standard deviation of the samples [Pa]
  double temperature_k = kMissing;   ///< mean air temperature [K], NaN without one
  std::size_t temperature_samples = 0;
  double noise_sigma_pa = kMissing;  ///< (auto) estimated sensor noise [Pa]
  double threshold_pa = kMissing;    ///< (auto) departure threshold [Pa]
};

struct Reference {
  ReferenceKind kind = ReferenceKind::kWindow;
  ReferencePoint point;                 ///< what the model measures from
  double qnh_pa = kMissing;             ///< --qnh value
  std::optional<ReferenceWindow> window;
  std::string temperature_source;       ///< "option", "window" or "standard" (288.15 K)
  std::vector<std::string> notes;       ///< for stderr and the manifest
};

/// Builds the reference from the first samples of a log.
class ReferenceResolver {
 public:
  /// `needs_temperature`: the model needs T_ref (isothermal);
  /// `has_temperature_column`: the log has an air-temperature column.
  ReferenceResolver(const ReferenceOptions& options, bool needs_temperature,
                    bool has_temperature_column);

  /// Whether samples must be held back until the window is known.
  bool needs_window() const { return needs_window_; }
  /// Feeds the next accepted sample (in order); true once the window is known
  /// and feeding may stop (the sample just fed is then after the window,
  /// unless the window is the whole log).
  bool feed(const Sample& sample);
  /// Builds the reference from what was fed. `end_of_input`: the log ended
  /// (a window without a launch is then the whole log). Throws baroz::Error
  /// (input) when no reference can be formed, e.g. a log that starts in flight.
  Reference resolve(bool end_of_input, std::string_view source);
  /// After resolve(): whether fed sample i lies in the window.
  bool in_window(std::size_t i) const { return i < window_end_; }

 private:
  ReferenceOptions options_;
  bool needs_temperature_ = false;
  bool has_temperature_column_ = false;
  bool needs_window_ = false;
  StationaryDetector detector_;
  std::vector<double> temperatures_;
  std::vector<TimeNs> times_;
  std::vector<double> pressures_;
  bool done_ = false;
  bool capped_ = false;
  std::size_t window_end_ = 0;
};

}  // namespace baroz
