// JsonWriter and append_json_string: escaping (RFC 8259), nesting, numbers,
// and that an independent parser (simdjson) accepts what we write.
#include <catch2/catch.hpp>

#include <simdjson.h>

#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <random>
#include <stdexcept>
#include <string>

#include "baroz/output/json_writer.hpp"

namespace {

std::string quoted(std::string_view s) {
  std::string out;
  baroz::append_json_string(out, s);
  return out;
}

/// Parses `json` with simdjson; fails the test if it is not valid JSON.
simdjson::dom::element parse(simdjson::dom::parser& parser,
                             const std::string& json) {
  simdjson::dom::element root;
  const auto error = parser.parse(json).get(root);
  INFO(json);
  REQUIRE(error == simdjson::SUCCESS);
  return root;
}

/// UTF-8 encoding of a code point (RFC 3629, section 3).
void append_utf8(std::string& out, char32_t cp) {
  if (cp < 0x80) {
    out += static_cast<char>(cp);
  } else if (cp < 0x800) {
    out += static_cast<char>(0xC0 | (cp >> 6));
    out += static_cast<char>(0x80 | (cp & 0x3F));
  } else if (cp < 0x10000) {
    out += static_cast<char>(0xE0 | (cp >> 12));
    out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
    out += static_cast<char>(0x80 | (cp & 0x3F));
  } else {
    out += static_cast<char>(0xF0 | (cp >> 18));
    out += static_cast<char>(0x80 | ((cp >> 12) & 0x3F));
    out += static_cast<char>(0x80 | ((cp >> 6) & 0x3F));
    out += static_cast<char>(0x80 | (cp & 0x3F));
  }
}

}  // namespace

TEST_CASE("json strings are escaped per RFC 8259", "[output][json]") {
  // Source: RFC 8259, section 7: '"', '\' and U+0000..U+001F must be
  // escaped; the two-character forms \b \f \n \r \t exist for those five.
  CHECK(quoted("") == R"("")");
  CHECK(quoted("plain text") == R"("plain text")");
  CHECK(quoted("a\"b") == R"("a\"b")");
  CHECK(quoted("a\\b") == R"("a\\b")");
  CHECK(quoted("\b\f\n\r\t") == R"("\b\f\n\r\t")");
  CHECK(quoted(std::string_view("\x00\x01\x1f", 3)) == R"("\u0000\u0001\u001f")");
  CHECK(quoted("/ and \x7f stay") == "\"/ and \x7f stay\"");  // need no escape
  // Valid UTF-8 is passed through unchanged.
  CHECK(quoted("h\xC3\xB6he \xC2\xB5m \xE2\x82\xAC \xF0\x9D\x84\x9E") ==
        "\"h\xC3\xB6he \xC2\xB5m \xE2\x82\xAC \xF0\x9D\x84\x9E\"");
}

TEST_CASE("invalid UTF-8 is replaced by U+FFFD per maximal subpart",
          "[output][json]") {
  const std::string r = "\xEF\xBF\xBD";  // U+FFFD
  CHECK(quoted("\xFF") == "\"" + r + "\"");
  CHECK(quoted("a\xC3") == "\"a" + r + "\"");             // truncated at end
  CHECK(quoted("\xE2\x82x") == "\"" + r + "x\"");         // one subpart
  CHECK(quoted("\xC0\xAF") == "\"" + r + r + "\"");       // overlong
  CHECK(quoted("\xED\xA0\x80") == "\"" + r + r + r + "\"");  // surrogate
  CHECK(quoted("\xF4\x90\x80\x80") == "\"" + r + r + r + r + "\"");  // > U+10FFFF
  // Source: The Unicode Standard, ch. 3.9, table "U+FFFD for maximal
  // subparts" (from memory): 61 F1 80 80 E1 80 C2 62 80 63 80 BF 64 ->
  // a FFFD FFFD FFFD b FFFD c FFFD FFFD d.
  CHECK(quoted("\x61\xF1\x80\x80\xE1\x80\xC2\x62\x80\x63\x80\xBF\x64") ==
        "\"a" + r + r + r + "b" + r + "c" + r + r + "d\"");
}

TEST_CASE("json writer nests and places commas", "[output][json]") {
  baroz::JsonWriter w;
  w.begin_object();
  w.key("a").begin_array().value(1).value(2).begin_object().null_member("b");
  w.end_object().end_array();
  w.key("c").begin_object().end_object();
  w.key("d").begin_array().end_array();
  w.member("e", true).member("f", "x").member("g", -3);
  w.end_object();
  CHECK(w.complete());
  CHECK(w.str() ==
        R"({"a":[1,2,{"b":null}],"c":{},"d":[],"e":true,"f":"x","g":-3})");

  simdjson::dom::parser parser;
  auto root = parse(parser, w.str());
  CHECK(int64_t(root["a"].at(1)) == 2);
  CHECK(root["a"].at(2)["b"].is_null());
  CHECK(bool(root["e"]));
  CHECK(std::string_view(root["f"]) == "x");
}

TEST_CASE("json writer pretty prints with a 2-space indent", "[output][json]") {
  baroz::JsonWriter w(baroz::JsonStyle::kPretty);
  w.begin_object();
  w.member("model", "standard");
  w.key("inputs").begin_array().value("a.csv").value("b.csv").end_array();
  w.key("empty").begin_object().end_object();
  w.key("nested").begin_object().member("k", 1).end_object();
  w.end_object();
  CHECK(w.str() ==
        "{\n"
        "  \"model\": \"standard\",\n"
        "  \"inputs\": [\n"
        "    \"a.csv\",\n"
        "    \"b.csv\"\n"
        "  ],\n"
        "  \"empty\": {},\n"
        "  \"nested\": {\n"
        "    \"k\": 1\n"
        "  }\n"
        "}");
  simdjson::dom::parser parser;
  auto root = parse(parser, w.str());
  CHECK(std::string_view(root["inputs"].at(1)) == "b.csv");
}

TEST_CASE("json numbers: NaN and infinity become null, integers exact",
          "[output][json]") {
  // Source: RFC 8259, section 6: "Numeric values that cannot be represented
  // in the grammar below (such as Infinity and NaN) are not permitted."
  baroz::JsonWriter w;
  w.begin_array();
  w.value(std::numeric_limits<double>::quiet_NaN());
  w.value(std::numeric_limits<double>::infinity());
  w.value(-std::numeric_limits<double>::infinity());
  w.value(std::numeric_limits<std::int64_t>::min());
  w.value(std::numeric_limits<std::int64_t>::max());
  w.value(std::numeric_limits<std::uint64_t>::max());
  w.value(0.5);
  w.value(-0.0);
  w.end_array();
  CHECK(w.str() ==
        "[null,null,null,-9223372036854775808,9223372036854775807,"
        "18446744073709551615,0.5,-0]");
  // Integral doubles print as integers only below 2^53, as documented.
  std::string big;
  baroz::append_json_number(big, 9007199254740991.0);  // 2^53 - 1
  big += ' ';
  baroz::append_json_number(big, 1e16);
  CHECK(big == "9007199254740991 1e+16");
  simdjson::dom::parser parser;
  auto root = parse(parser, w.str());
  CHECK(root.at(0).is_null());
  CHECK(int64_t(root.at(3)) == std::numeric_limits<std::int64_t>::min());
  CHECK(uint64_t(root.at(5)) == std::numeric_limits<std::uint64_t>::max());
}

TEST_CASE("json doubles round-trip exactly", "[output][json]") {
  std::mt19937_64 rng(0x15011);
  simdjson::dom::parser parser;
  long mismatches = 0;
  long parsed = 0;
  for (int i = 0; i < 200'000; ++i) {
    double v;
    const std::uint64_t bits = rng();
    std::memcpy(&v, &bits, sizeof v);
    if (i % 2 == 1) v = std::ldexp(static_cast<double>(bits >> 11), -40);  // everyday magnitudes
    if (!std::isfinite(v)) continue;
    std::string s;
    baroz::append_json_number(s, v);
    double back = 0;
    const auto res = std::from_chars(s.data(), s.data() + s.size(), back);
    if (res.ec != std::errc() || res.ptr != s.data() + s.size() ||
        std::memcmp(&back, &v, sizeof v) != 0) {
      if (++mismatches <= 5) FAIL_CHECK("from_chars does not read back " << s);
    }
    // The independent parser reads the same value (every 10th, for speed).
    if (i % 10 == 0) {
      baroz::JsonWriter w;
      w.begin_array().value(v).end_array();
      simdjson::dom::element root;
      if (parser.parse(w.str()).get(root) != simdjson::SUCCESS) {
        if (++mismatches <= 5) FAIL_CHECK("simdjson rejects " << w.str());
        continue;
      }
      double d = 0;
      if (root.at(0).get_double().get(d) != simdjson::SUCCESS || d != v) {
        if (++mismatches <= 5) FAIL_CHECK("simdjson reads back " << w.str() << " differently");
      }
      ++parsed;
    }
  }
  CHECK(parsed > 10'000);
  CHECK(mismatches == 0);
}

TEST_CASE("simdjson parses documents with arbitrary strings", "[output][json]") {
  std::mt19937_64 rng(99);
  simdjson::dom::parser parser;
  for (int doc = 0; doc < 300; ++doc) {
    // A valid UTF-8 string of random code points, control characters and
    // JSON metacharacters included; surrogates excluded (not scalar values).
    std::string text;
    const int length = static_cast<int>(rng() % 60);
    for (int k = 0; k < length; ++k) {
      char32_t cp;
      switch (rng() % 4) {
        case 0: cp = static_cast<char32_t>(rng() % 0x20); break;
        case 1: cp = U"\"\\/{}[],:"[rng() % 9]; break;
        case 2: cp = static_cast<char32_t>(0x20 + rng() % 0x60); break;
        default:
          do {
            cp = static_cast<char32_t>(rng() % 0x110000);
          } while (cp >= 0xD800 && cp <= 0xDFFF);
      }
      append_utf8(text, cp);
    }
    // Random bytes, likely invalid UTF-8: must still give valid JSON.
    std::string bytes;
    for (int k = 0; k < 40; ++k) bytes += static_cast<char>(rng() & 0xff);

    baroz::JsonWriter w(doc % 2 == 0 ? baroz::JsonStyle::kCompact
                                     : baroz::JsonStyle::kPretty);
    w.begin_object();
    w.member(text, text);  // as a key and as a value
    w.member("bytes", bytes);
    w.key("list").begin_array().value(doc).value(1.0 / (doc + 1)).null().end_array();
    w.end_object();
    auto root = parse(parser, w.str());
    CHECK(std::string_view(root[text]) == text);
    std::string_view back;
    CHECK(root["bytes"].get_string().get(back) == simdjson::SUCCESS);
    CHECK(int64_t(root["list"].at(0)) == doc);
  }
}

TEST_CASE("json writer rejects misuse", "[output][json]") {
  {
    baroz::JsonWriter w;
    w.begin_object();
    CHECK_THROWS_AS(w.value(1), std::logic_error);  // no key
  }
  {
    baroz::JsonWriter w;
    w.begin_array();
    CHECK_THROWS_AS(w.key("k"), std::logic_error);   // key in an array
    CHECK_THROWS_AS(w.end_object(), std::logic_error);
  }
  {
    baroz::JsonWriter w;
    w.begin_object().key("k");
    CHECK_THROWS_AS(w.end_object(), std::logic_error);  // key without value
  }
  {
    baroz::JsonWriter w;
    w.value(1);
    CHECK(w.complete());
    CHECK_THROWS_AS(w.value(2), std::logic_error);  // second top-level value
    const std::string text = w.take();
    CHECK(text == "1");
    w.value("again");  // take() reset the writer
    CHECK(w.str() == "\"again\"");
  }
}
