// The CSV record reader (RFC 4180), streaming with constant memory.
//
// Rules (RFC 4180 §2, with the usual extensions of sensor logs):
// - fields are separated by one delimiter: ',', ';' or tab, detected from the
//   header line (the most frequent outside quotes; ties prefer ',' then ';'
//   then tab) unless given;
// - a field that starts with '"' is quoted: it may contain the delimiter, CR
//   and LF (the record then spans several physical lines), and "" stands
//   for one '"'; a quote elsewhere in an unquoted field, or characters
//   between a closing quote and the next delimiter, are RecordProblem::kBadQuote;
// - records end with LF or CRLF; the last one may lack a line break; a lone
//   CR inside a field is data;
// - unquoted fields are taken verbatim (no trimming);
// - a UTF-8 byte order mark is skipped; '#' lines before the header are a
//   preamble (LogLayout::preamble_lines); empty lines (or a lone CR) are not
//   records, they are counted in blank_lines().
//
// Memory: a 1 MiB buffer, growing only for a single record longer than that,
// up to 16 MiB; a longer record is reported as RecordProblem::kTooLong (its
// raw text then holds only its first 1024 bytes) and skipped to the next
// physical line end.
//
// Speed: a complete unquoted record is split in one pass, 32 bytes at a time
// (SSE2 compare masks for delimiter, LF, quote and NUL); records with quotes
// take a state-machine path. No heap allocation per record after warm-up.
//
// References:
// - Y. Shafranovich, "Common Format and MIME Type for Comma-Separated Values
//   (CSV) Files", RFC 4180, IETF, 2005, §2.
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

class CsvReader final : public RecordReader {
 public:
  /// Reads the preamble and the header row from `source` (which must outlive
  /// the reader). `delimiter`: ',', ';' or '\t', or 0 to detect it.
  /// `prefix`: bytes already read from `source` (e.g. while sniffing the
  /// format), possibly starting with the byte order mark.
  /// Throws baroz::Error (input): "<name>: no header row" when the input has
  /// no non-blank, non-comment line; "<name>:<line>: header row: <problem>"
  /// for an unterminated quote, a NUL byte or a too long header line; and
  /// baroz::Error (usage) for a delimiter that is '"', CR or LF.
  CsvReader(ByteSource& source, char delimiter = 0, std::string_view prefix = {});
  ~CsvReader() override;
  CsvReader(const CsvReader&) = delete;
  CsvReader& operator=(const CsvReader&) = delete;

  bool next(Record& record) override;

 private:
  enum class ScanState : unsigned char { kFieldStart, kUnquoted, kQuoted, kQuoteInQuoted };
  enum class Scan { kComplete, kNeedMore, kTooLong };

  Scan find_record_end();
  void reset_scan();
  void parse_fields(const char* begin, const char* end);
  void parse_quoted_fields(const char* begin, const char* end);
  void add_field(std::string_view field) {
    if (field_count_ < fields_.size()) {
      fields_[field_count_] = field;
    } else if (growable_fields_) {
      fields_.push_back(field);
    } else {
      ++extra_fields_;
    }
    ++field_count_;
  }
  void skip_too_long(Record& record);
  bool fast_record(Record& record);
  bool read_record(Record& record);
  void read_header(char delimiter);

  ByteSource& source_;
  std::unique_ptr<detail::LineBuffer> buffer_;
  char delimiter_ = ',';
  std::uint64_t line_ = 1;     // physical line of the next record
  std::uint64_t records_ = 0;  // data records returned so far

  // Resumable search for the end of the current record (offsets from the
  // buffer's begin(), which is the record's start).
  std::size_t scan_ = 0;
  bool quoted_scan_ = false;  // the record has a quote: scan with the state machine
  ScanState scan_state_ = ScanState::kFieldStart;
  std::uint64_t scan_newlines_ = 0;  // line breaks inside quotes so far
  std::size_t record_size_ = 0;      // content bytes (without the line break)
  std::size_t record_consumed_ = 0;  // content plus line break

  // The current record (reused; never shrinks).
  std::vector<std::string_view> fields_;
  bool growable_fields_ = false;  // true while reading the header
  std::size_t field_count_ = 0;
  std::size_t extra_fields_ = 0;
  RecordProblem problem_ = RecordProblem::kNone;
  std::string scratch_;       // unescaped quoted fields
  std::string too_long_raw_;  // the first bytes of a too long record
};

}  // namespace baroz
