#include "baroz/pipeline/log_survey.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/core/time.hpp"
#include "baroz/models/humidity.hpp"
#include "baroz/pipeline/sample_feed.hpp"

namespace baroz {
namespace {

double lerp(double a, double b, double w) {
  if (std::isnan(a)) return b;
  if (std::isnan(b)) return a;
  return a + w * (b - a);
}

}  // namespace

LogSurvey survey_log(ByteSource& input, const ReaderOptions& reader, const ColumnOptions& columns,
                     bool decimal_comma, const ValidationOptions& validation,
                     const SurveyRequest& req) {
  std::unique_ptr<RecordReader> records = open_record_reader(input, reader);
  const ColumnMap map = map_columns(records->layout().columns, columns, input.name());
  std::unique_ptr<SampleFeed> feed =
      make_sample_feed(*records, map, decimal_comma, validation, /*threaded=*/true);

  LogSurvey out;
  std::optional<ProfileBuilder> builder;
  if (req.profile) {
    builder.emplace(req.profile->builder);
    out.profile.emplace();
    out.profile->source = fmt::format("log {}", profile_leg_name(req.profile->builder.leg));
  }
  std::optional<LandingDetector> landing;
  if (req.landing) landing.emplace(req.stationary, req.landing_capacity);
  std::vector<unsigned char> seen(req.checkpoints.size(), 0);
  out.checkpoints.resize(req.checkpoints.size());
  std::size_t gnss_count = 0;
  Sample prev;
  bool have_prev = false;

  FeedItem item;
  while (feed->next(item)) {
    if (!item.sample) continue;
    const Sample& s = *item.sample;
    if (out.samples == 0) out.first_time_ns = s.time_ns;
    ++out.samples;
    out.last_time_ns = s.time_ns;
    if (builder) {
      if (std::isnan(out.profile->first_latitude_deg) && !std::isnan(s.lat_deg))
        out.profile->first_latitude_deg = s.lat_deg;
      double tv = kMissing;
      if (!std::isnan(s.temperature_k) && !std::isnan(s.humidity_pct)) {
        tv = virtual_temperature_from_rh_k(s.temperature_k, s.humidity_pct, s.pressure_pa,
                                           req.profile->saturation);
        out.profile->humidity = true;
      }
      builder->add(s.pressure_pa, s.temperature_k, tv);
    }
    if (landing) landing->feed(s.time_ns, s.pressure_pa);
    for (std::size_t k = 0; k < req.checkpoints.size(); ++k) {
      if (seen[k]) continue;
      const Checkpoint& cp = req.checkpoints[k];
      const TimeNs tc = cp.absolute ? cp.time_ns : out.first_time_ns + cp.time_ns;
      CheckpointObservation& o = out.checkpoints[k];
      if (s.time_ns == tc) {
        o = {tc, s.pressure_pa, s.temperature_k};
        seen[k] = 1;
      } else if (have_prev && prev.time_ns < tc && tc < s.time_ns) {
        const double w = static_cast<double>(tc - prev.time_ns) /
                         static_cast<double>(s.time_ns - prev.time_ns);
        o = {tc, lerp(prev.pressure_pa, s.pressure_pa, w),
             lerp(prev.temperature_k, s.temperature_k, w)};
        seen[k] = 1;
      }
    }
    if (req.gnss && !std::isnan(s.gnss_alt_m)) {
      // Keep GNSS samples number 0, stride, 2 stride, ...; when full, keep
      // every other one and double the stride (bounded memory, even spread).
      if (gnss_count % out.gnss_stride == 0) {
        if (out.gnss.size() >= req.gnss_capacity) {
          std::size_t w = 0;
          for (std::size_t r = 0; r < out.gnss.size(); r += 2) out.gnss[w++] = out.gnss[r];
          out.gnss.resize(w);
          out.gnss_stride *= 2;
        }
        if (gnss_count % out.gnss_stride == 0)
          out.gnss.push_back({s.time_ns, s.pressure_pa, s.temperature_k, s.gnss_alt_m});
      }
      ++gnss_count;
    }
    prev = s;
    prev.time_text = {};
    prev.raw = {};
    have_prev = true;
  }
  out.absolute_time = feed->stats().absolute_time;

  for (std::size_t k = 0; k < req.checkpoints.size(); ++k) {
    if (seen[k]) continue;
    const Checkpoint& cp = req.checkpoints[k];
    if (cp.absolute && !out.absolute_time)
      throw input_error(fmt::format("{}: --checkpoint {}: the log's times are relative, not "
                                    "dates; give the checkpoint's time as elapsed seconds",
                                    input.name(), cp.text));
    throw input_error(fmt::format(
        "{}: --checkpoint {}: the time is outside the log ({} to {})", input.name(), cp.text,
        out.absolute_time ? format_rfc3339_utc(out.first_time_ns) : std::string("0 s"),
        out.absolute_time
            ? format_rfc3339_utc(out.last_time_ns)
            : fmt::format("{:.3f} s elapsed",
                          static_cast<double>(out.last_time_ns - out.first_time_ns) * 1e-9)));
  }
  if (landing) out.landing = landing->finish();
  if (builder) {
    try {
      out.profile->profile.emplace(builder->build());
    } catch (const Error& e) {
      throw input_error(fmt::format("{}: {}", input.name(), e.what()));
    }
    out.profile->samples = builder->samples_used();
    out.profile->layers = builder->layers();
  }
  return out;
}

}  // namespace baroz
