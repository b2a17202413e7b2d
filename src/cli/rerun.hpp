// Private to the command line: `baroz height --rerun MANIFEST [overrides...]`
// repeats the run a manifest (--manifest FILE) recorded, with only the
// options given on the command line changed. Every input the re-run reads
// again is first checked against its recorded SHA-256; the recorded outputs
// are not written again unless given anew.
#pragma once

#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "cli_common.hpp"

namespace baroz::cli {

/// Runs the re-run. `height` is the `height` subcommand (its options tell
/// which take a value), `manifest` the --rerun value, `arguments` the whole
/// command line after "baroz" (the overrides are the tokens after "height",
/// without --rerun). Re-enters the command line with the expanded argument
/// list and returns its exit status; throws baroz::Error for a manifest that
/// cannot be read (input) or is not a `baroz height` manifest (usage), and
/// for a missing or changed input (input).
int rerun_height(const CLI::App& height, const std::string& manifest,
                 const std::vector<std::string>& arguments, const Streams& streams);

/// `words` as a POSIX shell command line: each word single-quoted when it
/// holds anything but letters, digits and `_@%+=:,./-` (or is empty).
std::string shell_quote(const std::vector<std::string>& words);

}  // namespace baroz::cli
