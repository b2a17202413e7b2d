// The one error model of baroz.
//
// Setup and usage problems are exceptions (baroz::Error and its kinds); a bad
// data row is never an exception but a value (see validation/row_problem.hpp).
// Only the command-line function turns an Error into an exit status.
#pragma once

#include <stdexcept>
#include <string>

namespace baroz {

/// Exit statuses of the command line (pinned by the product specification).
enum class ExitCode : int {
  kSuccess = 0,         ///< success, also with skipped rows
  kUsage = 1,           ///< bad option or option value
  kInput = 2,           ///< input unreadable, not interpretable, or no usable rows
  kStrictReject = 3,    ///< --strict and a rejected row
  kOutput = 4,          ///< output not writable
};

/// Library exception. `what()` is a complete lower-case message without the
/// "baroz: " prefix and without a trailing period, e.g.
/// "flight.csv: no column for role 'pressure'".
class Error : public std::runtime_error {
 public:
  Error(ExitCode code, const std::string& message)
      : std::runtime_error(message), code_(code) {}
  ExitCode code() const noexcept { return code_; }

 private:
  ExitCode code_;
};

/// A bad option or option value.
inline Error usage_error(const std::string& message) {
  return Error(ExitCode::kUsage, message);
}
/// An input that cannot be read or interpreted.
inline Error input_error(const std::string& message) {
  return Error(ExitCode::kInput, message);
}
/// An output that cannot be written.
inline Error output_error(const std::string& message) {
  return Error(ExitCode::kOutput, message);
}

}  // namespace baroz
