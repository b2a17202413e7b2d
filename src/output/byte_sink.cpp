#include "baroz/output/byte_sink.hpp"

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "baroz/output/atomic_file.hpp"

namespace baroz {
namespace {

class OstreamSink final : public ByteSink {
 public:
  OstreamSink(std::ostream& out, std::string name) : out_(out), name_(std::move(name)) {}
  void write(const char* data, std::size_t size) override {
    out_.write(data, static_cast<std::streamsize>(size));
    if (!out_) throw output_error(fmt::format("cannot write to {}", name_));
  }
  void flush() override {
    out_.flush();
    if (!out_) throw output_error(fmt::format("cannot write to {}", name_));
  }

 private:
  std::ostream& out_;
  std::string name_;
};

class AtomicFileSink final : public ByteSink {
 public:
  explicit AtomicFileSink(const std::string& path) : file_(path) {}
  void write(const char* data, std::size_t size) override { file_.write(data, size); }
  void flush() override { file_.flush(); }
  void commit() override { file_.commit(); }

 private:
  AtomicFile file_;
};

class NullSink : public ByteSink {
 public:
  void write(const char*, std::size_t) override {}
  void flush() override {}
};

}  // namespace

std::unique_ptr<ByteSink> make_null_sink() { return std::make_unique<NullSink>(); }

std::unique_ptr<ByteSink> make_ostream_sink(std::ostream& out, std::string name) {
  return std::make_unique<OstreamSink>(out, std::move(name));
}

std::unique_ptr<ByteSink> make_atomic_file_sink(const std::string& path) {
  return std::make_unique<AtomicFileSink>(path);
}

}  // namespace baroz
