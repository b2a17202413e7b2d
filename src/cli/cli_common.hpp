// Private to the command line: shared helpers of the subcommands.
#pragma once

#include <istream>
#include <memory>
#include <ostream>
#include <string>
#include <string_view>
#include <vector>

#include <CLI/CLI.hpp>

#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/record.hpp"

namespace baroz::cli {

/// Where the command line's streams are.
struct Streams {
  std::istream* in = nullptr;  ///< nullptr: the process's standard input (fd 0)
  std::ostream& out;
  std::ostream& err;
};

/// Options shared by every command that reads logs.
struct ReaderArgs {
  std::vector<std::string> inputs;
  std::string input_format = "auto";
  std::string delimiter;
  std::vector<std::string> cols;
  std::string pressure_unit, temperature_unit, time_unit, tz;
  bool decimal_comma = false;
  std::string error_format = "text";
};

/// Adds the reader options to a subcommand.
void add_reader_options(CLI::App& app, ReaderArgs& args);

/// Resolved reader options (throws baroz::Error usage on bad values).
ReaderOptions reader_options(const ReaderArgs& args);
ColumnOptions column_options(const ReaderArgs& args);

/// Opens an input: "-" is standard input.
std::unique_ptr<ByteSource> open_input(const std::string& path, const Streams& streams);

/// Subcommands. Each returns the exit status.
void add_height_command(CLI::App& app, const Streams& streams, int& status,
                        const std::vector<std::string>& arguments);
void add_atmosphere_command(CLI::App& app, const Streams& streams, int& status);
void add_inspect_command(CLI::App& app, const Streams& streams, int& status);
void add_summary_command(CLI::App& app, const Streams& streams, int& status);
void add_plot_command(CLI::App& app, const Streams& streams, int& status);

}  // namespace baroz::cli
