#include "baroz/pipeline/diagnostics.hpp"

#include <fmt/format.h>

#include "baroz/output/json_writer.hpp"

namespace baroz {

void Diagnostics::emit_problem(std::string_view source, const RowProblem& p) {
  if (format_ == ErrorFormat::kJson) {
    JsonWriter j;
    j.begin_object();
    j.key("file"); j.value(source);
    j.key("line"); j.value(static_cast<std::uint64_t>(p.line));
    j.key("record"); j.value(static_cast<std::uint64_t>(p.record));
    j.key("column");
    if (p.column.empty()) j.null(); else j.value(p.column);
    j.key("field");
    if (p.field < 0) j.null(); else j.value(static_cast<std::int64_t>(p.field + 1));
    j.key("code"); j.value(reject_code(p.reason));
    j.key("message"); j.value(p.message);
    j.end_object();
    err_ << j.str() << '\n';
  } else {
    err_ << "baroz: " << source << ':' << p.line << ": " << p.message << '\n';
  }
}

void Diagnostics::row_problem(std::string_view source, const RowProblem& p) {
  std::lock_guard lock(mutex_);
  auto it = per_source_.find(source);
  if (it == per_source_.end()) it = per_source_.emplace(std::string(source), decltype(it->second){}).first;
  auto& count = it->second[static_cast<std::size_t>(p.reason)];
  ++count;
  if (count <= shown_per_kind_) emit_problem(source, p);
}

void Diagnostics::fatal_row_problem(std::string_view source, const RowProblem& p) {
  std::lock_guard lock(mutex_);
  emit_problem(source, p);
}

void Diagnostics::emit_message(std::string_view source, std::string_view code,
                               std::string_view message) {
  if (format_ == ErrorFormat::kJson) {
    JsonWriter j;
    j.begin_object();
    if (!source.empty()) {
      j.key("file");
      j.value(source);
    }
    j.key("code"); j.value(code);
    j.key("message"); j.value(message);
    j.end_object();
    err_ << j.str() << '\n';
  } else if (source.empty()) {
    err_ << "baroz: " << message << '\n';
  } else {
    err_ << "baroz: " << source << ": " << message << '\n';
  }
}

void Diagnostics::note(std::string_view source, std::string_view message) {
  if (quiet_) return;
  std::lock_guard lock(mutex_);
  emit_message(source, "note", message);
}

void Diagnostics::error(std::string_view message) {
  std::lock_guard lock(mutex_);
  emit_message({}, "error", message);
}

void Diagnostics::finish_source(std::string_view source) {
  std::lock_guard lock(mutex_);
  auto it = per_source_.find(source);
  if (it == per_source_.end()) return;
  for (std::size_t r = 0; r < it->second.size(); ++r) {
    const std::uint64_t n = it->second[r];
    if (n <= shown_per_kind_) continue;
    const std::uint64_t more = n - shown_per_kind_;
    const auto code = reject_code(static_cast<RejectReason>(r));
    if (format_ == ErrorFormat::kJson) {
      JsonWriter j;
      j.begin_object();
      j.key("file"); j.value(source);
      j.key("code"); j.value(code);
      j.key("more"); j.value(more);
      j.key("message");
      j.value(fmt::format("{} more rows rejected as {}", more, code));
      j.end_object();
      err_ << j.str() << '\n';
    } else {
      err_ << "baroz: " << source << ": " << more << " more row" << (more == 1 ? "" : "s")
           << " rejected as " << code << " (--rejects FILE lists them all)\n";
    }
  }
}

void Diagnostics::counts(std::string_view source, bool batch, std::uint64_t read,
                         std::uint64_t written, std::uint64_t rejected) {
  std::lock_guard lock(mutex_);
  err_ << "baroz: ";
  if (batch) err_ << source << ": ";
  err_ << read << " rows read, " << written << " written, " << rejected << " rejected\n";
}

}  // namespace baroz
