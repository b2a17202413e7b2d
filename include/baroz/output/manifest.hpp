// The run manifest (--manifest FILE): a JSON record of one `baroz height` run
// (inputs with SHA-256, every option and constant used, the model and the
// reference chosen, the output columns with UDUNITS units and CF standard
// names) so that the run can be checked and repeated.
#pragma once

#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/pipeline/height_job.hpp"

namespace baroz {

struct ManifestRun {
  std::vector<std::string> arguments;  ///< the command line after "baroz"
  std::vector<std::string> outputs;    ///< output path per input ("-" for stdout)
  std::string rejects_path;            ///< empty without --rejects
  std::string time_zone = "UTC";       ///< zone for times without one (--tz)
};

/// The manifest document (pretty-printed JSON, ends with a newline).
std::string height_manifest(const ManifestRun& run, const HeightOptions& options,
                            std::span<const HeightReport> reports);

}  // namespace baroz
