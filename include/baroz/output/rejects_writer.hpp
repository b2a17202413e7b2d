// The rejects file (--rejects FILE): every rejected row as
// `source,line,reason,raw` (CSV, RFC 4180 quoting), so that nothing is lost.
#pragma once

#include <memory>
#include <mutex>
#include <string>

#include "baroz/output/byte_sink.hpp"
#include "baroz/validation/row_problem.hpp"

namespace baroz {

class RejectsWriter {
 public:
  /// Writes the header at once. Thread-safe (batch mode).
  explicit RejectsWriter(std::unique_ptr<ByteSink> sink);
  void write(std::string_view source, const RowProblem& problem);
  /// Flushes and makes the file final.
  void commit();

 private:
  std::unique_ptr<ByteSink> sink_;
  std::string line_;
  std::mutex mutex_;
};

/// Appends `field` to `out`, quoted per RFC 4180 when it contains a comma,
/// a quote, CR or LF.
void append_csv_field(std::string& out, std::string_view field);

}  // namespace baroz
