// Private to the command line: writing the analysis outputs, shared by
// `baroz summary`, `baroz plot` and `baroz height --summary/--plot`.
#pragma once

#include <string>
#include <vector>

#include "cli_common.hpp"

namespace baroz::cli {

/// --above values (lengths, bare = m).
std::vector<double> parse_above_heights(const std::vector<std::string>& above);

/// Writes `text` to `path` atomically, or to standard output for "" / "-".
void write_text_output(const std::string& path, const std::string& text, const Streams& streams);

}  // namespace baroz::cli
