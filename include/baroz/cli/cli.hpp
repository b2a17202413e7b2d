// The command line as a library function: `main` only calls run(). Tests
// drive the whole CLI in-process through the same function.
#pragma once

#include "baroz/core/caution.hpp"

#include <istream>
#include <ostream>
#include <span>
#include <string_view>

namespace baroz::cli {

/// Runs `baroz` with `args` (the arguments after the program name).
/// Standard input is the process's file descriptor 0. Returns the exit
/// status (0 success, 1 usage, 2 input, 3 --strict reject, 4 output).
int run(std::span<const std::string_view> args, std::ostream& out, std::ostream& err);

/// The same with standard input read from `in` (for tests).
int run(std::span<const std::string_view> args, std::istream& in, std::ostream& out,
        std::ostream& err);

/// The caution shown in --help, the README and the plot footer (product
/// specification, "Cautions"); defined in the library (core/caution.hpp).
using baroz::kCaution;

}  // namespace baroz::cli
