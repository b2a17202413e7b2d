#include "baroz/pipeline/base_source.hpp"

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/pipeline/sample_feed.hpp"

namespace baroz {

BaseRead read_base_log(ByteSource& input, int tz_offset_s, const ValidationOptions& validation,
                       Diagnostics& diag) {
  input.enable_hashing();
  std::unique_ptr<RecordReader> records = open_record_reader(input, ReaderOptions{});
  ColumnOptions columns;
  columns.tz_offset_s = tz_offset_s;
  const ColumnMap map = map_columns(records->layout().columns, columns, input.name());
  std::unique_ptr<SampleFeed> feed =
      make_sample_feed(*records, map, /*decimal_comma=*/false, validation, /*threaded=*/false);
  BaseRead out;
  BaseReport& r = out.report;
  r.path = input.name();
  std::vector<BaseSample> samples;
  FeedItem item;
  while (feed->next(item)) {
    ++r.rows_read;
    if (item.problem) {
      ++r.rows_rejected;
      diag.row_problem(input.name(), *item.problem);
      continue;
    }
    const Sample& s = *item.sample;
    samples.push_back({s.time_ns, s.pressure_pa, s.temperature_k});
  }
  char drain[1 << 14];
  while (input.read(drain, sizeof drain) > 0) {
  }
  diag.finish_source(input.name());
  r.sha256 = input.sha256_hex();
  r.absolute_time = feed->stats().absolute_time;
  r.rows_used = samples.size();
  if (samples.size() < 2)
    throw input_error(fmt::format("{}: the base-station log has {} usable row{} (at least two "
                                  "needed)",
                                  input.name(), samples.size(), samples.size() == 1 ? "" : "s"));
  auto series = std::make_shared<BaseSeries>(std::move(samples));
  r.first_ns = series->first_ns();
  r.last_ns = series->last_ns();
  r.interval_s = series->interval_s();
  out.series = std::move(series);
  if (r.rows_rejected > 0)
    diag.note(input.name(), fmt::format("base-station log: {} of {} rows rejected (see above); "
                                        "the reference uses the other {}",
                                        r.rows_rejected, r.rows_read, r.rows_used));
  return out;
}

}  // namespace baroz
