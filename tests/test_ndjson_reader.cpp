// The NDJSON record reader (io/ndjson_reader.hpp).
//
// JSON rules from RFC 8259 (Bray, "The JavaScript Object Notation (JSON) Data
// Interchange Format", IETF 2017): §4 objects, §6 number grammar, §7 string
// escapes (\uXXXX is a UTF-16 code unit; U+00B0 DEGREE SIGN is C2 B0 in
// UTF-8, RFC 3629 §3). Line framing from the NDJSON / JSON Lines convention:
// one JSON text per line, LF separated, a CR before the LF tolerated.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cstdint>
#include <optional>
#include <random>
#include <string>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/io/byte_source.hpp"
#include "baroz/io/ndjson_reader.hpp"
#include "baroz/io/record.hpp"

using baroz::ByteSource;
using baroz::LogFormat;
using baroz::NdjsonReader;
using baroz::Record;
using baroz::RecordProblem;

namespace {

using Fields = std::vector<std::optional<std::string>>;

/// Hands out its data `chunk` bytes per read at most (cycling the sizes).
class ChunkedSource : public ByteSource {
 public:
  ChunkedSource(std::string data, std::vector<std::size_t> chunks)
      : ByteSource("<test>"), data_(std::move(data)), chunks_(std::move(chunks)) {}

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    std::size_t n =
        std::min({capacity, chunks_[next_++ % chunks_.size()], data_.size() - position_});
    std::copy_n(data_.data() + position_, n, buffer);
    position_ += n;
    return n;
  }

 private:
  std::string data_;
  std::vector<std::size_t> chunks_;
  std::size_t next_ = 0;
  std::size_t position_ = 0;
};

struct Row {
  std::uint64_t line = 0;
  std::uint64_t index = 0;
  std::string raw;
  Fields fields;
  RecordProblem problem = RecordProblem::kNone;
  std::string detail;
  bool operator==(const Row&) const = default;
};

std::vector<Row> read_all(baroz::RecordReader& reader) {
  std::vector<Row> rows;
  Record r;
  bool no_extra_fields = true;
  while (reader.next(r)) {
    Row row{r.line, r.index, std::string(r.raw), {}, r.problem, std::string(r.problem_detail)};
    for (std::string_view f : r.fields)
      row.fields.push_back(f.data() == nullptr ? std::nullopt : std::optional<std::string>(f));
    no_extra_fields = no_extra_fields && r.extra_fields == 0;
    rows.push_back(std::move(row));
  }
  CHECK(no_extra_fields);
  return rows;
}

std::vector<Row> read_ndjson(const std::string& text) {
  auto source = baroz::make_string_source(text, "t.ndjson");
  NdjsonReader reader(*source);
  return read_all(reader);
}

}  // namespace

TEST_CASE("ndjson reader takes the columns from the first object, in order", "[io][ndjson]") {
  auto source = baroz::make_string_source(
      "{\"time\":1,\"pressure\":1013.25,\"temp\":15}\n"
      "{\"temp\":14.5,\"time\":2,\"pressure\":1013.2}\n"  // other order: placed by key
      "{\"time\":3,\"extra\":true,\"pressure\":1013.1,\"more\":0}\n",
      "f.ndjson");
  NdjsonReader reader(*source);
  CHECK(reader.layout().format == LogFormat::kNdjson);
  CHECK(reader.layout().columns == std::vector<std::string>{"time", "pressure", "temp"});
  CHECK(reader.layout().header_line == 1);
  std::vector<Row> rows = read_all(reader);
  REQUIRE(rows.size() == 3);
  CHECK(rows[0].fields == Fields{"1", "1013.25", "15"});
  CHECK(rows[0].line == 1);
  CHECK(rows[0].index == 1);
  CHECK(rows[0].raw == "{\"time\":1,\"pressure\":1013.25,\"temp\":15}");
  CHECK(rows[1].fields == Fields{"2", "1013.2", "14.5"});
  CHECK(rows[2].fields == Fields{"3", "1013.1", std::nullopt});  // missing key: absent
  CHECK(rows[2].index == 3);
  CHECK(reader.unknown_keys() == 2);
}

TEST_CASE("ndjson reader: value kinds become field text", "[io][ndjson]") {
  std::vector<Row> rows = read_ndjson(
      "{\"t\": 1.50e3 , \"s\":\"\\u00b0C \\\"q\\\" \\\\\", \"n\":null, \"b\":true, \"f\":false, "
      "\"o\":{\"x\":[1,2]}, \"a\":[1, {\"y\":2}], \"neg\":-0.0, \"e\":\"\"}\n");
  REQUIRE(rows.size() == 1);
  const Fields& f = rows[0].fields;
  REQUIRE(f.size() == 9);
  CHECK(f[0] == "1.50e3");  // numbers echoed exactly as written
  CHECK(f[1] ==
        "\xC2\xB0"
        "C \"q\" \\");
  CHECK(f[2] == "");  // null: present but empty
  CHECK(f[3] == "true");
  CHECK(f[4] == "false");
  CHECK(f[5] == "{\"x\":[1,2]}");
  CHECK(f[6] == "[1, {\"y\":2}]");
  CHECK(f[7] == "-0.0");
  CHECK(f[8] == "");
  CHECK(rows[0].problem == RecordProblem::kNone);
}

TEST_CASE("ndjson reader: a line that is not a JSON object is kBadJson", "[io][ndjson]") {
  std::vector<Row> rows = read_ndjson(
      "{\"a\":1,\"b\":2}\n"    // 1
      "{\"a\":1,\"b\":}\n"     // 2: parse error
      "[1,2]\n"                // 3: an array
      "42\n"                   // 4: a number
      "{\"a\":1} {\"b\":2}\n"  // 5: trailing content
      "{\"a\":01,\"b\":2}\n"   // 6: not a JSON number (RFC 8259 §6: no leading zeros)
      "{\"a\":\"open\n"        // 7: string never closed
      "{\"a\":3,\"b\":4}\n");  // 8
  REQUIRE(rows.size() == 8);
  for (std::size_t i = 1; i < 7; ++i) {
    INFO("line " << rows[i].line << ": " << rows[i].raw);
    CHECK(rows[i].problem == RecordProblem::kBadJson);
    CHECK(rows[i].fields == Fields{std::nullopt, std::nullopt});
    CHECK_FALSE(rows[i].detail.empty());
    CHECK(std::none_of(rows[i].detail.begin(), rows[i].detail.end(),
                       [](char c) { return c >= 'A' && c <= 'Z'; }));
    CHECK(rows[i].detail.back() != '.');
    CHECK(rows[i].line == i + 1);
  }
  CHECK(rows[2].detail == "found an array");
  CHECK(rows[3].detail == "found a number");
  CHECK(rows[4].detail == "unexpected trailing content in the json input");
  CHECK(rows[6].raw == "{\"a\":\"open");
  CHECK(rows[7].problem == RecordProblem::kNone);
  CHECK(rows[7].fields == Fields{"3", "4"});
  CHECK(rows[7].line == 8);
}

TEST_CASE("ndjson reader: columns come from the first line that is an object", "[io][ndjson]") {
  auto source = baroz::make_string_source("\n# not json\n{\"p\":1}\n{\"p\":2}\n", "x.ndjson");
  NdjsonReader reader(*source);
  CHECK(reader.layout().columns == std::vector<std::string>{"p"});
  CHECK(reader.layout().header_line == 3);
  std::vector<Row> rows = read_all(reader);
  REQUIRE(rows.size() == 3);
  CHECK(rows[0].problem == RecordProblem::kBadJson);  // reported, not lost
  CHECK(rows[0].line == 2);
  CHECK(rows[1].fields == Fields{"1"});
  CHECK(rows[1].line == 3);
  CHECK(rows[2].fields == Fields{"2"});
  CHECK(reader.blank_lines() == 1);
}

TEST_CASE("ndjson reader: CRLF, blank lines and a BOM", "[io][ndjson]") {
  auto source = baroz::make_string_source(
      "\xEF\xBB\xBF{\"a\":1,\"b\":\"x\"}\r\n\r\n  \n{\"a\":2,\"b\":\"y\"}\r\n{\"a\":3}",
      "c.ndjson");
  NdjsonReader reader(*source);
  CHECK(reader.layout().had_bom);
  CHECK(reader.layout().crlf);
  std::vector<Row> rows = read_all(reader);
  REQUIRE(rows.size() == 3);
  CHECK(rows[0].raw == "{\"a\":1,\"b\":\"x\"}");
  CHECK(rows[0].fields == Fields{"1", "x"});
  CHECK(rows[1].line == 4);
  CHECK(rows[1].index == 2);
  CHECK(rows[1].fields == Fields{"2", "y"});
  CHECK(rows[2].line == 5);
  CHECK(rows[2].fields == Fields{"3", std::nullopt});
  CHECK(reader.blank_lines() == 2);
}

TEST_CASE("ndjson reader: duplicate and unknown keys", "[io][ndjson]") {
  auto source = baroz::make_string_source("{\"a\":1,\"a\":2}\n{\"a\":3,\"a\":4,\"a\":5,\"z\":6}\n",
                                          "d.ndjson");
  NdjsonReader reader(*source);
  CHECK(reader.layout().columns == std::vector<std::string>{"a", "a"});
  std::vector<Row> rows = read_all(reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].fields == Fields{"1", "2"});
  CHECK(rows[1].fields == Fields{"3", "4"});
  CHECK(reader.unknown_keys() == 2);  // the third "a" and "z"
}

TEST_CASE("ndjson reader: NUL byte and too long lines", "[io][ndjson]") {
  std::string text = std::string("{\"a\":1}\n{\"a\":\"x\0\"}\n", 19);
  text += "{\"a\":\"" + std::string(std::size_t{17} << 20, 'x') + "\"}\n{\"a\":4}\n";
  std::vector<Row> rows = read_ndjson(text);
  REQUIRE(rows.size() == 4);
  CHECK(rows[1].problem == RecordProblem::kBadEncoding);
  CHECK(rows[1].fields == Fields{std::nullopt});
  CHECK(rows[2].problem == RecordProblem::kTooLong);
  CHECK(rows[2].raw.size() == 1024);
  CHECK(rows[2].line == 3);
  CHECK(rows[3].fields == Fields{"4"});
  CHECK(rows[3].line == 4);
}

TEST_CASE("ndjson reader: an input without an object is an input error", "[io][ndjson]") {
  auto error_of = [](const std::string& text) -> std::string {
    auto source = baroz::make_string_source(text, "flight.ndjson");
    try {
      baroz::open_record_reader(*source, {});
    } catch (const baroz::Error& e) {
      CHECK(e.code() == baroz::ExitCode::kInput);
      return e.what();
    }
    return "(no error)";
  };
  CHECK(error_of("") == "flight.ndjson: no json object");
  CHECK(error_of("\n \n") == "flight.ndjson: no json object");
  CHECK(error_of("[1]\n\"x\"\n{\"a\":\n") == "flight.ndjson: no json object");
}

TEST_CASE("ndjson reader gives the same records whatever the read sizes", "[io][ndjson]") {
  std::string text;
  std::mt19937 rng(7);
  for (int i = 0; i < 30000; ++i) {
    switch (i % 5) {
      case 0:
        text += "{\"time\":" + std::to_string(i) + ".5,\"p\":1013.25,\"note\":\"a\\u00b0\"}\r\n";
        break;
      case 1:
        text += "{\"p\":1e3,\"time\":" + std::to_string(i) + "}\n";
        break;
      case 2:
        text += "\n";
        break;
      case 3:
        text += "{\"time\":" + std::to_string(i) + ",\"note\":\"" + std::string(rng() % 300, 'n') +
                "\"}\n";
        break;
      default:
        text += "{bad json " + std::to_string(i) + "\n";
        break;
    }
  }
  auto one_shot = baroz::make_string_source(text, "m.ndjson");
  NdjsonReader whole(*one_shot);
  std::vector<Row> expected = read_all(whole);
  REQUIRE(expected.size() == 24000);
  CHECK(expected[0].fields == Fields{"0.5", "1013.25", "a\xC2\xB0"});
  CHECK(expected[1].fields == Fields{"1", "1e3", std::nullopt});
  CHECK(expected[2].line == 4);
  CHECK(expected[3].problem == RecordProblem::kBadJson);

  SECTION("one byte at a time") {
    ChunkedSource source(text, {1});
    NdjsonReader reader(source);
    CHECK(read_all(reader) == expected);
  }
  SECTION("random chunk sizes") {
    std::vector<std::size_t> chunks;
    for (int i = 0; i < 1000; ++i) chunks.push_back(1 + rng() % 50000);
    ChunkedSource source(text, chunks);
    NdjsonReader reader(source);
    CHECK(read_all(reader) == expected);
  }
}
