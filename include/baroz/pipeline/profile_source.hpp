// Where the profile model's temperature profile comes from: a first pass
// over the log itself (its ascent, descent or all of it; log_survey.hpp), or a
// separate table of pressure and temperature (--profile FILE). Both read through the
// same reader, column mapping and validation as the log.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"
#include "baroz/models/humidity.hpp"
#include "baroz/models/temperature_profile.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

/// How the profile model gets its profile.
struct ProfileSettings {
  ProfileOptions builder;          ///< leg and layer thickness (profile from the log)
  std::string file;                ///< --profile FILE; empty: from the log
  SaturationPhase saturation = SaturationPhase::kWater;
};

/// A profile with what the manifest and the notes say about it.
struct ProfileBuild {
  std::optional<TemperatureProfile> profile;
  std::string source;              ///< "log ascent", "log descent", "log all" or the file name
  std::string sha256;              ///< of the profile file (empty for the log)
  std::uint64_t samples = 0;       ///< samples (or table rows) the profile is made of
  std::uint64_t layers = 0;        ///< nodes
  bool humidity = false;           ///< virtual temperature from a humidity column
  double first_latitude_deg = kMissing;  ///< first valid latitude in the log (NaN: none)
};

/// Reads a profile table: a pressure and a temperature column (names and
/// units as for logs; a time column is allowed and ignored), an optional
/// relative-humidity column. Every row must be usable: a rejected row is an
/// input error naming the file and line. Throws baroz::Error.
ProfileBuild read_profile_table(ByteSource& input, const ReaderOptions& reader,
                                const ValidationOptions& validation, SaturationPhase saturation);

}  // namespace baroz
