// Test helper: runs the whole command line in-process.
#pragma once

#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/cli/cli.hpp"

namespace baroz::test {

struct CliResult {
  int status = -1;
  std::string out;
  std::string err;
};

inline CliResult run_cli(const std::vector<std::string>& args, const std::string& stdin_text = "") {
  std::vector<std::string_view> views(args.begin(), args.end());
  std::istringstream in(stdin_text);
  std::ostringstream out, err;
  CliResult r;
  r.status = baroz::cli::run(views, in, out, err);
  r.out = out.str();
  r.err = err.str();
  return r;
}

/// A scratch directory removed at the end of the test.
struct TempDir {
  std::filesystem::path path;
  TempDir() {
    path = std::filesystem::temp_directory_path() /
           ("baroz_test_" + std::to_string(::getpid()) + "_" + std::to_string(counter()++));
    std::filesystem::create_directories(path);
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path, ec);
  }
  std::string file(const std::string& name, const std::string& content) const {
    auto p = path / name;
    std::ofstream(p, std::ios::binary) << content;
    return p.string();
  }
  std::string operator/(const std::string& name) const { return (path / name).string(); }
  static int& counter() {
    static int c = 0;
    return c;
  }
};

inline std::string read_file(const std::string& path) {
  std::ifstream f(path, std::ios::binary);
  std::stringstream ss;
  ss << f.rdbuf();
  return ss.str();
}

inline std::vector<std::string> split_lines(const std::string& text) {
  std::vector<std::string> lines;
  std::string line;
  std::istringstream ss(text);
  while (std::getline(ss, line)) lines.push_back(line);
  return lines;
}

inline std::vector<std::string> split(const std::string& s, char sep) {
  std::vector<std::string> out;
  std::string cur;
  for (char c : s) {
    if (c == sep) {
      out.push_back(cur);
      cur.clear();
    } else {
      cur += c;
    }
  }
  out.push_back(cur);
  return out;
}

/// Column `name` of CSV `text` (header in line 0), as strings per row.
/// Throws when the text is empty or has no such column (the test fails).
inline std::vector<std::string> column(const std::string& text, const std::string& name) {
  const auto lines = split_lines(text);
  if (lines.empty()) throw std::runtime_error("no CSV text");
  const auto header = split(lines[0], ',');
  std::size_t c = header.size();
  for (std::size_t i = 0; i < header.size(); ++i)
    if (header[i] == name) c = i;
  if (c == header.size()) throw std::runtime_error("no column " + name + " in " + lines[0]);
  std::vector<std::string> out;
  for (std::size_t i = 1; i < lines.size(); ++i) out.push_back(split(lines[i], ',')[c]);
  return out;
}

/// Fields as numbers, NaN for an empty field.
inline std::vector<double> numbers(const std::vector<std::string>& texts) {
  std::vector<double> out;
  for (const auto& t : texts) out.push_back(t.empty() ? std::nan("") : std::stod(t));
  return out;
}

inline std::string source_path(const std::string& rel) {
  return std::string(BAROZ_SOURCE_DIR) + "/" + rel;
}

}  // namespace baroz::test
