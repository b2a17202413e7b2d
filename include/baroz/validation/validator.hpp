// The validation stage: physical plausibility of each decoded sample (a row
// outside it is rejected) and time-order flags (a flag never drops a row).
#pragma once

#include <array>
#include <cstddef>

#include "baroz/core/sample.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/validation/row_problem.hpp"

namespace baroz {

struct ValidationOptions {
  /// Accepted pressure range: p_min_pa < p <= p_max_pa [Pa]. The default is
  /// physical plausibility only (product spec: 0 < p <= 1500 hPa);
  /// --p-range narrows it to a sensor's rated range.
  double p_min_pa = 0.0;
  double p_max_pa = 150000.0;
  bool p_min_inclusive = false;
  /// Plausible air temperature [K]: wider than any surface or stratospheric
  /// record (about -90 C and +57 C at the surface, from memory), narrow
  /// enough to catch a disconnected probe (-273 C, +850 C readings).
  double t_min_k = 150.0;
  double t_max_k = 350.0;
  /// A gap is an interval longer than this many nominal intervals.
  double gap_factor = 2.0;
};

class Validator {
 public:
  Validator(const ValidationOptions& options, const ColumnMap& columns)
      : options_(options), columns_(columns) {}

  /// Checks `sample` (from `record`); false with `problem` filled when the row
  /// must be rejected. On success sets the time-order flags.
  bool check(Sample& sample, RowProblem& problem, std::string_view raw, std::uint64_t record);

  /// Nominal sampling interval [ns], 0 until 16 intervals were seen.
  TimeNs nominal_interval_ns() const { return nominal_ns_; }
  std::uint64_t gaps() const { return gaps_; }
  std::uint64_t backwards() const { return backwards_; }
  std::uint64_t duplicates() const { return duplicates_; }

 private:
  bool reject(RowProblem& problem, const Sample& s, std::string_view raw, std::uint64_t record,
              RejectReason reason, Role role, std::string message) const;
  ValidationOptions options_;
  const ColumnMap& columns_;
  bool have_previous_ = false;
  TimeNs previous_ns_ = 0;
  std::array<TimeNs, 16> first_intervals_{};
  std::size_t n_intervals_ = 0;
  TimeNs nominal_ns_ = 0;
  std::uint64_t gaps_ = 0, backwards_ = 0, duplicates_ = 0;
};

}  // namespace baroz
