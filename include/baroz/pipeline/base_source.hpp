// Reading a base-station log (--ref-base FILE) for the reference manager:
// the same reader, column mapping and validation as the flight log (any
// columns and units the reader knows), into a BaseSeries on the base's clock.
#pragma once

#include <memory>

#include "baroz/io/byte_source.hpp"
#include "baroz/io/record.hpp"
#include "baroz/pipeline/diagnostics.hpp"
#include "baroz/reference/reference.hpp"
#include "baroz/validation/validator.hpp"

namespace baroz {

struct BaseRead {
  std::shared_ptr<const BaseSeries> series;
  BaseReport report;  ///< path, checksum, counts, span, interval
};

/// Reads the whole base log. Its columns are found by name (the flight
/// log's --col and unit options do not apply); a time without zone takes
/// `tz_offset_s`. A rejected row is reported through `diagnostics` under the
/// base file's name and counted; it never stops the run. Throws baroz::Error
/// (input) when fewer than two usable rows remain.
BaseRead read_base_log(ByteSource& input, int tz_offset_s, const ValidationOptions& validation,
                       Diagnostics& diagnostics);

}  // namespace baroz
