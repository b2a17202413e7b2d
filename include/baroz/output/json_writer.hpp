// A small streaming JSON (RFC 8259) emitter into a std::string, for the run
// manifest, the summary and `--error-format json`; plus the string escaper
// used by the NDJSON row writer.
#pragma once

#include <concepts>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace baroz {

/// Appends `s` to `out` as a JSON string literal, quotes included
/// (RFC 8259, section 7): '"' and '\\' are escaped, control characters
/// U+0000..U+001F become \b \f \n \r \t or \u00xx, valid UTF-8 is copied
/// unchanged, and each invalid UTF-8 sequence (maximal subpart, Unicode
/// "U+FFFD substitution") is replaced by U+FFFD so that the output is always
/// valid UTF-8 and valid JSON. No allocation beyond `out`'s growth.
void append_json_string(std::string& out, std::string_view s);

/// Appends a double as a JSON number in the shortest form that reads back to
/// the same value (std::to_chars), or `null` if it is NaN or infinite
/// (RFC 8259 has no NaN or infinity). From |v| >= 2^53 on, the shortest
/// scientific form is used (1e+16, not 10000000000000000), so that no
/// reader takes a double for a 64-bit-overflowing integer.
void append_json_number(std::string& out, double v);

enum class JsonStyle {
  kCompact,  ///< no whitespace: {"a":1,"b":[true,null]}
  kPretty,   ///< one member/element per line, 2-space indent, "key": value
};

/// Streaming JSON writer with automatic commas.
///
///   JsonWriter w(JsonStyle::kPretty);
///   w.begin_object().key("model").value("standard");
///   w.key("confidence").value(0.95).end_object();
///   write(w.str());
///
/// Misuse (a value in an object without a key, a key in an array, an
/// unbalanced end_*, a second top-level value) throws std::logic_error: it
/// is a programming error, not a user-facing one. No trailing newline is
/// written.
class JsonWriter {
 public:
  explicit JsonWriter(JsonStyle style = JsonStyle::kCompact);

  JsonWriter& begin_object();
  JsonWriter& end_object();
  JsonWriter& begin_array();
  JsonWriter& end_array();
  /// The name of the next member; must be inside an object.
  JsonWriter& key(std::string_view name);

  JsonWriter& value(std::string_view s);
  JsonWriter& value(const char* s) { return value(std::string_view(s)); }
  JsonWriter& value(const std::string& s) { return value(std::string_view(s)); }
  /// Shortest round-trip form; NaN and infinity are written as null.
  JsonWriter& value(double v);
  JsonWriter& value(bool v);
  /// Any integer type except bool and the character types, exactly.
  template <std::integral T>
    requires(!std::same_as<T, bool> && !std::same_as<T, char> &&
             !std::same_as<T, char8_t> && !std::same_as<T, char16_t> &&
             !std::same_as<T, char32_t> && !std::same_as<T, wchar_t>)
  JsonWriter& value(T v) {
    if constexpr (std::signed_integral<T>) {
      return write_int64(static_cast<std::int64_t>(v));
    } else {
      return write_uint64(static_cast<std::uint64_t>(v));
    }
  }
  JsonWriter& null();

  /// key(name) followed by value(v) / null().
  template <class T>
  JsonWriter& member(std::string_view name, const T& v) {
    key(name);
    return value(v);
  }
  JsonWriter& null_member(std::string_view name) {
    key(name);
    return null();
  }

  /// True once one complete top-level value has been written.
  bool complete() const noexcept { return stack_.empty() && done_; }
  /// The text written so far.
  const std::string& str() const noexcept { return out_; }
  /// Moves the text out and resets the writer for a new document.
  std::string take();
  /// Resets the writer for a new document (keeps the buffer's capacity).
  void clear() noexcept;

 private:
  struct Frame {
    bool is_object;
    bool empty;
  };
  JsonWriter& write_int64(std::int64_t v);
  JsonWriter& write_uint64(std::uint64_t v);
  void before_value();
  void after_value();
  void newline_indent();
  void close(bool is_object, char bracket);

  std::string out_;
  std::vector<Frame> stack_;
  JsonStyle style_;
  bool after_key_ = false;
  bool done_ = false;
};

}  // namespace baroz

// References:
//   RFC 8259, The JavaScript Object Notation (JSON) Data Interchange Format
//     (2017), sections 6 (numbers, no NaN/infinity) and 7 (strings).
//   RFC 3629, UTF-8 (2003), section 4 (well-formed byte sequences).
//   The Unicode Standard, ch. 3.9, "U+FFFD Substitution of Maximal Subparts".
