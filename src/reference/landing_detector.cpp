#include "baroz/reference/landing_detector.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace baroz {

TimeNs RestSegment::mean_time_ns() const {
  if (used.empty()) return start_ns;
  // Mean of offsets from the first time (no overflow of int64 sums).
  double sum = 0.0;
  for (const auto& s : used) sum += static_cast<double>(s.time_ns - used.front().time_ns);
  return used.front().time_ns + static_cast<TimeNs>(std::llround(sum / static_cast<double>(used.size())));
}

LandingDetector::LandingDetector(const StationaryOptions& options, std::size_t capacity)
    : options_(options) {
  ring_.reserve(std::min<std::size_t>(capacity, 4096));
  capacity_ = std::max<std::size_t>(capacity, 2);
}

void LandingDetector::feed(TimeNs t, double p) {
  ++total_;
  if (ring_.size() < capacity_) {
    ring_.push_back({t, p});
    return;
  }
  ring_[head_] = {t, p};
  head_ = (head_ + 1) % ring_.size();
}

RestSegment LandingDetector::finish() const {
  RestSegment seg;
  const std::size_t n = ring_.size();
  if (n == 0) return seg;
  auto at = [&](std::size_t k) -> const RestSample& { return ring_[(head_ + k) % n]; };
  // Backwards in time: feed -t so that the detector sees increasing times.
  StationaryDetector det(options_);
  for (std::size_t k = n; k-- > 0;)
    if (det.feed(-at(k).time_ns, at(k).pressure_pa)) break;
  if (!det.result().decided) det.finish();
  const StationaryResult& r = det.result();
  seg.found = r.launch_found;
  if (!r.launch_found) seg.why = "the log's tail is at rest throughout (no flight before it)";
  seg.samples = r.window_end;
  if (r.window_end == 0) return seg;
  // Detector index i is ring position n - 1 - i.
  for (std::size_t i = r.window_end; i-- > 0;) {
    if (!det.used(i)) continue;
    seg.used.push_back(at(n - 1 - i));
  }
  seg.start_ns = at(n - r.window_end).time_ns;
  seg.end_ns = at(n - 1).time_ns;
  double sum = 0.0;
  for (const auto& s : seg.used) sum += s.pressure_pa;
  seg.pressure_pa = sum / static_cast<double>(seg.used.size());
  double ss = 0.0;
  for (const auto& s : seg.used) ss += (s.pressure_pa - seg.pressure_pa) * (s.pressure_pa - seg.pressure_pa);
  seg.pressure_sd_pa = seg.used.size() > 1 ? std::sqrt(ss / static_cast<double>(seg.used.size() - 1)) : 0.0;
  if (!seg.found) return seg;
  // A real rest lasts, and stays put: the least-squares slope of its
  // pressure must not exceed what weather does (kMaxRestRatePaPerS, beyond
  // 3 standard errors of the slope), or a slow climb or descent at the log's
  // end would look like a rest.
  const double duration = static_cast<double>(seg.end_ns - seg.start_ns) * 1e-9;
  const auto m = static_cast<double>(seg.used.size());
  double tbar = 0.0;
  for (const auto& s : seg.used) tbar += static_cast<double>(s.time_ns - seg.start_ns) * 1e-9;
  tbar /= m;
  double stt = 0.0, stp = 0.0;
  for (const auto& s : seg.used) {
    const double t = static_cast<double>(s.time_ns - seg.start_ns) * 1e-9 - tbar;
    stt += t * t;
    stp += t * (s.pressure_pa - seg.pressure_pa);
  }
  const double slope = stt > 0.0 ? stp / stt : 0.0;
  double rss = 0.0;
  for (const auto& s : seg.used) {
    const double t = static_cast<double>(s.time_ns - seg.start_ns) * 1e-9 - tbar;
    const double resid = s.pressure_pa - seg.pressure_pa - slope * t;
    rss += resid * resid;
  }
  const double slope_se = m > 2.0 && stt > 0.0 ? std::sqrt(rss / (m - 2.0) / stt) : 0.0;
  if (duration < kMinRestS || seg.used.size() < options_.min_samples) {
    seg.found = false;
    seg.why = fmt::format("the rest at the log's end lasts {:.1f} s ({} samples); at least {:.0f} s "
                          "needed (does the log end in flight?)",
                          duration, seg.used.size(), kMinRestS);
  } else if (std::fabs(slope) > kMaxRestRatePaPerS + 3.0 * slope_se) {
    seg.found = false;
    seg.why = fmt::format("the pressure still changes by {:+.1f} hPa/h over the {:.1f} s at the "
                          "log's end, faster than weather (does the log end in flight?)",
                          slope * 36.0, duration);
  }
  return seg;
}

}  // namespace baroz
