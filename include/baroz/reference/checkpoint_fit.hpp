// Checkpoints (`--checkpoint TIME=HEIGHT`, repeatable): known heights above
// the launch point at known times (a rooftop, a surveyed mark). The reference
// pressure is corrected by a least-squares fit of an offset (one checkpoint)
// or an offset and a linear drift (two or more) so that the model's heights
// pass through them; the residuals show how well they agree.
#pragma once

#include <cstddef>
#include <functional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/core/sample.hpp"

namespace baroz {

struct Checkpoint {
  std::string text;        ///< as given, for messages and the manifest
  bool absolute = false;   ///< TIME was an RFC 3339 time on the log's clock
  TimeNs time_ns = 0;      ///< absolute: ns since the epoch; else elapsed ns since the first row
  double height_m = 0.0;   ///< known geometric height above the launch point [m]
};

/// Parses "TIME=HEIGHT". TIME is an RFC 3339 time (the log's clock; without a
/// zone it takes `default_offset_s`) or elapsed seconds since the log's first
/// accepted row as in the elapsed_s column (bare seconds or a duration: 600,
/// 600s, 10min). HEIGHT is a length (bare metres, or 12.5m, 41ft). Throws
/// baroz::Error (usage).
Checkpoint parse_checkpoint(std::string_view text, int default_offset_s);

/// The log at a checkpoint's time: pressure and temperature interpolated
/// linearly between the two accepted samples around it.
struct CheckpointObservation {
  TimeNs time_ns = 0;               ///< on the log's clock
  double pressure_pa = kMissing;
  double temperature_k = kMissing;
};

struct CheckpointFit {
  std::size_t parameters = 0;       ///< 1: offset; 2: offset and drift
  double offset_pa = 0.0;           ///< correction of p_ref at centre_ns [Pa]
  double rate_pa_per_s = 0.0;       ///< drift of the correction [Pa/s]
  TimeNs centre_ns = 0;             ///< mean time of the checkpoints
  std::vector<double> fitted_m;     ///< height of each checkpoint after the fit [m]
  std::vector<double> residual_m;   ///< known minus fitted height [m]
  double rms_m = 0.0;               ///< rms of the residuals [m]
  std::string note;                 ///< e.g. why the drift was not fitted
};

/// Height of checkpoint i with the reference pressure at its time raised by
/// `delta_pa`; returns {height [m], d height / d p_ref [m/Pa]}.
using CheckpointHeight = std::function<std::pair<double, double>(std::size_t i, double delta_pa)>;

/// Gauss-Newton least squares (the model is nearly linear in p_ref; a few
/// iterations converge to machine precision). Throws baroz::Error (input)
/// when the model gives no height at a checkpoint.
CheckpointFit fit_checkpoints(std::span<const Checkpoint> checkpoints,
                              std::span<const CheckpointObservation> observations,
                              const CheckpointHeight& height);

}  // namespace baroz
