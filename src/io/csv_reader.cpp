#include "baroz/io/csv_reader.hpp"

#include <algorithm>
#include <bit>
#include <cstring>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "baroz/core/error.hpp"
#include "line_buffer.hpp"

namespace baroz {
namespace {

using detail::kMaxRecordBytes;

/// The raw text kept for a record longer than the limit (bytes).
constexpr std::size_t kTooLongRawBytes = 1024;

const char* find(const char* begin, const char* end, char c) {
  return static_cast<const char*>(std::memchr(begin, c, static_cast<std::size_t>(end - begin)));
}

std::string_view trim_blanks(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

/// The delimiter of a header line: whichever of ',', ';' and tab occurs most
/// often outside double quotes; ties (and none at all) prefer ',' then ';'
/// then tab.
char detect_delimiter(std::string_view line) {
  std::size_t comma = 0, semicolon = 0, tab = 0;
  bool quoted = false;
  for (char c : line) {
    if (c == '"') {
      quoted = !quoted;
    } else if (!quoted) {
      comma += c == ',';
      semicolon += c == ';';
      tab += c == '\t';
    }
  }
  if (comma >= semicolon && comma >= tab) return ',';
  return semicolon >= tab ? ';' : '\t';
}

}  // namespace

CsvReader::CsvReader(ByteSource& source, char delimiter, std::string_view prefix)
    : source_(source),
      buffer_(std::make_unique<detail::LineBuffer>(source, prefix, detail::kDefaultPadding)) {
  if (delimiter == '"' || delimiter == '\n' || delimiter == '\r')
    throw usage_error("a quote or a line break cannot be the delimiter");
  layout_.format = LogFormat::kCsv;
  layout_.had_bom = detail::skip_bom(*buffer_);
  read_header(delimiter);
}

CsvReader::~CsvReader() = default;

void CsvReader::reset_scan() {
  scan_ = 0;
  quoted_scan_ = false;
  scan_state_ = ScanState::kFieldStart;
  scan_newlines_ = 0;
}

// Finds the end of the record that starts at the buffer's begin(), reading
// more input as needed. On kComplete, record_size_ is the record's length
// without its line break and record_consumed_ the bytes to consume.
CsvReader::Scan CsvReader::find_record_end() {
  detail::LineBuffer& buf = *buffer_;
  for (;;) {
    const char* base = buf.begin();
    const std::size_t size = buf.size();
    const char* end = base + size;
    if (!quoted_scan_) {
      // Fast path: the record is one physical line if it has no quote.
      const char* newline = find(base + scan_, end, '\n');
      const char* stop = newline != nullptr ? newline : end;
      if (newline != nullptr || buf.eof()) {
        std::size_t length = static_cast<std::size_t>(stop - base);
        if (find(base, stop, '"') == nullptr) {
          record_consumed_ = length + (newline != nullptr ? 1 : 0);
          record_size_ = length > 0 && base[length - 1] == '\r' ? length - 1 : length;
          return Scan::kComplete;
        }
        quoted_scan_ = true;
        scan_ = 0;
        scan_state_ = ScanState::kFieldStart;
        scan_newlines_ = 0;
      } else {
        scan_ = size;
        if (size > kMaxRecordBytes + 1) return Scan::kTooLong;  // +1: a CR of a CRLF may follow
        buf.fill();
        continue;
      }
    }
    // Slow path: RFC 4180 §2 rules 5-7, a line break inside quotes is data.
    const char* p = base + scan_;
    const char* record_end = nullptr;
    ScanState state = scan_state_;
    const char delimiter = delimiter_;
    while (p < end && record_end == nullptr) {
      switch (state) {
        case ScanState::kQuoted: {
          const char* quote = find(p, end, '"');
          const char* stop = quote != nullptr ? quote : end;
          scan_newlines_ += static_cast<std::uint64_t>(std::count(p, stop, '\n'));
          if (quote == nullptr) {
            p = end;
          } else {
            p = quote + 1;
            state = ScanState::kQuoteInQuoted;
          }
          break;
        }
        case ScanState::kFieldStart: {
          char c = *p++;
          if (c == '"') {
            state = ScanState::kQuoted;
          } else if (c == '\n') {
            record_end = p - 1;
          } else if (c != delimiter) {
            state = ScanState::kUnquoted;
          }
          break;
        }
        case ScanState::kUnquoted: {
          char c = *p++;
          if (c == delimiter) {
            state = ScanState::kFieldStart;
          } else if (c == '\n') {
            record_end = p - 1;
          }
          break;
        }
        case ScanState::kQuoteInQuoted: {
          char c = *p++;
          if (c == '"') {
            state = ScanState::kQuoted;  // "" is an escaped quote
          } else if (c == delimiter) {
            state = ScanState::kFieldStart;
          } else if (c == '\n') {
            record_end = p - 1;
          } else {
            state = ScanState::kUnquoted;  // text after a closing quote (a bad quote)
          }
          break;
        }
      }
    }
    scan_state_ = state;
    if (record_end != nullptr || buf.eof()) {
      const char* stop = record_end != nullptr ? record_end : end;
      std::size_t length = static_cast<std::size_t>(stop - base);
      record_consumed_ = length + (record_end != nullptr ? 1 : 0);
      bool open_quote = record_end == nullptr && state == ScanState::kQuoted;
      record_size_ = !open_quote && length > 0 && base[length - 1] == '\r' ? length - 1 : length;
      return Scan::kComplete;
    }
    scan_ = size;
    if (size > kMaxRecordBytes + 1) return Scan::kTooLong;
    buf.fill();
  }
}

// Unquoted fields: split on the delimiter (RFC 4180 §2 rule 4).
void CsvReader::parse_fields(const char* p, const char* end) {
  const char delimiter = delimiter_;
  for (;;) {
    const char* next = find(p, end, delimiter);
    if (next == nullptr) {
      add_field(std::string_view(p, static_cast<std::size_t>(end - p)));
      return;
    }
    add_field(std::string_view(p, static_cast<std::size_t>(next - p)));
    p = next + 1;
  }
}

// A record with at least one quote (RFC 4180 §2 rules 5-7). A quoted field
// without "" is a view into the buffer; one with "" (or with text after its
// closing quote) is unescaped into scratch_, sized once for the whole record
// so that earlier views into it stay valid.
void CsvReader::parse_quoted_fields(const char* p, const char* end) {
  const std::size_t size = static_cast<std::size_t>(end - p);
  if (scratch_.size() < size) scratch_.resize(std::max(size, 2 * scratch_.size()));
  char* out = scratch_.data();
  const char delimiter = delimiter_;
  auto bad_quote = [this] {
    if (problem_ == RecordProblem::kNone) problem_ = RecordProblem::kBadQuote;
  };
  for (;;) {
    if (p < end && *p == '"') {
      const char* start = ++p;
      char* field_out = out;
      bool copied = false;
      auto copy = [&out](const char* from, const char* to) {
        std::memcpy(out, from, static_cast<std::size_t>(to - from));
        out += to - from;
      };
      std::string_view field;
      for (;;) {
        const char* quote = find(p, end, '"');
        if (quote == nullptr) {  // open at the end of the input
          problem_ = RecordProblem::kUnterminatedQuote;
          if (copied) {
            copy(p, end);
            field = std::string_view(field_out, static_cast<std::size_t>(out - field_out));
          } else {
            field = std::string_view(start, static_cast<std::size_t>(end - start));
          }
          add_field(field);
          return;
        }
        if (quote + 1 < end && quote[1] == '"') {  // "" -> "
          copy(copied ? p : start, quote);
          copied = true;
          *out++ = '"';
          p = quote + 2;
          continue;
        }
        if (copied) copy(p, quote);
        const char* text_end = quote;
        p = quote + 1;
        if (p < end && *p != delimiter) {  // text after the closing quote: keep it, flag the record
          bad_quote();
          const char* next = find(p, end, delimiter);
          const char* stop = next != nullptr ? next : end;
          if (!copied) copy(start, text_end);
          copied = true;
          copy(p, stop);
          p = stop;
        }
        field = copied ? std::string_view(field_out, static_cast<std::size_t>(out - field_out))
                       : std::string_view(start, static_cast<std::size_t>(text_end - start));
        break;
      }
      add_field(field);
    } else {
      const char* next = find(p, end, delimiter);
      const char* stop = next != nullptr ? next : end;
      if (find(p, stop, '"') != nullptr) bad_quote();  // a quote inside an unquoted field
      add_field(std::string_view(p, static_cast<std::size_t>(stop - p)));
      p = stop;
    }
    if (p == end) return;
    ++p;  // the delimiter; a field (perhaps empty) follows
  }
}

void CsvReader::skip_too_long(Record& record) {
  detail::LineBuffer& buf = *buffer_;
  too_long_raw_.assign(buf.begin(), std::min(buf.size(), kTooLongRawBytes));
  const std::uint64_t start_line = line_;
  const std::uint64_t newlines = quoted_scan_ ? scan_newlines_ : 0;
  buf.consume(buf.size());
  // Skip to the next physical line end (memory stays bounded).
  while (buf.fill()) {
    const char* newline = find(buf.begin(), buf.end(), '\n');
    if (newline != nullptr) {
      buf.consume(static_cast<std::size_t>(newline - buf.begin()) + 1);
      break;
    }
    buf.consume(buf.size());
  }
  line_ = start_line + newlines + 1;
  reset_scan();
  std::fill(fields_.begin(), fields_.end(), std::string_view());
  record.line = start_line;
  record.raw = too_long_raw_;
  record.fields = std::span<const std::string_view>(fields_.data(), fields_.size());
  record.extra_fields = 0;
  record.problem = RecordProblem::kTooLong;
  record.problem_detail = {};
}

#if defined(__SSE2__)
// The hot path: one pass over a complete, unquoted, non-blank record in the
// buffer, 32 bytes at a time, finding delimiters, the line end, quotes and
// NUL bytes together (bit masks, one bit a byte). Returns false (having
// changed nothing but fields_) for anything else: a quote or a NUL byte, a
// blank line, a record not yet complete in the buffer, a record without a
// final line break, or one over the limit; the general path handles those.
bool CsvReader::fast_record(Record& record) {
  detail::LineBuffer& buf = *buffer_;
  const char* const base = buf.begin();
  const char* const end = buf.end();
  const __m128i newline = _mm_set1_epi8('\n');
  const __m128i delimiter = _mm_set1_epi8(delimiter_);
  const __m128i quote = _mm_set1_epi8('"');
  const __m128i nul = _mm_setzero_si128();
  std::string_view* const fields = fields_.data();
  const std::size_t columns = fields_.size();
  std::size_t count = 0;
  const char* field = base;
  auto add = [&](const char* stop) {
    if (count < columns)
      fields[count] = std::string_view(field, static_cast<std::size_t>(stop - field));
    ++count;
  };
  // Loads may reach up to 31 bytes past end(): the buffer keeps
  // kDefaultPadding (>= 32) readable bytes after its end; those bits are masked.
  for (const char* p = base; p < end; p += 32) {
    const __m128i lo = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p));
    const __m128i hi = _mm_loadu_si128(reinterpret_cast<const __m128i*>(p + 16));
    auto bits = [](__m128i a, __m128i b) {
      return static_cast<std::uint32_t>(_mm_movemask_epi8(a)) |
             (static_cast<std::uint32_t>(_mm_movemask_epi8(b)) << 16);
    };
    std::uint32_t delimiters = bits(_mm_cmpeq_epi8(lo, delimiter), _mm_cmpeq_epi8(hi, delimiter));
    std::uint32_t newlines = bits(_mm_cmpeq_epi8(lo, newline), _mm_cmpeq_epi8(hi, newline));
    std::uint32_t specials = bits(_mm_or_si128(_mm_cmpeq_epi8(lo, quote), _mm_cmpeq_epi8(lo, nul)),
                                  _mm_or_si128(_mm_cmpeq_epi8(hi, quote), _mm_cmpeq_epi8(hi, nul)));
    if (end - p < 32) {
      const std::uint32_t valid = (std::uint32_t{1} << (end - p)) - 1u;
      delimiters &= valid;
      newlines &= valid;
      specials &= valid;
    }
    const std::uint32_t before_newline =
        newlines != 0 ? (newlines & -newlines) - 1u : ~std::uint32_t{0};
    if ((specials & before_newline) != 0) return false;  // a quote or a NUL byte
    delimiters &= before_newline;
    while (delimiters != 0) {
      const char* c = p + std::countr_zero(delimiters);
      delimiters &= delimiters - 1;
      add(c);
      field = c + 1;
    }
    if (newlines == 0) continue;
    const char* c = p + std::countr_zero(newlines);
    const char* stop = c > field && c[-1] == '\r' ? c - 1 : c;
    const std::size_t size = static_cast<std::size_t>(stop - base);
    if (size == 0 || size > kMaxRecordBytes) return false;
    add(stop);
    const std::size_t extra = count > columns ? count - columns : 0;
    for (std::size_t i = count; i < columns; ++i) fields[i] = std::string_view();
    record.line = line_++;
    record.raw = std::string_view(base, size);
    record.fields = std::span<const std::string_view>(fields, columns);
    record.extra_fields = extra;
    record.problem = RecordProblem::kNone;
    record.problem_detail = {};
    buf.consume(static_cast<std::size_t>(c - base) +
                1);  // the bytes stay in place until the next fill()
    return true;
  }
  return false;
}
#endif

bool CsvReader::read_record(Record& record) {
  detail::LineBuffer& buf = *buffer_;
  for (;;) {
    if (buf.size() == 0 && !buf.fill()) return false;
    if (find_record_end() == Scan::kTooLong) {
      skip_too_long(record);
      return true;
    }
    const char* base = buf.begin();
    if (record_size_ == 0) {  // an empty line (or a lone CR) is not a record
      ++blank_lines_;
      ++line_;
      buf.consume(record_consumed_);
      reset_scan();
      continue;
    }
    const std::uint64_t newlines = scan_newlines_;
    const bool quoted = quoted_scan_;
    const std::size_t size = record_size_;
    buf.consume(record_consumed_);  // the bytes stay in place until the next fill()
    reset_scan();
    record.line = line_;
    line_ += newlines + 1;
    record.extra_fields = 0;
    record.problem_detail = {};
    if (size > kMaxRecordBytes) {
      std::fill(fields_.begin(), fields_.end(), std::string_view());
      record.raw = std::string_view(base, kTooLongRawBytes);
      record.fields = std::span<const std::string_view>(fields_.data(), fields_.size());
      record.problem = RecordProblem::kTooLong;
      return true;
    }
    problem_ = RecordProblem::kNone;
    field_count_ = 0;
    extra_fields_ = 0;
    if (quoted) {
      parse_quoted_fields(base, base + size);
    } else {
      parse_fields(base, base + size);
    }
    if (problem_ != RecordProblem::kUnterminatedQuote && find(base, base + size, '\0') != nullptr)
      problem_ = RecordProblem::kBadEncoding;
    for (std::size_t i = field_count_; i < fields_.size(); ++i) fields_[i] = std::string_view();
    record.raw = std::string_view(base, size);
    record.fields = std::span<const std::string_view>(fields_.data(), fields_.size());
    record.extra_fields = extra_fields_;
    record.problem = problem_;
    return true;
  }
}

bool CsvReader::next(Record& record) {
#if defined(__SSE2__)
  if (fast_record(record)) {
    record.index = ++records_;
    return true;
  }
#endif
  if (!read_record(record)) return false;
  record.index = ++records_;
  return true;
}

void CsvReader::read_header(char delimiter) {
  detail::LineBuffer& buf = *buffer_;
  // Blank lines and the '#' preamble; stop at the first other line.
  std::size_t scanned = 0;
  for (;;) {
    const char* newline = find(buf.begin() + scanned, buf.end(), '\n');
    if (newline == nullptr && !buf.eof()) {
      scanned = buf.size();
      if (buf.size() > kMaxRecordBytes + 1)
        throw input_error(source_.name() + ":" + std::to_string(line_) +
                          ": header row: record longer than 16 MiB");
      buf.fill();
      continue;
    }
    const char* stop = newline != nullptr ? newline : buf.end();
    std::string_view text(buf.begin(), static_cast<std::size_t>(stop - buf.begin()));
    if (!text.empty() && text.back() == '\r') text.remove_suffix(1);
    if (newline == nullptr && text.empty()) throw input_error(source_.name() + ": no header row");
    if (!text.empty() && text.front() != '#') {
      delimiter_ = delimiter != 0 ? delimiter : detect_delimiter(text);
      break;
    }
    if (text.empty()) {
      ++blank_lines_;
    } else {
      ++layout_.preamble_lines;
    }
    ++line_;
    buf.consume(static_cast<std::size_t>(stop - buf.begin()) + (newline != nullptr ? 1 : 0));
    scanned = 0;
  }
  layout_.delimiter = delimiter_;
  layout_.header_line = line_;

  Record header;
  growable_fields_ = true;
  fields_.clear();
  bool got = read_record(header);
  growable_fields_ = false;
  if (!got) throw input_error(source_.name() + ": no header row");
  if (header.problem != RecordProblem::kNone && header.problem != RecordProblem::kBadQuote)
    throw input_error(source_.name() + ":" + std::to_string(header.line) +
                      ": header row: " + std::string(record_problem_text(header.problem)));
  layout_.crlf = record_consumed_ == record_size_ + 2;
  layout_.columns.clear();
  for (std::string_view name : header.fields) {
    name = trim_blanks(name);
    // A name quoted after blanks (` "time" `) reaches here with its quotes.
    if (header.problem == RecordProblem::kBadQuote && name.size() >= 2 && name.front() == '"' &&
        name.back() == '"')
      name = name.substr(1, name.size() - 2);
    layout_.columns.emplace_back(name);
  }
  fields_.resize(layout_.columns.size());
}

}  // namespace baroz
