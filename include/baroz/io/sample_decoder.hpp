// Record -> Sample: parses the fields that have a role, converts units to SI
// and reports the first problem of a row as a RowProblem value.
#pragma once

#include <string>
#include <string_view>

#include "baroz/core/sample.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/validation/row_problem.hpp"

namespace baroz {

class SampleDecoder {
 public:
  /// `short_rows_are_errors`: a record with absent trailing fields is
  /// rejected as a whole (CSV); for NDJSON an absent key is a missing value.
  SampleDecoder(ColumnMap map, bool decimal_comma, bool short_rows_are_errors)
      : map_(std::move(map)),
        decimal_comma_(decimal_comma),
        short_rows_are_errors_(short_rows_are_errors) {}

  /// Decodes `record` into `sample`. Returns true on success; false with
  /// `problem` filled (reason, line, column, message) when the row cannot be
  /// used. Optional roles with an empty field leave NaN and set a flag.
  /// The first record decides whether the time column holds numbers or
  /// RFC 3339 text.
  bool decode(const Record& record, Sample& sample, RowProblem& problem);

  const ColumnMap& columns() const { return map_; }
  /// Whether times are absolute (RFC 3339 or an epoch number) or relative.
  bool absolute_time() const { return absolute_time_; }

 private:
  bool fail(RowProblem& problem, const Record& record, RejectReason reason, Role role,
            std::string message) const;
  bool parse_time(std::string_view text, TimeNs& out);
  bool decode_time(const Record& record, std::string_view time_text, Sample& sample,
                   RowProblem& problem);

  ColumnMap map_;
  bool decimal_comma_ = false;
  bool short_rows_are_errors_ = true;
  bool absolute_time_ = false;
};

}  // namespace baroz
