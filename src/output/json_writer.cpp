// Streaming JSON emitter; see json_writer.hpp.
#include "baroz/output/json_writer.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <stdexcept>
#include <utility>

namespace baroz {
namespace {

// Byte classes for the string escaper.
enum : unsigned char {
  kPlain = 0,    // copied as is
  kEscape = 1,   // '"', '\\' or a control character
  kNonAscii = 2  // first byte of a (possibly invalid) UTF-8 sequence
};

constexpr std::array<unsigned char, 256> kByteClass = [] {
  std::array<unsigned char, 256> table{};
  for (int b = 0; b < 0x20; ++b) table[b] = kEscape;
  table['"'] = kEscape;
  table['\\'] = kEscape;
  for (int b = 0x80; b < 0x100; ++b) table[b] = kNonAscii;
  return table;
}();

constexpr std::string_view kReplacementCharacter = "\xEF\xBF\xBD";  // U+FFFD

/// Length of the well-formed UTF-8 sequence starting at s[i] (a byte >=
/// 0x80), or minus the length of its maximal invalid subpart (>= 1).
/// RFC 3629, section 4; The Unicode Standard, Table 3-7.
int utf8_sequence(std::string_view s, std::size_t i) {
  const auto lead = static_cast<unsigned char>(s[i]);
  int length;
  unsigned char lo = 0x80, hi = 0xBF;  // allowed range of the second byte
  if (lead >= 0xC2 && lead <= 0xDF) {
    length = 2;
  } else if (lead >= 0xE0 && lead <= 0xEF) {
    length = 3;
    if (lead == 0xE0) lo = 0xA0;  // no overlong forms
    if (lead == 0xED) hi = 0x9F;  // no surrogates U+D800..U+DFFF
  } else if (lead >= 0xF0 && lead <= 0xF4) {
    length = 4;
    if (lead == 0xF0) lo = 0x90;  // no overlong forms
    if (lead == 0xF4) hi = 0x8F;  // nothing above U+10FFFF
  } else {
    return -1;  // 0x80..0xC1 or 0xF5..0xFF can never start a sequence
  }
  for (int k = 1; k < length; ++k) {
    if (i + static_cast<std::size_t>(k) >= s.size()) return -k;
    const auto b = static_cast<unsigned char>(s[i + static_cast<std::size_t>(k)]);
    const unsigned char min = k == 1 ? lo : 0x80;
    const unsigned char max = k == 1 ? hi : 0xBF;
    if (b < min || b > max) return -k;
  }
  return length;
}

void append_escape(std::string& out, unsigned char c) {
  switch (c) {
    case '"': out += "\\\""; return;
    case '\\': out += "\\\\"; return;
    case '\b': out += "\\b"; return;
    case '\f': out += "\\f"; return;
    case '\n': out += "\\n"; return;
    case '\r': out += "\\r"; return;
    case '\t': out += "\\t"; return;
    default: {
      static constexpr char kHex[] = "0123456789abcdef";
      const char esc[6] = {'\\', 'u', '0', '0', kHex[c >> 4], kHex[c & 0x0f]};
      out.append(esc, sizeof esc);
      return;
    }
  }
}

[[noreturn]] void misuse(const char* what) {
  throw std::logic_error(std::string("json writer: ") + what);
}

}  // namespace

void append_json_string(std::string& out, std::string_view s) {
  out += '"';
  std::size_t run_start = 0;
  std::size_t i = 0;
  while (i < s.size()) {
    const auto c = static_cast<unsigned char>(s[i]);
    const unsigned char cls = kByteClass[c];
    if (cls == kPlain) {
      ++i;
      continue;
    }
    if (cls == kNonAscii) {
      const int n = utf8_sequence(s, i);
      if (n > 0) {  // valid: stays in the current run
        i += static_cast<std::size_t>(n);
        continue;
      }
      out.append(s.data() + run_start, i - run_start);
      out += kReplacementCharacter;
      i += static_cast<std::size_t>(-n);
      run_start = i;
      continue;
    }
    out.append(s.data() + run_start, i - run_start);
    append_escape(out, c);
    ++i;
    run_start = i;
  }
  out.append(s.data() + run_start, s.size() - run_start);
  out += '"';
}

void append_json_number(std::string& out, double v) {
  if (!std::isfinite(v)) {  // RFC 8259, section 6: no NaN or infinity
    out += "null";
    return;
  }
  char buf[32];  // the longest shortest form, e.g. -2.2250738585072014e-308, is 24
  // Beyond 2^53 the shortest form may be a long integer literal such as
  // -15804881998072791040, which many parsers (simdjson, or Python's json,
  // which makes it an int) do not read as a double; the shortest scientific
  // form ("-1.580488199807279e+19") round-trips just as exactly.
  const bool huge = std::fabs(v) >= 0x1p53;
  char* end = huge ? std::to_chars(buf, buf + sizeof buf, v,
                                   std::chars_format::scientific)
                         .ptr
                   : std::to_chars(buf, buf + sizeof buf, v).ptr;
  out.append(buf, end);
}

JsonWriter::JsonWriter(JsonStyle style) : style_(style) {}

void JsonWriter::newline_indent() {
  out_ += '\n';
  out_.append(2 * stack_.size(), ' ');
}

void JsonWriter::before_value() {
  if (stack_.empty()) {
    if (done_) misuse("a second top-level value");
    return;
  }
  Frame& top = stack_.back();
  if (top.is_object) {
    if (!after_key_) misuse("a value in an object without a key");
    after_key_ = false;
    return;
  }
  if (!top.empty) out_ += ',';
  top.empty = false;
  if (style_ == JsonStyle::kPretty) newline_indent();
}

void JsonWriter::after_value() {
  if (stack_.empty()) done_ = true;
}

JsonWriter& JsonWriter::begin_object() {
  before_value();
  out_ += '{';
  stack_.push_back({true, true});
  return *this;
}

JsonWriter& JsonWriter::begin_array() {
  before_value();
  out_ += '[';
  stack_.push_back({false, true});
  return *this;
}

void JsonWriter::close(bool is_object, char bracket) {
  if (stack_.empty() || stack_.back().is_object != is_object) {
    misuse(is_object ? "end_object without an open object"
                     : "end_array without an open array");
  }
  if (after_key_) misuse("a key without a value");
  const bool was_empty = stack_.back().empty;
  stack_.pop_back();
  if (style_ == JsonStyle::kPretty && !was_empty) newline_indent();
  out_ += bracket;
  after_value();
}

JsonWriter& JsonWriter::end_object() {
  close(true, '}');
  return *this;
}

JsonWriter& JsonWriter::end_array() {
  close(false, ']');
  return *this;
}

JsonWriter& JsonWriter::key(std::string_view name) {
  if (stack_.empty() || !stack_.back().is_object) misuse("a key outside an object");
  if (after_key_) misuse("two keys in a row");
  Frame& top = stack_.back();
  if (!top.empty) out_ += ',';
  top.empty = false;
  if (style_ == JsonStyle::kPretty) newline_indent();
  append_json_string(out_, name);
  out_ += ':';
  if (style_ == JsonStyle::kPretty) out_ += ' ';
  after_key_ = true;
  return *this;
}

JsonWriter& JsonWriter::value(std::string_view s) {
  before_value();
  append_json_string(out_, s);
  after_value();
  return *this;
}

JsonWriter& JsonWriter::value(double v) {
  before_value();
  append_json_number(out_, v);
  after_value();
  return *this;
}

JsonWriter& JsonWriter::value(bool v) {
  before_value();
  out_ += v ? "true" : "false";
  after_value();
  return *this;
}

JsonWriter& JsonWriter::null() {
  before_value();
  out_ += "null";
  after_value();
  return *this;
}

JsonWriter& JsonWriter::write_int64(std::int64_t v) {
  before_value();
  char buf[24];
  out_.append(buf, std::to_chars(buf, buf + sizeof buf, v).ptr);
  after_value();
  return *this;
}

JsonWriter& JsonWriter::write_uint64(std::uint64_t v) {
  before_value();
  char buf[24];
  out_.append(buf, std::to_chars(buf, buf + sizeof buf, v).ptr);
  after_value();
  return *this;
}

std::string JsonWriter::take() {
  std::string result = std::move(out_);
  out_.clear();
  stack_.clear();
  after_key_ = false;
  done_ = false;
  return result;
}

void JsonWriter::clear() noexcept {
  out_.clear();
  stack_.clear();
  after_key_ = false;
  done_ = false;
}

}  // namespace baroz
