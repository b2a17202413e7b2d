// Messages to the user on stderr: row problems (collapsed after the first few
// of each kind), notes about choices made, and the final count line. Text
// lines have the form "baroz: FILE:LINE: message"; with --error-format json
// each problem is one JSON object per line. Thread-safe (batch mode).
#pragma once

#include <array>
#include <cstdint>
#include <map>
#include <mutex>
#include <ostream>
#include <string>
#include <string_view>

#include "baroz/validation/row_problem.hpp"

namespace baroz {

enum class ErrorFormat { kText, kJson };

class Diagnostics {
 public:
  Diagnostics(std::ostream& err, ErrorFormat format, bool quiet = false,
              std::size_t shown_per_kind = 5)
      : err_(err), format_(format), quiet_(quiet), shown_per_kind_(shown_per_kind) {}

  /// A rejected row of `source`.
  void row_problem(std::string_view source, const RowProblem& problem);
  /// A fatal row problem (--strict): always shown.
  void fatal_row_problem(std::string_view source, const RowProblem& problem);
  /// A note about a choice the tool made ("reference window: ...").
  void note(std::string_view source, std::string_view message);
  /// An error ending the run (the CLI prints it with the exit status).
  void error(std::string_view message);
  /// Ends the collapsed kinds of `source` with one line each.
  void finish_source(std::string_view source);
  /// "baroz: N rows read, N written, N rejected" (with the source in batch mode).
  void counts(std::string_view source, bool batch, std::uint64_t read, std::uint64_t written,
              std::uint64_t rejected);

 private:
  void emit_problem(std::string_view source, const RowProblem& problem);
  /// One message line (text) or object (JSON); an empty source is left out.
  void emit_message(std::string_view source, std::string_view code, std::string_view message);
  std::ostream& err_;
  ErrorFormat format_;
  bool quiet_ = false;
  std::size_t shown_per_kind_;
  std::mutex mutex_;
  std::map<std::string, std::array<std::uint64_t, static_cast<std::size_t>(RejectReason::kCount)>,
           std::less<>>
      per_source_;
};

}  // namespace baroz
