// The front half of the pipeline (reader -> decoder -> validator) as a feed
// of accepted samples and rejected rows, in input order. It runs inline, or
// on its own thread handing over batches, so that parsing and the height
// computation with formatting use two cores.
#pragma once

#include <cstdint>
#include <memory>

#include "baroz/core/sample.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/validation/row_problem.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

/// One item of the feed: exactly one of `sample` and `problem` is set. Both
/// point into the feed and stay valid until the next call to next().
struct FeedItem {
  Sample* sample = nullptr;
  const RowProblem* problem = nullptr;
};

/// Counters of the validation stage, read after the feed has ended.
struct FeedStats {
  ColumnMap columns;             ///< with the time format decided by the first row
  bool absolute_time = false;
  TimeNs nominal_interval_ns = 0;
  std::uint64_t gaps = 0, backwards = 0, duplicates = 0;
};

class SampleFeed {
 public:
  virtual ~SampleFeed() = default;
  /// The next item; false at the end of the input. Rethrows an error of the
  /// reading thread (baroz::Error).
  virtual bool next(FeedItem& item) = 0;
  /// Stops reading early (--strict); next() then returns false.
  virtual void stop() = 0;
  /// Valid once next() has returned false (or after stop()).
  virtual FeedStats stats() = 0;
};

/// `threaded`: decode on a second thread in batches (throughput); otherwise
/// inline, item by item (live telemetry: each row as soon as it arrives).
std::unique_ptr<SampleFeed> make_sample_feed(RecordReader& reader, const ColumnMap& columns,
                                             bool decimal_comma,
                                             const ValidationOptions& validation,
                                             bool threaded);

}  // namespace baroz
