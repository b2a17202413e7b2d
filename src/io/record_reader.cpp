// open_record_reader: chooses the reader (CSV or NDJSON) for a source.
#include <algorithm>
#include <string>

#include "baroz/io/csv_reader.hpp"
#include "baroz/io/ndjson_reader.hpp"
#include "baroz/io/record.hpp"

namespace baroz {
namespace {

/// At most this many bytes are read to sniff the format (bytes).
constexpr std::size_t kSniffBytes = std::size_t{1} << 20;

/// The format implied by a file name's extension (case-insensitive), or
/// kAuto when there is none or it is not known.
LogFormat format_from_name(const std::string& name) {
  std::size_t slash = name.find_last_of('/');
  std::size_t dot = name.find_last_of('.');
  if (dot == std::string::npos || (slash != std::string::npos && dot < slash))
    return LogFormat::kAuto;
  std::string extension = name.substr(dot + 1);
  for (char& c : extension)
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  if (extension == "csv" || extension == "tsv" || extension == "txt" || extension == "dat")
    return LogFormat::kCsv;
  if (extension == "ndjson" || extension == "jsonl" || extension == "json")
    return LogFormat::kNdjson;
  return LogFormat::kAuto;
}

bool is_blank(char c) {
  return c == ' ' || c == '\t' || c == '\r' || c == '\n';
}

/// Reads from `source` into `prefix` until its first non-blank byte after an
/// optional UTF-8 byte order mark is known (or the input ends, or
/// kSniffBytes were read); the format is NDJSON if that byte is '{'.
LogFormat sniff(ByteSource& source, std::string& prefix) {
  static constexpr std::string_view kBom = "\xEF\xBB\xBF";
  prefix.resize(kSniffBytes);
  std::size_t have = 0;
  LogFormat format = LogFormat::kCsv;
  for (;;) {
    std::string_view text(prefix.data(), have);
    // Wait until it is known whether a byte order mark is there.
    bool bom_known = have >= kBom.size() || kBom.substr(0, have) != text;
    if (bom_known) {
      std::size_t start = text.substr(0, kBom.size()) == kBom ? kBom.size() : 0;
      auto first =
          std::find_if_not(text.begin() + static_cast<std::ptrdiff_t>(start), text.end(), is_blank);
      if (first != text.end()) {
        format = *first == '{' ? LogFormat::kNdjson : LogFormat::kCsv;
        break;
      }
    }
    if (have == prefix.size()) break;
    std::size_t n = source.read(prefix.data() + have, prefix.size() - have);
    if (n == 0) break;
    have += n;
  }
  prefix.resize(have);
  return format;
}

}  // namespace

std::unique_ptr<RecordReader> open_record_reader(ByteSource& source, const ReaderOptions& options) {
  LogFormat format = options.format;
  if (format == LogFormat::kAuto) format = format_from_name(source.name());
  std::string prefix;
  if (format == LogFormat::kAuto) format = sniff(source, prefix);
  if (format == LogFormat::kNdjson) return std::make_unique<NdjsonReader>(source, prefix);
  return std::make_unique<CsvReader>(source, options.delimiter, prefix);
}

std::string_view record_problem_text(RecordProblem problem) {
  switch (problem) {
    case RecordProblem::kNone:
      return "";
    case RecordProblem::kUnterminatedQuote:
      return "unterminated quoted field";
    case RecordProblem::kBadQuote:
      return "stray quote in field";
    case RecordProblem::kTooLong:
      return "record longer than 16 MiB";
    case RecordProblem::kBadJson:
      return "not a json object";
    case RecordProblem::kBadEncoding:
      return "nul byte in record";
  }
  return "";
}

}  // namespace baroz
