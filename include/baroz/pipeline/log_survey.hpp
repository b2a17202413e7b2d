// The first pass over a log file, for what needs the whole flight before the
// first row can be written: the profile model's temperature profile, the
// post-landing resting segment (--drift linear, --base-offset auto), the
// log at each checkpoint's time (--checkpoint) and the GNSS altitudes of the
// low part of the flight (--ref-gnss). One read serves them all; on a stream
// there is no first pass and the job says what it cannot do.
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <vector>

#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/pipeline/profile_source.hpp"
#include "baroz/reference/checkpoint_fit.hpp"
#include "baroz/reference/gnss_fit.hpp"
#include "baroz/reference/landing_detector.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

struct SurveyRequest {
  const ProfileSettings* profile = nullptr;  ///< build the profile from the log
  bool landing = false;                      ///< find the post-landing segment
  StationaryOptions stationary;
  std::size_t landing_capacity = 500000;     ///< samples of the tail kept
  std::span<const Checkpoint> checkpoints;   ///< observe the log at these times
  bool gnss = false;                         ///< keep samples with a GNSS altitude
  std::size_t gnss_capacity = 1u << 18;      ///< at most this many (evenly thinned)

  bool any() const { return profile || landing || !checkpoints.empty() || gnss; }
};

struct LogSurvey {
  std::optional<ProfileBuild> profile;
  std::optional<RestSegment> landing;
  std::vector<CheckpointObservation> checkpoints;  ///< in the order requested
  std::vector<GnssPair> gnss;
  std::size_t gnss_stride = 1;               ///< every gnss_stride-th GNSS sample was kept
  bool absolute_time = false;
  TimeNs first_time_ns = 0;                  ///< first accepted sample
  TimeNs last_time_ns = 0;
  std::uint64_t samples = 0;                 ///< accepted samples
};

/// Reads the whole log once (rejected rows are skipped here; the main pass
/// reports them). Throws baroz::Error (input): a checkpoint outside the log,
/// an absolute checkpoint time on a log with relative times, a profile leg
/// without temperature.
LogSurvey survey_log(ByteSource& input, const ReaderOptions& reader, const ColumnOptions& columns,
                     bool decimal_comma, const ValidationOptions& validation,
                     const SurveyRequest& request);

}  // namespace baroz
