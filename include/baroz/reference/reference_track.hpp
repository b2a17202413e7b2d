// p_ref(t): the reference pressure at each sample's time, as the reference
// manager decided it. One of
//   constant   p_ref = p0                        (--ref-pressure, --ref-window)
//   linear     p_ref = p0 + (p1 - p0)(t - t0)/(t1 - t0)        (--drift linear)
//   base       p_ref = k p_base(t - S) + c                     (--ref-base)
// (S the base clock offset, k the factor moving the base's pressure to the
// launch level, c the tie of the flight sensor to the base), plus an optional
// correction a + b (t - tc) fitted to checkpoints.
#pragma once

#include <memory>

#include "baroz/core/sample.hpp"
#include "baroz/reference/base_series.hpp"

namespace baroz {

struct TrackValue {
  double pressure_pa = kMissing;
  bool outside_base = false;  ///< base track: the time lies outside the base's span
  double outside_s = 0.0;     ///< how far outside [s] (the nearest base value is held)
};

class ReferenceTrack {
 public:
  ReferenceTrack() = default;
  static ReferenceTrack constant(double pressure_pa);
  static ReferenceTrack linear(TimeNs t0_ns, double p0_pa, TimeNs t1_ns, double p1_pa);
  static ReferenceTrack base(std::shared_ptr<const BaseSeries> base, double offset_s,
                             double scale, double tie_pa);

  /// Adds a + b (t - tc) on top (checkpoint fit). Replaces an earlier correction.
  void set_correction(double offset_pa, double rate_pa_per_s, TimeNs centre_ns);

  TrackValue at(TimeNs t_ns) const;
  bool is_constant() const { return kind_ == Kind::kConstant && rate_pa_per_s_ == 0.0; }

 private:
  enum class Kind { kConstant, kLinear, kBase };
  Kind kind_ = Kind::kConstant;
  double p0_pa_ = kMissing;
  TimeNs t0_ns_ = 0;
  double slope_pa_per_s_ = 0.0;  // linear
  std::shared_ptr<const BaseSeries> base_;
  TimeNs base_shift_ns_ = 0;
  double scale_ = 1.0;
  double tie_pa_ = 0.0;
  double offset_pa_ = 0.0;       // correction
  double rate_pa_per_s_ = 0.0;
  TimeNs centre_ns_ = 0;
};

}  // namespace baroz
