// Test helper: runs the whole command line in-process.
#pragma once

#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>
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

inline std::string source_path(const std::string& rel) {
  return std::string(BAROZ_SOURCE_DIR) + "/" + rel;
}

}  // namespace baroz::test
