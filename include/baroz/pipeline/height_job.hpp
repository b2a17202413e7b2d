// One run of `baroz height` over one input: the whole pipeline
//   reader -> validation -> reference -> model -> uncertainty -> writer
// wired together, streaming, with constant memory apart from the bounded
// prefix held back while the reference window is being found.
#pragma once

#include <array>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "baroz/analysis/flight_series.hpp"
#include "baroz/analysis/flight_smoother.hpp"
#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/models/height_model.hpp"
#include "baroz/models/isothermal_model.hpp"
#include "baroz/models/normal_gravity.hpp"
#include "baroz/output/series_writer.hpp"
#include "baroz/pipeline/diagnostics.hpp"
#include "baroz/pipeline/profile_source.hpp"
#include "baroz/reference/reference.hpp"
#include "baroz/uncertainty/error_budget.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

class RejectsWriter;

struct HeightOptions {
  ReaderOptions reader;
  ColumnOptions columns;
  bool decimal_comma = false;
  ValidationOptions validation;
  ReferenceOptions reference;
  ModelKind model = ModelKind::kAuto;
  IsothermalTemperature temperature_model = IsothermalTemperature::kReference;
  ProfileSettings profile;                 ///< the profile model's profile
  std::optional<double> latitude_deg;      ///< --latitude: WGS 84 gravity at this latitude
  ErrorBudgetOptions budget;
  /// Analysis on the written rows (a bounded delay line in the job):
  /// vspeed adds vspeed_mps, despike sets the spike flag.
  bool vspeed = false;
  bool despike = false;
  bool sigma_columns = false;  ///< --sigma-columns: one column per budget term
  SmoothingOptions smoothing;
  SeriesOptions series;      ///< altitude and gnss_alt are decided by the job
  bool strict = false;
};

/// The error budget at one row, for the summary and the manifest.
struct BudgetPoint {
  bool set = false;
  double elapsed_s = kMissing;
  double height_m = kMissing;
  HeightSigma sigma;
};

/// What one run did, for the count line, the manifest and the tests.
struct HeightReport {
  std::string source;
  std::string sha256;
  std::uint64_t bytes = 0;
  LogLayout layout;
  ColumnMap columns;
  bool absolute_time = false;
  std::uint64_t rows_read = 0;
  std::uint64_t rows_written = 0;
  std::uint64_t rows_rejected = 0;
  std::array<std::uint64_t, static_cast<std::size_t>(RejectReason::kCount)> rejected_by_reason{};
  bool stopped_by_strict = false;
  ModelKind model = ModelKind::kStandard;
  std::string model_reason;
  std::optional<ProfileBuild> profile;     ///< profile model: where its profile came from
  bool causal_profile = false;             ///< profile built from the samples as they arrived
  std::string gravity;                     ///< "standard" or "wgs84"
  double latitude_deg = kMissing;          ///< latitude of the WGS 84 frame
  std::string latitude_source;             ///< "option" or "column"
  std::uint64_t extrapolated_rows = 0;     ///< rows flagged extrapolated
  std::uint64_t spike_rows = 0;            ///< rows flagged spike
  std::uint64_t no_base_rows = 0;          ///< rows flagged no_base (held or rejected)
  std::optional<Reference> reference;
  double coverage_factor = 0.0;
  double sigma_ref_pa = kMissing;          ///< sigma_ref used (given or the reference's default)
  std::string sigma_ref_source;            ///< "option" or how the default was formed
  std::string band_method;                 ///< "linear" or "monte carlo (N runs, seed S)"
  /// --monte-carlo N: the rows where some runs gave no height, and those
  /// of them flagged linear_band (a limit could not be drawn).
  struct MonteCarloRows {
    std::uint64_t with_failed_runs = 0;
    std::uint64_t linear_band = 0;
  };
  std::optional<MonteCarloRows> monte_carlo;  ///< set with --monte-carlo N
  BudgetPoint budget_at_max;               ///< at the row of the maximum height
  BudgetPoint budget_at_end;               ///< at the last row
  TimeNs first_time_ns = 0;
  TimeNs last_time_ns = 0;
  TimeNs nominal_interval_ns = 0;
  std::uint64_t gaps = 0, time_backwards = 0, time_duplicates = 0;
  double max_height_m = kMissing;
  std::vector<ColumnInfo> output_columns;
  std::vector<std::string> notes;
};

/// Runs the pipeline on `input`, writing the series to `output`.
/// Row problems go to `diagnostics` (and `rejects` when given). Setup
/// problems throw baroz::Error. The caller decides the exit status from the
/// report (no usable rows, --strict).
/// `collect`: when given, every written row is also appended to it (for
/// the summary and the plot), with vspeed and spike flags when the options
/// ask for them.
HeightReport run_height_job(ByteSource& input, ByteSink& output, const HeightOptions& options,
                            Diagnostics& diagnostics, RejectsWriter* rejects,
                            FlightSeries* collect = nullptr);

}  // namespace baroz
