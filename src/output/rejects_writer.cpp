#include "baroz/output/rejects_writer.hpp"

#include <fmt/format.h>

namespace baroz {

void append_csv_field(std::string& out, std::string_view field) {
  bool quote = false;
  for (char c : field)
    if (c == ',' || c == '"' || c == '\n' || c == '\r') quote = true;
  if (!quote) {
    out += field;
    return;
  }
  out += '"';
  for (char c : field) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
}

RejectsWriter::RejectsWriter(std::unique_ptr<ByteSink> sink) : sink_(std::move(sink)) {
  static constexpr std::string_view kHeader = "source,line,reason,raw\n";
  sink_->write(kHeader.data(), kHeader.size());
}

void RejectsWriter::write(std::string_view source, const RowProblem& p) {
  std::lock_guard lock(mutex_);
  line_.clear();
  append_csv_field(line_, source);
  line_ += ',';
  fmt::format_to(std::back_inserter(line_), "{}", p.line);
  line_ += ',';
  std::string reason(reject_code(p.reason));
  reason += ": ";
  reason += p.message;
  append_csv_field(line_, reason);
  line_ += ',';
  append_csv_field(line_, p.raw);
  line_ += '\n';
  sink_->write(line_.data(), line_.size());
}

void RejectsWriter::commit() {
  std::lock_guard lock(mutex_);
  sink_->commit();
}

}  // namespace baroz
