// baroz: barometric altimetry log processor. All logic is in the library.
#include <iostream>
#include <string_view>
#include <vector>

#include "baroz/cli/cli.hpp"

int main(int argc, char** argv) {
  std::ios::sync_with_stdio(false);
  std::vector<std::string_view> args(argv + 1, argv + argc);
  return baroz::cli::run(args, std::cout, std::cerr);
}
