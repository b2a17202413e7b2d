#include "baroz/reference/reference_track.hpp"

#include <cmath>

namespace baroz {

ReferenceTrack ReferenceTrack::constant(double pressure_pa) {
  ReferenceTrack t;
  t.kind_ = Kind::kConstant;
  t.p0_pa_ = pressure_pa;
  return t;
}

ReferenceTrack ReferenceTrack::linear(TimeNs t0, double p0, TimeNs t1, double p1) {
  ReferenceTrack t;
  t.kind_ = Kind::kLinear;
  t.p0_pa_ = p0;
  t.t0_ns_ = t0;
  t.slope_pa_per_s_ = t1 != t0 ? (p1 - p0) / (static_cast<double>(t1 - t0) * 1e-9) : 0.0;
  return t;
}

ReferenceTrack ReferenceTrack::base(std::shared_ptr<const BaseSeries> base, double offset_s,
                                    double scale, double tie_pa) {
  ReferenceTrack t;
  t.kind_ = Kind::kBase;
  t.base_ = std::move(base);
  t.base_shift_ns_ = static_cast<TimeNs>(std::llround(offset_s * 1e9));
  t.scale_ = scale;
  t.tie_pa_ = tie_pa;
  return t;
}

void ReferenceTrack::set_correction(double offset_pa, double rate_pa_per_s, TimeNs centre_ns) {
  offset_pa_ = offset_pa;
  rate_pa_per_s_ = rate_pa_per_s;
  centre_ns_ = centre_ns;
}

TrackValue ReferenceTrack::at(TimeNs t) const {
  TrackValue v;
  switch (kind_) {
    case Kind::kConstant: v.pressure_pa = p0_pa_; break;
    case Kind::kLinear:
      v.pressure_pa = p0_pa_ + slope_pa_per_s_ * static_cast<double>(t - t0_ns_) * 1e-9;
      break;
    case Kind::kBase: {
      // --base-offset S adds S to the base's times: flight time t is base time t - S.
      const BaseValue b = base_->at(t - base_shift_ns_);
      v.pressure_pa = scale_ * b.pressure_pa + tie_pa_;
      v.outside_base = !b.inside;
      v.outside_s = b.outside_s;
      break;
    }
  }
  v.pressure_pa += offset_pa_ + rate_pa_per_s_ * static_cast<double>(t - centre_ns_) * 1e-9;
  return v;
}

}  // namespace baroz
