// Detection of the stationary post-landing segment of a log: the pre-launch
// detector (stationary_detector.hpp) run backwards in time over the log's
// tail, so that "launch" read backwards is the landing.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "baroz/core/sample.hpp"
#include "baroz/reference/stationary_detector.hpp"

namespace baroz {

struct RestSample {
  TimeNs time_ns = 0;
  double pressure_pa = kMissing;
};

/// A resting segment (pre-launch or post-landing) with the samples averaged.
struct RestSegment {
  bool found = false;            ///< a rest after a flight was found
  std::string why;               ///< when !found: why not
  TimeNs start_ns = 0, end_ns = 0;
  std::size_t samples = 0;       ///< samples in the segment
  double pressure_pa = kMissing; ///< mean of the samples used (transients left out)
  double pressure_sd_pa = kMissing;
  std::vector<RestSample> used;  ///< the samples averaged, in time order
  /// Mean time of the samples used: where a linear drift passes through the mean.
  TimeNs mean_time_ns() const;
};

class LandingDetector {
 public:
  static constexpr double kMinRestS = 10.0;
  /// 10 hPa/h: faster than all but the most violent weather (explosive
  /// cyclones deepen by ~1 hPa/h over a day; common practice).
  static constexpr double kMaxRestRatePaPerS = 1000.0 / 3600.0;
  /// Keeps the last `capacity` samples (the memory bound: a log that rests
  /// longer than that after landing uses the last `capacity` samples).
  LandingDetector(const StationaryOptions& options, std::size_t capacity);
  void feed(TimeNs time_ns, double pressure_pa);
  /// The post-landing segment. found = false when the whole tail kept is
  /// at rest (no flight in it, or a rest longer than the capacity), or when
  /// the "rest" at the end is too short (under kMinRestS) or still moving
  /// (its pressure trend beyond kMaxRestRatePaPerS: a log that ends in a
  /// slow climb or descent).
  RestSegment finish() const;
  /// Whether the ring overflowed (samples were dropped from its front).
  bool overflowed() const { return total_ > ring_.size(); }

 private:
  StationaryOptions options_;
  std::vector<RestSample> ring_;
  std::size_t capacity_ = 2;
  std::size_t head_ = 0;
  std::size_t total_ = 0;
};

}  // namespace baroz
