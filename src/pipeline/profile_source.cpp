#include "baroz/pipeline/profile_source.hpp"

#include <cmath>
#include <vector>

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/io/sample_decoder.hpp"
#include "baroz/pipeline/sample_feed.hpp"

namespace baroz {

ProfileBuild read_profile_table(ByteSource& input, const ReaderOptions& reader,
                                const ValidationOptions& validation, SaturationPhase saturation) {
  input.enable_hashing();
  std::unique_ptr<RecordReader> records = open_record_reader(input, reader);
  ColumnOptions columns;
  columns.require_time = false;
  const ColumnMap map = map_columns(records->layout().columns, columns, input.name());
  if (!map.has(Role::kTemperature))
    throw input_error(fmt::format(
        "{}: a profile table needs a temperature column (with its unit in the name, e.g. "
        "temp_c)",
        input.name()));
  std::unique_ptr<SampleFeed> feed =
      make_sample_feed(*records, map, /*decimal_comma=*/false, validation, /*threaded=*/false);
  ProfileBuild out;
  out.source = input.name();
  std::vector<ProfileNode> nodes;
  FeedItem item;
  while (feed->next(item)) {
    if (item.problem) {
      const RowProblem& p = *item.problem;
      throw input_error(fmt::format("{}:{}: {} (every row of a profile table must be usable)",
                                    input.name(), p.line, p.message));
    }
    const Sample& s = *item.sample;
    if (std::isnan(s.temperature_k))
      throw input_error(fmt::format("{}:{}: no temperature (every row of a profile table "
                                    "needs one)",
                                    input.name(), s.line));
    ProfileNode node;
    node.pressure_pa = s.pressure_pa;
    node.temperature_k = s.temperature_k;
    node.samples = 1;  // one row, one measurement (its random error is a sample's)
    if (!std::isnan(s.humidity_pct)) {
      node.virtual_temperature_k =
          virtual_temperature_from_rh_k(s.temperature_k, s.humidity_pct, s.pressure_pa,
                                        saturation);
      out.humidity = true;
    }
    nodes.push_back(node);
  }
  char drain[1 << 14];
  while (input.read(drain, sizeof drain) > 0) {
  }
  out.sha256 = input.sha256_hex();
  out.samples = nodes.size();
  if (nodes.empty())
    throw input_error(fmt::format("{}: the profile table has no rows", input.name()));
  try {
    out.profile.emplace(std::move(nodes));
  } catch (const Error& e) {
    throw input_error(fmt::format("{}: {}", input.name(), e.what()));
  }
  out.layers = out.profile->size();
  return out;
}

}  // namespace baroz
