#include "baroz/pipeline/inspect_job.hpp"

#include <algorithm>
#include <cmath>

#include "baroz/core/error.hpp"
#include "baroz/pipeline/sample_feed.hpp"

namespace baroz {

InspectReport run_inspect_job(ByteSource& input, const InspectOptions& options,
                              Diagnostics& diag) {
  InspectReport rep;
  rep.source = input.name();
  auto reader = open_record_reader(input, options.reader);
  rep.layout = reader->layout();
  rep.columns = map_columns(rep.layout.columns, options.columns, input.name());
  auto feed = make_sample_feed(*reader, rep.columns, options.decimal_comma, options.validation,
                               input.is_regular_file());
  ReferenceOptions ro = options.reference;
  ro.kind = ReferenceKind::kWindow;
  ReferenceResolver resolver(ro, false, rep.columns.has(Role::kTemperature));
  bool resolving = true;

  TimeNs previous = 0;
  bool have_previous = false;
  auto min_max = [](double v, double& lo, double& hi) {
    if (std::isnan(v)) return;
    if (std::isnan(lo) || v < lo) lo = v;
    if (std::isnan(hi) || v > hi) hi = v;
  };
  FeedItem item;
  while (feed->next(item)) {
    ++rep.rows_read;
    if (item.problem) {
      ++rep.rows_rejected;
      ++rep.rejected_by_reason[static_cast<std::size_t>(item.problem->reason)];
      diag.row_problem(input.name(), *item.problem);
      continue;
    }
    const Sample& s = *item.sample;
    ++rep.rows_usable;
    if (rep.rows_usable == 1) rep.first_time_ns = s.time_ns;
    rep.last_time_ns = s.time_ns;
    if (have_previous && s.time_ns - previous > rep.longest_gap_ns)
      rep.longest_gap_ns = s.time_ns - previous;
    previous = s.time_ns;
    have_previous = true;
    min_max(s.pressure_pa, rep.min_pressure_pa, rep.max_pressure_pa);
    min_max(s.temperature_k, rep.min_temperature_k, rep.max_temperature_k);
    rep.missing_temperature += (s.flags & kFlagNoTemperature) != 0;
    rep.missing_humidity += (s.flags & kFlagNoHumidity) != 0;
    rep.missing_gnss += (s.flags & kFlagNoGnss) != 0;
    if (resolving && resolver.feed(s)) {
      resolving = false;
      try {
        rep.reference = resolver.resolve(false, input.name());
      } catch (const Error& e) {
        rep.reference_error = e.what();
      }
    }
  }
  if (resolving && rep.rows_usable > 0) {
    try {
      rep.reference = resolver.resolve(true, input.name());
    } catch (const Error& e) {
      rep.reference_error = e.what();
    }
  }
  const FeedStats stats = feed->stats();
  rep.blank_lines = reader->blank_lines();
  rep.columns = stats.columns;
  rep.absolute_time = stats.absolute_time;
  rep.nominal_interval_ns = stats.nominal_interval_ns;
  rep.gaps = stats.gaps;
  rep.time_backwards = stats.backwards;
  rep.time_duplicates = stats.duplicates;
  rep.bytes = input.bytes_read();
  rep.sha256 = input.sha256_hex();
  diag.finish_source(input.name());
  return rep;
}

}  // namespace baroz
