// Spike flags, vertical speed and a smoothed height for a height series, as a
// streaming stage with a bounded delay (it runs inside `baroz height
// --vspeed` on a live pipe as well as over a whole series in memory).
//
// Rows are pushed in input order; a row is released (pop) once every row
// within its windows has arrived, or at finish(). Output is in input order,
// every pushed row comes out exactly once, and a spike is flagged, never
// removed.
//
// Method (derivation, defaults and measured tolerances: docs/analysis-smoothing.md):
//   1. Spike flag (Hampel identifier on a detrended window). For row c, the
//      rows j with |t_j - t_c| <= W_s/2 and a finite height form the window.
//      A local robust slope s is the median of the pair slopes
//      (h_{k+m} - h_k) / (t_{k+m} - t_k), m = ceil(n/2) (Theil's incomplete
//      method), pairs with equal times skipped. With the residuals
//      r_j = h_j - s (t_j - t_c), their median r~ and MAD = median |r_j - r~|,
//      row c is a spike when
//          |r_c - r~| > max(k * 1.4826 * MAD, floor)
//      (the Hampel identifier: Hampel 1974; the moving-window Hampel filter
//      of Pearson et al. 2016).
//      The trend is removed first so that a steady climb or fall does not
//      look like scatter.
//   2. Vertical speed: ordinary least-squares line h = a + b (t - t_c)
//      through the rows with |t_j - t_c| <= W_v/2 that are neither spikes
//      nor NaN; vspeed = b, smoothed height = a (the line at t_c). NaN when
//      fewer than 3 rows are usable or they span less than W_v/4. The fit
//      uses the actual times, so irregular sampling needs no resampling.
//   3. Windows adapt to slow logs: each window is widened to span at least
//      its min_rows rows at the log's nominal interval (the median of its
//      first 16 positive intervals, fixed from then on). Defaults: vspeed
//      2 s from 10 Hz up and 20 s at 1 Hz; spike 2 s from 20 Hz up and 40 s
//      at 1 Hz.
//
// Time order: rows must come in input order. Equal times (duplicates) stay
// in the window (pairs with equal times are skipped in the slope, the fit
// uses them as repeated abscissae). A time earlier than the previous row's
// (a clock reset or an out-of-order record) ends a segment: every row before
// it is completed with the rows it has, and no window reaches across the
// reversal. A non-finite time is released alone (no spike, NaN vspeed). A
// segment is also cut when max_window_rows rows are waiting (a stuck clock),
// which bounds memory.
//
// Memory and cost: a ring buffer of the rows within reach of the pending
// windows, reused (grows by doubling, no per-row allocation after warm-up).
// The fit keeps running sums (O(1) a row, recomputed from the rows now and
// then); the spike statistics are O(n) in the window's rows, and use at most
// 64 of them (every k-th row of a denser window, the tested row included).
#pragma once

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <limits>
#include <vector>

#include "baroz/analysis/flight_series.hpp"

namespace baroz {

struct SmoothingOptions {
  /// Hampel window, full width [s], > 0; widened to spike_min_rows rows.
  double spike_window_s = 2.0;
  /// Threshold k in robust standard deviations (1.4826 MAD), > 0.
  double spike_threshold = 6.0;
  /// Deviations from the window's median residual at or below this are never
  /// spikes [m], >= 0 (guards a MAD of zero on quantised or resting data).
  double spike_floor_m = 2.0;
  /// Vertical-speed fit window, full width [s], > 0; widened to vspeed_min_rows rows.
  double vspeed_window_s = 2.0;
  /// Each window spans at least (rows - 1) nominal sampling intervals
  /// (0 or 1: the time window as given).
  std::size_t spike_min_rows = 41;
  std::size_t vspeed_min_rows = 21;
  /// Rows waiting for their windows beyond this cut the stream into segments
  /// (bounds memory on a stuck clock), >= 17.
  std::size_t max_window_rows = 65536;
};

/// One completed row.
struct SmoothedRow {
  std::uint64_t index = 0;                                     ///< 0-based position in push order
  double time_s = 0.0;                                         ///< time as pushed [s]
  double height_m = std::numeric_limits<double>::quiet_NaN();  ///< height as pushed [m]
  bool spike = false;  ///< the spike filter flagged this row (kFlagSpike)
  /// Vertical speed at the row [m/s], positive up; NaN when the fit had too
  /// few rows or the row's height is NaN. Also given for a spike row (from
  /// its neighbours).
  double vspeed_mps = std::numeric_limits<double>::quiet_NaN();
  /// The fitted line at the row's time [m]; NaN with vspeed_mps.
  double smoothed_height_m = std::numeric_limits<double>::quiet_NaN();
};

class FlightSmoother {
 public:
  /// Throws baroz::Error (kUsage) for an option outside its range.
  explicit FlightSmoother(const SmoothingOptions& options);

  /// Next row. `time_s`: elapsed time [s] (any origin); `height_m`: height
  /// [m], NaN allowed (such a row is ignored by the windows and released
  /// with no spike and NaN vspeed).
  void push(double time_s, double height_m);
  /// The next completed row in input order; false when none is ready.
  bool pop(SmoothedRow& out);
  /// End of input: every row left becomes completed (windows truncated at
  /// the end). Pushing afterwards starts a new segment.
  void finish();

  /// Rows pushed and not yet popped.
  std::size_t pending() const { return static_cast<std::size_t>(end_ - out_); }
  /// Rows held in memory (pending plus the look-back the windows need).
  std::size_t buffered() const { return static_cast<std::size_t>(end_ - base_); }
  /// How far output lags input on a live stream [s]: (W_s + W_v)/2 with
  /// the widened windows. A row at time t comes out when the first row later
  /// than t + delay_s() has been pushed (windows include their edges, so on a
  /// regular log that is up to two intervals more). Until the nominal
  /// interval is known (16 intervals) this is the value of the unwidened
  /// windows.
  double delay_s() const { return half_spike_s_ + half_vspeed_s_; }
  /// Windows in use, full width [s] (see delay_s() for when they are final).
  double spike_window_used_s() const { return 2.0 * half_spike_s_; }
  double vspeed_window_used_s() const { return 2.0 * half_vspeed_s_; }
  /// Nominal sampling interval [s] the windows were widened with; NaN until
  /// known, 0 when the log gave no positive interval.
  double nominal_interval_s() const { return nominal_interval_s_; }
  /// How often the stream was cut into segments: time reversals and
  /// non-finite times, and max_window_rows overflows.
  std::uint64_t time_reversals() const { return reversals_; }
  std::uint64_t overflow_cuts() const { return overflows_; }

 private:
  struct Row {
    std::uint64_t index;
    double time_s;
    double height_m;
    double vspeed_mps;
    double smoothed_m;
    bool spike;
  };

  Row& at(std::uint64_t seq) { return ring_[static_cast<std::size_t>(seq & mask_)]; }
  const Row& at(std::uint64_t seq) const { return ring_[static_cast<std::size_t>(seq & mask_)]; }
  void append(double time_s, double height_m);
  void fix_windows();
  void advance();
  void complete_segment();
  void trim();
  void decide_spike(std::uint64_t c);
  void fit(std::uint64_t c);
  bool usable(const Row& r) const { return !r.spike && std::isfinite(r.height_m); }
  void fit_add(const Row& r, double sign);
  void fit_recompute(double ref_time_s);

  SmoothingOptions options_;
  std::vector<Row> ring_;
  std::uint64_t mask_ = 0;
  // Sequence numbers (0-based push order), base_ <= out_ <= fit_ <= spike_ <= end_:
  std::uint64_t base_ = 0;     // oldest row held
  std::uint64_t out_ = 0;      // next row to pop
  std::uint64_t fit_ = 0;      // next row without a fit (rows before it are complete)
  std::uint64_t spike_ = 0;    // next row without a spike decision
  std::uint64_t end_ = 0;      // one past the newest row
  std::uint64_t segment_ = 0;  // first row of the current segment
  std::uint64_t reversals_ = 0;
  std::uint64_t overflows_ = 0;
  bool windows_fixed_ = false;
  double nominal_interval_s_ = std::numeric_limits<double>::quiet_NaN();
  double half_spike_s_ = 0.0;
  double half_vspeed_s_ = 0.0;
  std::vector<double> intervals_;  // first positive intervals, for the nominal rate
  // Sliding least-squares sums over the usable rows of [fit_lo_, fit_hi_),
  // u = t - ref_t, g = h - ref_h.
  std::uint64_t fit_lo_ = 0, fit_hi_ = 0;
  std::uint64_t spike_lo_ = 0, spike_hi_ = 0;  // the current spike window
  double ref_t_ = 0.0, ref_h_ = 0.0;
  double n_ = 0.0, su_ = 0.0, sg_ = 0.0, suu_ = 0.0, sug_ = 0.0;
  std::uint64_t fit_updates_ = 0;  // add/remove since the last recompute
  std::vector<double> scratch_t_, scratch_h_, scratch_w_;
};

/// In-memory convenience over a whole series: sets (or clears) kFlagSpike in
/// `flags` and sets `vspeed_mps` for every point (NaN where not estimated).
/// Times are `time_s` of the points. Throws like the FlightSmoother constructor.
void smooth_series(FlightSeries& series, const SmoothingOptions& options);

}  // namespace baroz

// References:
//   F. R. Hampel, "The influence curve and its role in robust estimation",
//     J. Amer. Statist. Assoc. 69 (1974) 383-393: the median absolute
//     deviation as a robust scale, the identifier |x - median| > k MAD'.
//   R. K. Pearson, Y. Neuvo, J. Astola, M. Gabbouj, "Generalized Hampel
//     filters", EURASIP J. Adv. Signal Process. 2016:87: the moving-window
//     Hampel filter, MAD scaled by 1.4826 for a normal distribution
//     (threshold t = 3 as the usual choice: from memory).
//   H. Theil, "A rank-invariant method of linear and polynomial regression
//     analysis", Proc. Kon. Ned. Akad. Wetensch. 53 (1950): the median of
//     the slopes of the pairs (i, i + n/2) (the "incomplete" method).
