// The reference manager stage: the ground reference the heights are measured
// from (p_ref(t), T_ref, datum), chosen by one of --ref-pressure, --qnh,
// --ref-window DUR|auto (the default) or --ref-base FILE, optionally with a
// linear drift correction (--drift linear) and checkpoints. The result is a
// Reference: a ReferenceTrack giving p_ref at each sample's time, and a
// record of every choice made, for stderr and the manifest.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "baroz/core/sample.hpp"
#include "baroz/models/height_model.hpp"
#include "baroz/reference/base_series.hpp"
#include "baroz/reference/checkpoint_fit.hpp"
#include "baroz/reference/clock_offset.hpp"
#include "baroz/reference/gnss_fit.hpp"
#include "baroz/reference/landing_detector.hpp"
#include "baroz/reference/reference_track.hpp"
#include "baroz/reference/stationary_detector.hpp"

namespace baroz {

enum class ReferenceKind { kPressure, kQnh, kWindow, kBase };
/// "pressure", "qnh", "window", "base"
std::string_view reference_kind_name(ReferenceKind kind);

/// Samples outside the base log's time span (flag no_base): --outside-base.
enum class OutsideBasePolicy { kHold, kReject };
std::string_view outside_base_policy_name(OutsideBasePolicy policy);  ///< "hold", "reject"

struct BaseOptions {
  std::string file;                   ///< --ref-base FILE
  std::optional<double> offset_s;     ///< --base-offset SECONDS (nullopt with auto)
  bool offset_auto = false;           ///< --base-offset auto
  std::optional<double> elevation_m;  ///< --base-elevation (same datum as --elevation)
  bool tie = true;                    ///< tie the flight sensor to the base (not --no-tie)
  OutsideBasePolicy outside = OutsideBasePolicy::kHold;
  ClockOffsetOptions offset_search;
};

enum class DriftCorrection { kNone, kLinear };

struct ReferenceOptions {
  ReferenceKind kind = ReferenceKind::kWindow;
  double pressure_pa = kMissing;             ///< --ref-pressure or --qnh value [Pa]
  std::optional<double> window_s;            ///< --ref-window DUR [s]; nullopt = auto
  std::optional<double> temperature_k;       ///< --ref-temperature [K]
  std::optional<double> elevation_m;         ///< --elevation, geometric [m] above MSL
  BaseOptions base;                          ///< kind == kBase
  DriftCorrection drift = DriftCorrection::kNone;  ///< --drift
  std::optional<double> landing_height_m;    ///< --landing-height (drift linear)
  std::vector<Checkpoint> checkpoints;       ///< --checkpoint TIME=HEIGHT
  bool gnss_datum = false;                   ///< --ref-gnss
  double gnss_below_m = 1000.0;              ///< --gnss-below: the low part for --ref-gnss
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

/// What the reference manager did with a base-station log.
struct BaseReport {
  std::string path, sha256;
  std::uint64_t rows_read = 0, rows_used = 0, rows_rejected = 0;
  bool absolute_time = false;
  TimeNs first_ns = 0, last_ns = 0;   ///< the base's span, on its own clock
  double interval_s = 0.0;            ///< median interval
  double offset_s = 0.0;              ///< added to the base's times
  std::string offset_source;          ///< "default" (0), "option" or "auto"
  std::optional<ClockOffsetEstimate> offset_estimate;  ///< with auto
  double elevation_m = kMissing;      ///< --base-elevation
  double launch_elevation_m = 0.0;    ///< the launch point in the same datum
  double scale = 1.0;                 ///< base pressure -> launch level
  double move_temperature_k = kMissing;  ///< temperature of the hypsometric move
  bool tie = true;
  double tie_pa = 0.0;                ///< flight sensor minus (scaled) base, mean over the window
  std::size_t tie_samples = 0;
  OutsideBasePolicy outside = OutsideBasePolicy::kHold;
};

/// What --drift linear found.
struct DriftReport {
  TimeNs pre_time_ns = 0;             ///< mean time of the pre-launch samples used
  double pre_pa = kMissing;           ///< pre-launch ground pressure
  RestSegment landing;                ///< post-landing segment (without its samples)
  TimeNs post_time_ns = 0;            ///< mean time of the post-landing samples used
  double post_pa = kMissing;          ///< measured post-landing pressure
  double post_launch_pa = kMissing;   ///< moved to the launch level
  double landing_height_m = 0.0;      ///< landing above the launch point
  bool landing_height_given = false;
  double rate_pa_per_s = 0.0;         ///< the drift
};

/// How the error of p_ref from the ground pressure's drift grows with time
/// (the budget's drift term; docs/uncertainty.md):
///   since-reference  rate |t - t_ref|                 (window, --ref-pressure, --qnh)
///   bridge           rate (t - a)(b - t)/(b - a)      (--drift linear, between the rests;
///                    rate times the distance beyond them)
///   base             the base's own noise, plus rate times the time beyond its span
struct DriftUncertainty {
  enum class Kind { kSinceReference, kBridge, kBase };
  Kind kind = Kind::kSinceReference;
  bool at_first_row = true;    ///< since-reference: t_ref is the log's first row
  TimeNs t_ref_ns = 0;
  TimeNs a_ns = 0, b_ns = 0;   ///< bridge
  double base_noise_pa = 0.0;  ///< base
  /// 1-sigma error of p_ref at time t [Pa]; `outside_s` as TrackValue gives
  /// it, `rate` the drift sigma [Pa/s].
  double sigma_pa(TimeNs t_ns, double outside_s, double rate_pa_per_s) const;
};

struct Reference {
  ReferenceKind kind = ReferenceKind::kWindow;
  ReferencePoint point;                 ///< what the model measures from (p_ref at the window)
  ReferenceTrack track;                 ///< p_ref(t)
  double qnh_pa = kMissing;             ///< --qnh value
  std::optional<ReferenceWindow> window;
  std::string temperature_source;       ///< "option", "window", "base" or "standard" (288.15 K)
  std::optional<BaseReport> base;
  std::optional<DriftReport> drift;
  std::vector<CheckpointObservation> checkpoint_observations;
  std::optional<CheckpointFit> checkpoint_fit;
  std::optional<GnssFit> gnss;
  /// For the budget: sigma_ref when not given (0.1 hPa for an external
  /// pressure, the standard error of the window mean for one from the log),
  /// whether the sensor's offset is common to the reference, and the drift.
  double sigma_ref_default_pa = 10.0;
  std::string sigma_ref_default_source;
  bool offset_common = false;
  DriftUncertainty drift_uncertainty;
  std::vector<std::string> notes;       ///< for stderr and the manifest
};

/// Builds the reference from the first samples of a log.
class ReferenceResolver {
 public:
  /// `needs_temperature`: the model needs T_ref (isothermal);
  /// `has_temperature_column`: the log has an air-temperature column.
  ReferenceResolver(const ReferenceOptions& options, bool needs_temperature,
                    bool has_temperature_column);

  /// The base-station log (kind kBase), read beforehand; `report` carries
  /// what its reading found (path, checksum, counts).
  void set_base(std::shared_ptr<const BaseSeries> base, BaseReport report);
  /// The post-landing segment found by a first pass over the log (for
  /// --drift linear and --base-offset auto).
  void set_landing(RestSegment landing);

  /// Whether samples must be held back until the window is known.
  bool needs_window() const { return needs_window_; }
  /// Feeds the next accepted sample (in order); true once the window is known
  /// and feeding may stop (the sample just fed is then after the window,
  /// unless the window is the whole log).
  bool feed(const Sample& sample);
  /// Builds the reference from what was fed. `end_of_input`: the log ended
  /// (a window without a launch is then the whole log). Throws baroz::Error
  /// (input) when no reference can be formed, e.g. a log that starts in flight.
  /// Builds the track of kind window, pressure, qnh or base, with the drift
  /// correction; checkpoints and GNSS are fitted afterwards by the caller
  /// (they need the model).
  Reference resolve(bool end_of_input, std::string_view source);
  /// After resolve(): whether fed sample i lies in the window.
  bool in_window(std::size_t i) const { return i < window_end_; }

 private:
  ReferenceOptions options_;
  bool needs_temperature_ = false;
  bool has_temperature_column_ = false;
  bool needs_window_ = false;
  void build_base_track(Reference& ref, const std::vector<RestSample>& window,
                        std::string_view source);
  void build_drift_track(Reference& ref, const std::vector<RestSample>& window,
                         std::string_view source);
  void set_budget_inputs(Reference& ref, const std::vector<RestSample>& window) const;

  StationaryDetector detector_;
  std::shared_ptr<const BaseSeries> base_;
  BaseReport base_report_;
  std::optional<RestSegment> landing_;
  std::vector<double> temperatures_;
  std::vector<TimeNs> times_;
  std::vector<double> pressures_;
  bool done_ = false;
  bool capped_ = false;
  std::size_t window_end_ = 0;
};

}  // namespace baroz
