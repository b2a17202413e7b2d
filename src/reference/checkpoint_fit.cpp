#include "baroz/reference/checkpoint_fit.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/core/quantity.hpp"
#include "baroz/core/time.hpp"

namespace baroz {

Checkpoint parse_checkpoint(std::string_view text, int default_offset_s) {
  Checkpoint cp;
  cp.text = std::string(text);
  const auto eq = text.rfind('=');
  if (eq == std::string_view::npos || eq == 0 || eq + 1 == text.size())
    throw usage_error(fmt::format("--checkpoint: \"{}\" is not TIME=HEIGHT", text));
  const std::string_view time = text.substr(0, eq);
  cp.height_m = parse_length_option(text.substr(eq + 1), "--checkpoint");
  // An RFC 3339 time has a date (digits then '-'); elapsed seconds do not.
  const bool dated = time.size() >= 10 && time[4] == '-';
  if (dated) {
    auto t = parse_rfc3339(time, default_offset_s);
    if (!t)
      throw usage_error(fmt::format("--checkpoint: \"{}\" is not an RFC 3339 time", time));
    cp.absolute = true;
    cp.time_ns = *t;
  } else {
    const double s = parse_duration_option(time, "--checkpoint");
    if (!(s >= 0.0))
      throw usage_error(fmt::format("--checkpoint: elapsed time \"{}\" is negative", time));
    cp.time_ns = static_cast<TimeNs>(std::llround(s * 1e9));
  }
  return cp;
}

CheckpointFit fit_checkpoints(std::span<const Checkpoint> checkpoints,
                              std::span<const CheckpointObservation> obs,
                              const CheckpointHeight& height) {
  CheckpointFit fit;
  const std::size_t n = obs.size();
  if (n == 0) return fit;
  double tsum = 0.0;
  for (const auto& o : obs) tsum += static_cast<double>(o.time_ns - obs[0].time_ns);
  fit.centre_ns = obs[0].time_ns + static_cast<TimeNs>(std::llround(tsum / static_cast<double>(n)));
  std::vector<double> dt(n);
  double spread = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    dt[i] = static_cast<double>(obs[i].time_ns - fit.centre_ns) * 1e-9;
    spread = std::max(spread, std::fabs(dt[i]));
  }
  fit.parameters = n >= 2 ? 2 : 1;
  if (fit.parameters == 2 && spread < 1.0) {
    fit.parameters = 1;
    fit.note = "the checkpoints are all at the same time: only an offset is fitted";
  }
  double a = 0.0, b = 0.0;
  std::vector<double> h(n), g(n);
  auto evaluate = [&] {
    for (std::size_t i = 0; i < n; ++i) {
      const auto [hi, gi] = height(i, a + b * dt[i]);
      if (!std::isfinite(hi) || !std::isfinite(gi) || gi == 0.0)
        throw input_error(fmt::format("--checkpoint {}: the model gives no height there",
                                      checkpoints[i].text));
      h[i] = hi;
      g[i] = gi;
    }
  };
  for (int iter = 0; iter < 8; ++iter) {
    evaluate();
    // Normal equations of J = [g, g dt] against r = H - h.
    double s11 = 0, s12 = 0, s22 = 0, r1 = 0, r2 = 0;
    for (std::size_t i = 0; i < n; ++i) {
      const double r = checkpoints[i].height_m - h[i];
      s11 += g[i] * g[i];
      s12 += g[i] * g[i] * dt[i];
      s22 += g[i] * g[i] * dt[i] * dt[i];
      r1 += g[i] * r;
      r2 += g[i] * dt[i] * r;
    }
    double da = 0.0, db = 0.0;
    if (fit.parameters == 1) {
      da = r1 / s11;
    } else {
      const double det = s11 * s22 - s12 * s12;
      da = (s22 * r1 - s12 * r2) / det;
      db = (s11 * r2 - s12 * r1) / det;
    }
    a += da;
    b += db;
    if (std::fabs(da) < 1e-9 && std::fabs(db) < 1e-12) break;
  }
  evaluate();
  fit.offset_pa = a;
  fit.rate_pa_per_s = b;
  fit.fitted_m = h;
  fit.residual_m.resize(n);
  double ss = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    fit.residual_m[i] = checkpoints[i].height_m - h[i];
    ss += fit.residual_m[i] * fit.residual_m[i];
  }
  fit.rms_m = std::sqrt(ss / static_cast<double>(n));
  return fit;
}

}  // namespace baroz
