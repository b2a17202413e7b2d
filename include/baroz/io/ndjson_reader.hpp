// The NDJSON record reader: one JSON object per line, parsed with simdjson
// (On-Demand API), streaming with constant memory.
//
// Columns are the top-level keys of the first line that is a JSON object, in
// their order. Every object's values are placed by key into that order:
// - a missing key gives an absent field (data() == nullptr);
// - null gives a present, empty field;
// - a number gives its JSON text exactly as written ("1.50e3" stays "1.50e3");
// - a string gives its unescaped content ("\u00b0C" -> "°C" in UTF-8);
// - true/false give "true"/"false";
// - a nested object or array gives its raw JSON text;
// - a key that is not a column (or repeats a key already placed in this
//   object) is ignored and counted in unknown_keys().
// A line that is not a JSON object (a parse error, an array, a number,
// trailing text after the object) is a record with RecordProblem::kBadJson,
// all fields absent, and problem_detail naming the error (lower-case).
// Empty or whitespace-only lines are not records (blank_lines()); CRLF line
// ends are accepted; line numbers are physical lines. A UTF-8 byte order
// mark at the start is skipped. Lines longer than 16 MiB are
// RecordProblem::kTooLong (raw: their first 1024 bytes) and skipped.
//
// References:
// - T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange
//   Format", RFC 8259, IETF, 2017.
// - JSON Lines / NDJSON convention: one JSON text per line, separated by LF
//   (a CR before the LF is whitespace).
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/io/record.hpp"

namespace baroz {

namespace detail {
class LineBuffer;
}

class NdjsonReader final : public RecordReader {
 public:
  /// Looks ahead to the first line that is a JSON object and takes its keys
  /// as the columns; next() then starts at the first line of the input (so
  /// that the first object is record 1, and bad lines before it are
  /// reported). `source` must outlive the reader. `prefix`: bytes already
  /// read from `source`, possibly starting with the byte order mark.
  /// Throws baroz::Error (input) "<name>: no json object" when no line of
  /// the input (within its first 16 MiB) is a JSON object.
  explicit NdjsonReader(ByteSource& source, std::string_view prefix = {});
  ~NdjsonReader() override;
  NdjsonReader(const NdjsonReader&) = delete;
  NdjsonReader& operator=(const NdjsonReader&) = delete;

  bool next(Record& record) override;

  /// Object keys ignored so far because they are not columns (or repeat a
  /// key already placed in the same object).
  std::uint64_t unknown_keys() const { return unknown_keys_; }

 private:
  struct Impl;
  void read_columns();
  std::size_t column_of(std::string_view key, std::size_t ordinal) const;

  ByteSource& source_;
  std::unique_ptr<detail::LineBuffer> buffer_;
  std::unique_ptr<Impl> impl_;  // the simdjson parser
  std::uint64_t line_ = 1;
  std::uint64_t records_ = 0;
  std::uint64_t unknown_keys_ = 0;
  std::size_t scan_ = 0;  // bytes of the current line already searched for its end
  std::vector<std::string_view> fields_;
  std::string too_long_raw_;  // the first bytes of a too long line
};

}  // namespace baroz
