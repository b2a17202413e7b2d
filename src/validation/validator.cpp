#include "baroz/validation/validator.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "baroz/core/constants.hpp"

namespace baroz {

bool Validator::reject(RowProblem& problem, const Sample& s, std::string_view raw,
                       std::uint64_t record, RejectReason reason, Role role,
                       std::string message) const {
  problem.reason = reason;
  problem.line = s.line;
  problem.record = record;
  problem.raw = raw;
  problem.column = columns_.name[static_cast<std::size_t>(role)];
  problem.field = columns_.at(role);
  problem.message = std::move(message);
  return false;
}

bool Validator::check(Sample& s, RowProblem& problem, std::string_view raw,
                      std::uint64_t record) {
  const std::string& pname = columns_.name[static_cast<std::size_t>(Role::kPressure)];
  const double p = s.pressure_pa;
  if (!std::isfinite(p))
    return reject(problem, s, raw, record, RejectReason::kNonFinite, Role::kPressure,
                  fmt::format("column '{}': pressure is not finite", pname));
  if (p <= 0.0)
    return reject(problem, s, raw, record, RejectReason::kPressureNotPositive, Role::kPressure,
                  fmt::format("column '{}': {:g} hPa is not a positive pressure", pname,
                              p / 100.0));
  const bool below = options_.p_min_inclusive ? p < options_.p_min_pa : p <= options_.p_min_pa;
  if (below || p > options_.p_max_pa)
    return reject(problem, s, raw, record, RejectReason::kPressureOutOfRange, Role::kPressure,
                  fmt::format("column '{}': {:g} hPa is outside the accepted range {} {:g} to "
                              "{:g} hPa (--p-range)",
                              pname, p / 100.0, options_.p_min_inclusive ? "from" : "above",
                              options_.p_min_pa / 100.0, options_.p_max_pa / 100.0));
  const double t = s.temperature_k;
  if (!std::isnan(t) && (t < options_.t_min_k || t > options_.t_max_k))
    return reject(problem, s, raw, record, RejectReason::kTemperatureOutOfRange,
                  Role::kTemperature,
                  fmt::format("column '{}': {:.2f} C is outside the plausible air temperature "
                              "range {:.2f} to {:.2f} C",
                              columns_.name[static_cast<std::size_t>(Role::kTemperature)],
                              t - constants::kZeroCelsius,
                              options_.t_min_k - constants::kZeroCelsius,
                              options_.t_max_k - constants::kZeroCelsius));
  const double rh = s.humidity_pct;
  if (!std::isnan(rh) && (rh < 0.0 || rh > 110.0))
    return reject(problem, s, raw, record, RejectReason::kHumidityOutOfRange, Role::kHumidity,
                  fmt::format("column '{}': {:g} % is outside the relative humidity range 0 to "
                              "110 %",
                              columns_.name[static_cast<std::size_t>(Role::kHumidity)], rh));
  if (!std::isnan(s.lat_deg) && std::fabs(s.lat_deg) > 90.0)
    return reject(problem, s, raw, record, RejectReason::kPositionOutOfRange, Role::kLat,
                  fmt::format("column '{}': latitude {:g} is outside -90 to 90 degrees",
                              columns_.name[static_cast<std::size_t>(Role::kLat)], s.lat_deg));
  if (!std::isnan(s.lon_deg) && (s.lon_deg < -180.0 || s.lon_deg > 360.0))
    return reject(problem, s, raw, record, RejectReason::kPositionOutOfRange, Role::kLon,
                  fmt::format("column '{}': longitude {:g} is outside -180 to 360 degrees",
                              columns_.name[static_cast<std::size_t>(Role::kLon)], s.lon_deg));

  // Time order: flagged, never rejected.
  if (have_previous_) {
    const TimeNs dt = s.time_ns - previous_ns_;
    if (dt < 0) {
      s.flags |= kFlagTimeBackwards;
      ++backwards_;
    } else if (dt == 0) {
      s.flags |= kFlagTimeDuplicate;
      ++duplicates_;
    } else {
      if (nominal_ns_ == 0) {
        first_intervals_[n_intervals_++] = dt;
        if (n_intervals_ == first_intervals_.size()) {
          std::array<TimeNs, 16> sorted = first_intervals_;
          std::nth_element(sorted.begin(), sorted.begin() + 8, sorted.end());
          nominal_ns_ = sorted[8];
        }
      } else if (static_cast<double>(dt) > options_.gap_factor * static_cast<double>(nominal_ns_)) {
        s.flags |= kFlagGap;
        ++gaps_;
      }
    }
  }
  have_previous_ = true;
  previous_ns_ = s.time_ns;
  return true;
}

}  // namespace baroz
