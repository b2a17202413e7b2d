// The reader's output: one record (a CSV row or an NDJSON object) as text
// fields in header order, before any number is parsed.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/io/byte_source.hpp"

namespace baroz {

enum class LogFormat { kAuto, kCsv, kNdjson };

/// A structural problem of a record (the row is then rejected with it).
enum class RecordProblem {
  kNone,
  kUnterminatedQuote,  ///< a quoted CSV field runs to the end of the input
  kBadQuote,           ///< characters after a closing quote, or a quote inside an unquoted field
  kTooLong,            ///< a record longer than the reader's limit (16 MiB)
  kBadJson,            ///< an NDJSON line that is not a JSON object
  kBadEncoding,        ///< a NUL byte in the record
};

/// One record. All views stay valid until the next call to next().
struct Record {
  std::uint64_t line = 0;    ///< physical 1-based line where the record starts (header = line 1 after any preamble)
  std::uint64_t index = 0;   ///< 1-based number of the data record (header excluded)
  std::string_view raw;      ///< the record's text without its final line break
  /// Field values in header order (quotes removed, "" unescaped; NDJSON
  /// strings unescaped, numbers as their JSON text, null as empty). A field
  /// absent from the record (short CSV row, missing NDJSON key) has
  /// data() == nullptr; a present but empty field has data() != nullptr.
  std::span<const std::string_view> fields;
  std::size_t extra_fields = 0;  ///< CSV fields beyond the header's count (0 for NDJSON)
  RecordProblem problem = RecordProblem::kNone;
  std::string_view problem_detail;  ///< e.g. the simdjson error text
};

/// What the reader found before the first record.
struct LogLayout {
  LogFormat format = LogFormat::kCsv;
  char delimiter = ',';           ///< CSV only: ',', ';' or '\t'
  bool had_bom = false;           ///< a UTF-8 byte order mark was skipped
  bool crlf = false;              ///< the header line ended in CRLF
  std::uint64_t preamble_lines = 0;  ///< '#' comment lines before the header
  std::uint64_t header_line = 1;  ///< physical line of the header (CSV) or of the first object (NDJSON)
  std::vector<std::string> columns;  ///< column names (CSV header, or the first NDJSON object's keys), in order
};

/// Streams records from a ByteSource with constant memory, whatever the
/// input's size, and without a heap allocation per record.
class RecordReader {
 public:
  virtual ~RecordReader() = default;
  const LogLayout& layout() const { return layout_; }
  /// Fills `record` with the next record; false at end of input. Blank lines
  /// are not records (they are counted in blank_lines()).
  virtual bool next(Record& record) = 0;
  std::uint64_t blank_lines() const { return blank_lines_; }

 protected:
  LogLayout layout_;
  std::uint64_t blank_lines_ = 0;
};

/// Options for opening a log.
struct ReaderOptions {
  LogFormat format = LogFormat::kAuto;  ///< kAuto: from the file extension of `source.name()`, else sniffed
  char delimiter = 0;                   ///< 0: detect from the header among ',', ';', '\t'
};

/// Reads the header (CSV) or first object (NDJSON) and returns a reader
/// positioned at the first record. Throws baroz::Error (input) when the input
/// is empty or has no header, naming the source.
std::unique_ptr<RecordReader> open_record_reader(ByteSource& source,
                                                 const ReaderOptions& options);

std::string_view record_problem_text(RecordProblem problem);

}  // namespace baroz
