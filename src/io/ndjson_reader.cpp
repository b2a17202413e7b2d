#include "baroz/io/ndjson_reader.hpp"

#include <algorithm>
#include <array>
#include <cstring>
#include <utility>

#include <simdjson.h>

#include "baroz/core/error.hpp"
#include "line_buffer.hpp"

namespace baroz {
namespace {

namespace od = simdjson::ondemand;
using detail::kMaxRecordBytes;

/// The raw text kept for a line longer than the limit (bytes).
constexpr std::size_t kTooLongRawBytes = 1024;
/// The parser's initial capacity (bytes); it grows for longer lines.
constexpr std::size_t kInitialParserCapacity = std::size_t{64} << 10;
constexpr std::string_view kEmpty = "";  // null: present but empty (data() != nullptr)

const char* find(const char* begin, const char* end, char c) {
  return static_cast<const char*>(std::memchr(begin, c, static_cast<std::size_t>(end - begin)));
}

bool is_json_blank(char c) {
  return c == ' ' || c == '\t' || c == '\r' || c == '\n';
}

bool is_blank_line(std::string_view text) {
  return std::all_of(text.begin(), text.end(), is_json_blank);
}

bool is_digit(char c) {
  return c >= '0' && c <= '9';
}

/// True if `s` is a JSON number (RFC 8259 §6):
/// [ minus ] int [ frac ] [ exp ], int = zero / ( digit1-9 *DIGIT ).
bool is_json_number(std::string_view s) {
  std::size_t i = 0;
  const std::size_t n = s.size();
  if (i < n && s[i] == '-') ++i;
  if (i >= n) return false;
  if (s[i] == '0') {
    ++i;
  } else if (s[i] >= '1' && s[i] <= '9') {
    while (i < n && is_digit(s[i])) ++i;
  } else {
    return false;
  }
  if (i < n && s[i] == '.') {
    std::size_t start = ++i;
    while (i < n && is_digit(s[i])) ++i;
    if (i == start) return false;
  }
  if (i < n && (s[i] == 'e' || s[i] == 'E')) {
    ++i;
    if (i < n && (s[i] == '+' || s[i] == '-')) ++i;
    std::size_t start = i;
    while (i < n && is_digit(s[i])) ++i;
    if (i == start) return false;
  }
  return i == n;
}

/// simdjson's message for `error`, lower-case and without a trailing period
/// (computed once; the views stay valid for the program's life).
std::string_view error_text(simdjson::error_code error) {
  static const std::array<std::string, simdjson::NUM_ERROR_CODES> kTexts = [] {
    std::array<std::string, simdjson::NUM_ERROR_CODES> texts;
    for (int i = 0; i < simdjson::NUM_ERROR_CODES; ++i) {
      std::string text = simdjson::error_message(static_cast<simdjson::error_code>(i));
      for (char& c : text)
        if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
      while (!text.empty() && (text.back() == '.' || text.back() == ' ')) text.pop_back();
      texts[static_cast<std::size_t>(i)] = std::move(text);
    }
    return texts;
  }();
  auto index = static_cast<std::size_t>(error);
  return index < kTexts.size() ? std::string_view(kTexts[index]) : std::string_view("json error");
}

std::string_view found_text(od::json_type type) {
  switch (type) {
    case od::json_type::array:
      return "found an array";
    case od::json_type::object:
      return "found an object";
    case od::json_type::number:
      return "found a number";
    case od::json_type::string:
      return "found a string";
    case od::json_type::boolean:
      return "found a boolean";
    case od::json_type::null:
      return "found null";
  }
  return "found another json value";
}

/// The text of one value as a field (see ndjson_reader.hpp); returns a
/// simdjson error for an invalid value.
simdjson::error_code value_text(od::value value, std::string_view& text) {
  od::json_type type;
  if (auto error = value.type().get(type)) return error;
  switch (type) {
    case od::json_type::object: {
      od::object object;
      if (auto error = value.get_object().get(object)) return error;
      return object.raw_json().get(text);
    }
    case od::json_type::array: {
      od::array array;
      if (auto error = value.get_array().get(array)) return error;
      return array.raw_json().get(text);
    }
    case od::json_type::number: {
      // The token as written, so that the time column can be echoed as given.
      text = value.raw_json_token();
      while (!text.empty() && is_json_blank(text.back())) text.remove_suffix(1);
      return is_json_number(text) ? simdjson::SUCCESS : simdjson::NUMBER_ERROR;
    }
    case od::json_type::string:
      return value.get_string().get(text);
    case od::json_type::boolean: {
      bool b = false;
      if (auto error = value.get_bool().get(b)) return error;
      text = b ? std::string_view("true") : std::string_view("false");
      return simdjson::SUCCESS;
    }
    case od::json_type::null: {
      bool is_null = false;
      if (auto error = value.is_null().get(is_null)) return error;
      text = kEmpty;
      return is_null ? simdjson::SUCCESS : simdjson::N_ATOM_ERROR;
    }
  }
  return simdjson::INCORRECT_TYPE;
}

/// Parses `len` bytes at `text` (with `allocated` readable bytes from
/// `text`) as one JSON object and calls on_field(key, ordinal, value_text)
/// for each member. Returns an empty view on success, else the problem.
template <typename OnField>
std::string_view parse_object(od::parser& parser, const char* text, std::size_t len,
                              std::size_t allocated, OnField&& on_field) {
  od::document doc;
  if (auto error = parser.iterate(text, len, allocated).get(doc)) return error_text(error);
  od::json_type type;
  if (auto error = doc.type().get(type)) return error_text(error);
  if (type != od::json_type::object) return found_text(type);
  od::object object;
  if (auto error = doc.get_object().get(object)) return error_text(error);
  std::size_t ordinal = 0;
  for (auto member : object) {
    od::field field;
    if (auto error = std::move(member).get(field)) return error_text(error);
    std::string_view key;
    if (auto error = field.unescaped_key().get(key)) return error_text(error);
    std::string_view value;
    if (auto error = value_text(field.value(), value)) return error_text(error);
    on_field(key, ordinal++, value);
  }
  // Anything after the object's closing brace is an error (one JSON text a line).
  const char* location = nullptr;
  if (doc.current_location().get(location) == simdjson::SUCCESS)
    return error_text(simdjson::TRAILING_CONTENT);
  return {};
}

}  // namespace

struct NdjsonReader::Impl {
  od::parser parser;
};

NdjsonReader::NdjsonReader(ByteSource& source, std::string_view prefix)
    : source_(source),
      buffer_(std::make_unique<detail::LineBuffer>(
          source, prefix,
          std::max<std::size_t>(detail::kDefaultPadding, simdjson::SIMDJSON_PADDING))),
      impl_(std::make_unique<Impl>()) {
  // A failure here shows again, as an error, at iterate().
  simdjson::error_code status = impl_->parser.allocate(kInitialParserCapacity);
  (void)status;
  layout_.format = LogFormat::kNdjson;
  layout_.had_bom = detail::skip_bom(*buffer_);
  read_columns();
}

NdjsonReader::~NdjsonReader() = default;

void NdjsonReader::read_columns() {
  detail::LineBuffer& buf = *buffer_;
  std::size_t offset = 0;  // start of the line being looked at (nothing is consumed)
  std::size_t scanned = 0;
  std::uint64_t line = line_;
  for (;;) {
    const char* base = buf.begin();
    const char* newline = find(base + offset + scanned, buf.end(), '\n');
    if (newline == nullptr && !buf.eof()) {
      scanned = buf.size() - offset;
      if (buf.size() > kMaxRecordBytes + 1) break;  // look no further than the record limit
      buf.fill();
      continue;
    }
    const char* start = base + offset;
    const char* stop = newline != nullptr ? newline : buf.end();
    std::size_t length = static_cast<std::size_t>(stop - start);
    std::string_view text(start, length);
    if (!is_blank_line(text) && find(start, stop, '\0') == nullptr) {
      std::vector<std::string> keys;
      std::string_view problem = parse_object(
          impl_->parser, start, length, buf.readable() - offset,
          [&keys](std::string_view key, std::size_t, std::string_view) { keys.emplace_back(key); });
      if (problem.empty()) {
        layout_.columns = std::move(keys);
        layout_.header_line = line;
        layout_.crlf = length > 0 && text.back() == '\r';
        fields_.assign(layout_.columns.size(), std::string_view());
        return;
      }
    }
    if (newline == nullptr) break;  // end of input
    offset += length + 1;
    scanned = 0;
    ++line;
  }
  throw input_error(source_.name() + ": no json object");
}

std::size_t NdjsonReader::column_of(std::string_view key, std::size_t ordinal) const {
  const std::vector<std::string>& columns = layout_.columns;
  // Most logs keep the first object's key order: try the same position first.
  if (ordinal < columns.size() && fields_[ordinal].data() == nullptr && columns[ordinal] == key)
    return ordinal;
  for (std::size_t i = 0; i < columns.size(); ++i)
    if (fields_[i].data() == nullptr && columns[i] == key) return i;
  return columns.size();
}

bool NdjsonReader::next(Record& record) {
  detail::LineBuffer& buf = *buffer_;
  for (;;) {
    if (buf.size() == 0 && !buf.fill()) return false;
    const char* newline = find(buf.begin() + scan_, buf.end(), '\n');
    if (newline == nullptr && !buf.eof()) {
      scan_ = buf.size();
      if (buf.size() >
          kMaxRecordBytes + 1) {  // too long: keep its start, skip to the next line end
        too_long_raw_.assign(buf.begin(), kTooLongRawBytes);
        buf.consume(buf.size());
        while (buf.fill()) {
          const char* end_of_line = find(buf.begin(), buf.end(), '\n');
          if (end_of_line != nullptr) {
            buf.consume(static_cast<std::size_t>(end_of_line - buf.begin()) + 1);
            break;
          }
          buf.consume(buf.size());
        }
        scan_ = 0;
        std::fill(fields_.begin(), fields_.end(), std::string_view());
        record.line = line_++;
        record.index = ++records_;
        record.raw = too_long_raw_;
        record.fields = std::span<const std::string_view>(fields_.data(), fields_.size());
        record.extra_fields = 0;
        record.problem = RecordProblem::kTooLong;
        record.problem_detail = {};
        return true;
      }
      buf.fill();
      continue;
    }
    scan_ = 0;
    const char* base = buf.begin();
    const char* stop = newline != nullptr ? newline : buf.end();
    const std::size_t length = static_cast<std::size_t>(stop - base);
    const std::size_t allocated = buf.readable();
    std::string_view text(base, length);
    if (!text.empty() && text.back() == '\r') text.remove_suffix(1);
    buf.consume(length +
                (newline != nullptr ? 1 : 0));  // the bytes stay in place until the next fill()
    if (is_blank_line(text)) {
      ++blank_lines_;
      ++line_;
      continue;
    }
    record.line = line_++;
    record.index = ++records_;
    record.extra_fields = 0;
    record.problem = RecordProblem::kNone;
    record.problem_detail = {};
    std::fill(fields_.begin(), fields_.end(), std::string_view());
    record.fields = std::span<const std::string_view>(fields_.data(), fields_.size());
    if (text.size() > kMaxRecordBytes) {
      record.raw = text.substr(0, kTooLongRawBytes);
      record.problem = RecordProblem::kTooLong;
      return true;
    }
    record.raw = text;
    if (find(text.data(), text.data() + text.size(), '\0') != nullptr) {
      record.problem = RecordProblem::kBadEncoding;
      return true;
    }
    std::uint64_t ignored = 0;
    std::string_view problem = parse_object(
        impl_->parser, text.data(), text.size(), allocated,
        [this, &ignored](std::string_view key, std::size_t ordinal, std::string_view value) {
          std::size_t column = column_of(key, ordinal);
          if (column == fields_.size()) {
            ++ignored;
          } else {
            fields_[column] = value.data() != nullptr ? value : kEmpty;
          }
        });
    if (!problem.empty()) {
      std::fill(fields_.begin(), fields_.end(), std::string_view());
      record.problem = RecordProblem::kBadJson;
      record.problem_detail = problem;
      return true;
    }
    unknown_keys_ += ignored;
    return true;
  }
}

}  // namespace baroz
