// Detection of the stationary pre-launch segment of a log: the samples before
// the pressure departs, for good, from its resting value.
//
// Method (documented in docs/reference.md): a sample departs when it differs
// from the mean of the resting samples of the last `baseline_span_s` by more
// than the threshold delta = max(min_departure_pa, noise_multiple * sigma),
// sigma the sensor noise estimated robustly from first differences
// (1.4826 * MAD / sqrt 2). A departure is a launch when it lasts
// `sustain_s` with every sample beyond delta/2 on the same side; a shorter
// excursion (the payload lifted by hand) is a transient and its samples are
// left out of the mean. At the launch the window is cut back to the last
// sample that had not yet started to move (within max(2 sigma, delta/5)).
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "baroz/core/sample.hpp"

namespace baroz {

struct StationaryOptions {
  double min_departure_pa = 25.0;  ///< 0.25 hPa, about 2 m near the ground
  double noise_multiple = 6.0;
  double sustain_s = 5.0;
  double baseline_span_s = 60.0;
  std::size_t min_samples = 3;     ///< fewer resting samples: "starts in flight"
};

struct StationaryResult {
  bool decided = false;         ///< a launch was confirmed (or finish() was called)
  bool launch_found = false;
  std::size_t window_end = 0;   ///< samples [0, window_end) are the resting segment
  std::size_t used = 0;         ///< resting samples used for the mean (transients left out)
  double noise_sigma_pa = 0.0;  ///< estimated sensor noise [Pa]
  double threshold_pa = 0.0;    ///< departure threshold delta [Pa]
};

class StationaryDetector {
 public:
  explicit StationaryDetector(const StationaryOptions& options) : options_(options) {}
  /// Feeds the next sample; returns true once the launch is confirmed.
  bool feed(TimeNs time_ns, double pressure_pa);
  /// Ends detection without a launch: every sample fed so far is resting.
  void finish();
  const StationaryResult& result() const { return result_; }
  /// Whether sample i (i < window_end) counts towards the resting mean.
  bool used(std::size_t i) const { return included_[i] != 0; }
  std::size_t size() const { return times_.size(); }

 private:
  double baseline() const;
  double threshold();
  void include(std::size_t i, bool use);
  void update_noise();

  StationaryOptions options_;
  StationaryResult result_;
  std::vector<TimeNs> times_;
  std::vector<double> pressures_;
  std::vector<unsigned char> included_;
  std::size_t window_end_ = 0;    // samples before this are decided resting
  std::size_t span_begin_ = 0;    // first sample of the baseline span
  double span_sum_ = 0.0;
  double last_resting_pa_ = 0.0;
  std::size_t span_count_ = 0;
  bool candidate_ = false;
  std::size_t candidate_index_ = 0;
  int candidate_sign_ = 0;
  double sigma_ = 0.0;
  std::size_t noise_updated_at_ = 0;
};

}  // namespace baroz
