// Where a writer's bytes go: a stream (stdout, tests) or an atomic file.
#pragma once

#include <cstddef>
#include <memory>
#include <ostream>
#include <string>

namespace baroz {

class ByteSink {
 public:
  virtual ~ByteSink() = default;
  /// Throws baroz::Error (output) when the bytes cannot be written.
  virtual void write(const char* data, std::size_t size) = 0;
  virtual void flush() = 0;
  /// Makes the output final (an atomic file is renamed onto its target).
  virtual void commit() { flush(); }
};

/// Writes to a std::ostream; `name` is used in error messages.
std::unique_ptr<ByteSink> make_ostream_sink(std::ostream& out, std::string name);
/// Writes to `path` through a temporary file renamed onto it at commit();
/// without commit() (an error, --strict) the target is left untouched.
std::unique_ptr<ByteSink> make_atomic_file_sink(const std::string& path);
/// Discards everything (a run kept only for its summary or plot).
std::unique_ptr<ByteSink> make_null_sink();

}  // namespace baroz
