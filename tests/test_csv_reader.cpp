// Byte sources (io/byte_source.hpp), the CSV record reader
// (io/csv_reader.hpp) and open_record_reader's format choice (io/record.hpp).
//
// The CSV rules checked here are those of RFC 4180 §2 (Shafranovich, "Common
// Format and MIME Type for Comma-Separated Values (CSV) Files", IETF 2005):
// rule 1 (CRLF line breaks), 2 (last record may lack a line break),
// 3 (header line), 4 (fields separated by the delimiter, spaces are part of a
// field), 5-7 (double-quoted fields, line breaks and delimiters inside them,
// "" for one quote). Expected records are written out from the inputs built
// in each test.
#include <catch2/catch.hpp>

#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cstdint>
#include <optional>
#include <random>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/io/byte_source.hpp"
#include "baroz/io/csv_reader.hpp"
#include "baroz/io/record.hpp"

using baroz::ByteSource;
using baroz::LogFormat;
using baroz::Record;
using baroz::RecordProblem;

namespace {

/// A source that hands out its data in pieces: every read returns at most
/// the next size from `chunks` (cycled), and counts the read calls.
class ChunkedSource : public ByteSource {
 public:
  ChunkedSource(std::string data, std::vector<std::size_t> chunks, std::string name = "<test>")
      : ByteSource(std::move(name)), data_(std::move(data)), chunks_(std::move(chunks)) {}
  int reads() const { return reads_; }

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    ++reads_;
    std::size_t chunk = chunks_.empty() ? capacity : chunks_[next_++ % chunks_.size()];
    std::size_t n = std::min({capacity, chunk, data_.size() - position_});
    std::copy_n(data_.data() + position_, n, buffer);
    position_ += n;
    return n;
  }

 private:
  std::string data_;
  std::vector<std::size_t> chunks_;
  std::size_t next_ = 0;
  std::size_t position_ = 0;
  int reads_ = 0;
};

/// A source that delivers the given pieces one per read (a pipe that
/// receives them one by one), and counts the read calls.
class PieceSource : public ByteSource {
 public:
  explicit PieceSource(std::vector<std::string> pieces)
      : ByteSource("<pipe>"), pieces_(std::move(pieces)) {}
  int reads() const { return reads_; }

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    ++reads_;
    if (next_ == pieces_.size()) return 0;
    std::string& piece = pieces_[next_];
    std::size_t n = std::min(capacity, piece.size());
    std::copy_n(piece.data(), n, buffer);
    piece.erase(0, n);
    if (piece.empty()) ++next_;
    return n;
  }

 private:
  std::vector<std::string> pieces_;
  std::size_t next_ = 0;
  int reads_ = 0;
};

/// A record copied out of the reader (its views die at the next call).
struct Row {
  std::uint64_t line = 0;
  std::uint64_t index = 0;
  std::string raw;
  std::vector<std::optional<std::string>> fields;  // nullopt: absent
  std::size_t extra = 0;
  RecordProblem problem = RecordProblem::kNone;
  std::string detail;
  bool operator==(const Row&) const = default;
};

Row copy(const Record& r) {
  Row row;
  row.line = r.line;
  row.index = r.index;
  row.raw = std::string(r.raw);
  for (std::string_view f : r.fields) {
    if (f.data() == nullptr) {
      row.fields.emplace_back(std::nullopt);
    } else {
      row.fields.emplace_back(std::string(f));
    }
  }
  row.extra = r.extra_fields;
  row.problem = r.problem;
  row.detail = std::string(r.problem_detail);
  return row;
}

std::vector<Row> read_all(baroz::RecordReader& reader) {
  std::vector<Row> rows;
  Record record;
  while (reader.next(record)) rows.push_back(copy(record));
  return rows;
}

std::unique_ptr<baroz::RecordReader> open_csv(ByteSource& source, char delimiter = 0) {
  baroz::ReaderOptions options;
  options.format = LogFormat::kCsv;
  options.delimiter = delimiter;
  return baroz::open_record_reader(source, options);
}

std::vector<Row> read_csv(const std::string& text, char delimiter = 0) {
  auto source = baroz::make_string_source(text, "t.csv");
  auto reader = open_csv(*source, delimiter);
  return read_all(*reader);
}

using Fields = std::vector<std::optional<std::string>>;

std::string error_of(const std::string& text, const std::string& name,
                     LogFormat format = LogFormat::kAuto) {
  auto source = baroz::make_string_source(text, name);
  baroz::ReaderOptions options;
  options.format = format;
  try {
    baroz::open_record_reader(*source, options);
  } catch (const baroz::Error& e) {
    CHECK(e.code() == baroz::ExitCode::kInput);
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("csv reader reads header and records with fields as views", "[io][csv]") {
  auto source =
      baroz::make_string_source("time,pressure,temp\n1,1013.25,15\n2,1013.20,14.9\n", "f.csv");
  auto reader = open_csv(*source);
  const baroz::LogLayout& layout = reader->layout();
  CHECK(layout.format == LogFormat::kCsv);
  CHECK(layout.delimiter == ',');
  CHECK_FALSE(layout.had_bom);
  CHECK_FALSE(layout.crlf);
  CHECK(layout.header_line == 1);
  CHECK(layout.preamble_lines == 0);
  CHECK(layout.columns == std::vector<std::string>{"time", "pressure", "temp"});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].line == 2);
  CHECK(rows[0].index == 1);
  CHECK(rows[0].raw == "1,1013.25,15");
  CHECK(rows[0].fields == Fields{"1", "1013.25", "15"});
  CHECK(rows[1].line == 3);
  CHECK(rows[1].index == 2);
  CHECK(rows[1].fields == Fields{"2", "1013.20", "14.9"});
  CHECK(rows[1].problem == RecordProblem::kNone);
  CHECK(reader->blank_lines() == 0);
}

TEST_CASE("csv reader: quoted fields with delimiters, escaped quotes and line breaks",
          "[io][csv]") {
  // RFC 4180 §2 rules 5-7.
  const std::string text =
      "time,note,p\n"                    // line 1
      "1,\"a,b\",1000\n"                 // line 2: delimiter inside quotes
      "2,\"say \"\"hi\"\"\",1001\n"      // line 3: "" escapes
      "3,\"two\r\nlines\",1002\n"        // lines 4-5: CRLF inside quotes
      "4,\"three\nlines\nhere\",1003\n"  // lines 6-8: LF inside quotes
      "5,\"\",1004\n"                    // line 9: empty quoted field
      "\"6\",plain,\"1005\"\n";          // line 10: first and last field quoted
  std::vector<Row> rows = read_csv(text);
  REQUIRE(rows.size() == 6);
  CHECK(rows[0].fields == Fields{"1", "a,b", "1000"});
  CHECK(rows[0].line == 2);
  CHECK(rows[1].fields == Fields{"2", "say \"hi\"", "1001"});
  CHECK(rows[1].line == 3);
  CHECK(rows[2].fields == Fields{"3", "two\r\nlines", "1002"});
  CHECK(rows[2].line == 4);
  CHECK(rows[2].raw == "3,\"two\r\nlines\",1002");
  CHECK(rows[3].fields == Fields{"4", "three\nlines\nhere", "1003"});
  CHECK(rows[3].line == 6);
  CHECK(rows[4].fields == Fields{"5", "", "1004"});
  CHECK(rows[4].line == 9);
  REQUIRE(rows[4].fields[1].has_value());  // present, empty
  CHECK(rows[5].fields == Fields{"6", "plain", "1005"});
  CHECK(rows[5].line == 10);
  for (const Row& r : rows) CHECK(r.problem == RecordProblem::kNone);
}

TEST_CASE("csv reader: several escaped fields in one record stay valid together", "[io][csv]") {
  std::vector<Row> rows = read_csv("a,b,c\n\"x\"\"1\",\"y\"\"2\",\"z\"\"3\"\n");
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].fields == Fields{"x\"1", "y\"2", "z\"3"});
}

TEST_CASE("csv reader: CRLF line ends are removed from fields and raw", "[io][csv]") {
  // RFC 4180 §2 rule 1: records end with CRLF.
  auto source = baroz::make_string_source("time,p\r\n1,1000\r\n2,1001\r\n", "crlf.csv");
  auto reader = open_csv(*source);
  CHECK(reader->layout().crlf);
  CHECK(reader->layout().columns == std::vector<std::string>{"time", "p"});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].raw == "1,1000");
  CHECK(rows[0].fields == Fields{"1", "1000"});
  CHECK(rows[1].fields == Fields{"2", "1001"});
  CHECK(rows[1].line == 3);
}

TEST_CASE("csv reader: the last record may lack a line break", "[io][csv]") {
  // RFC 4180 §2 rule 2.
  CHECK(read_csv("a,b\n1,2") ==
        std::vector<Row>{{2, 1, "1,2", {"1", "2"}, 0, RecordProblem::kNone, ""}});
  CHECK(read_csv("a,b\r\n1,2\r") ==
        std::vector<Row>{{2, 1, "1,2", {"1", "2"}, 0, RecordProblem::kNone, ""}});
  CHECK(read_csv("a,b\n1,\"2\"") ==
        std::vector<Row>{{2, 1, "1,\"2\"", {"1", "2"}, 0, RecordProblem::kNone, ""}});
}

TEST_CASE("csv reader: a lone CR inside an unquoted field is data", "[io][csv]") {
  std::vector<Row> rows = read_csv("a,b\nx\ry,2\n");
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].fields == Fields{"x\ry", "2"});
}

TEST_CASE("csv reader: a UTF-8 byte order mark is skipped", "[io][csv]") {
  // The BOM is U+FEFF encoded in UTF-8: EF BB BF (Unicode Standard, §23.8).
  auto source = baroz::make_string_source("\xEF\xBB\xBFtime,p\n1,2\n", "bom.csv");
  auto reader = open_csv(*source);
  CHECK(reader->layout().had_bom);
  CHECK(reader->layout().columns == std::vector<std::string>{"time", "p"});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].line == 2);
}

TEST_CASE("csv reader detects ';' and tab delimiters from the header", "[io][csv]") {
  SECTION("semicolon") {
    auto source = baroz::make_string_source("time;p;t\n1;1013,2;15\n", "s.csv");
    auto reader = open_csv(*source);
    CHECK(reader->layout().delimiter == ';');
    CHECK(read_all(*reader)[0].fields == Fields{"1", "1013,2", "15"});
  }
  SECTION("tab") {
    auto source = baroz::make_string_source("time\tp\tt\n1\t1013.2\t15\n", "s.tsv");
    auto reader = open_csv(*source);
    CHECK(reader->layout().delimiter == '\t');
    CHECK(read_all(*reader)[0].fields == Fields{"1", "1013.2", "15"});
  }
  SECTION("delimiters inside quotes do not count") {
    auto source = baroz::make_string_source("\"a,b,c\";d;e\n1;2;3\n", "q.csv");
    auto reader = open_csv(*source);
    CHECK(reader->layout().delimiter == ';');
    CHECK(reader->layout().columns == std::vector<std::string>{"a,b,c", "d", "e"});
  }
  SECTION("ties prefer comma, then semicolon") {
    auto a = baroz::make_string_source("a,b;c\n", "t.csv");
    CHECK(open_csv(*a)->layout().delimiter == ',');
    auto b = baroz::make_string_source("a;b\tc\n", "t.csv");
    CHECK(open_csv(*b)->layout().delimiter == ';');
    auto c = baroz::make_string_source("single\n", "t.csv");
    CHECK(open_csv(*c)->layout().delimiter == ',');
  }
}

TEST_CASE("csv reader: a forced delimiter overrides detection", "[io][csv]") {
  auto source = baroz::make_string_source("a;b,c;d\n1;2,3;4\n", "f.csv");
  auto reader = open_csv(*source, ',');
  CHECK(reader->layout().delimiter == ',');
  CHECK(reader->layout().columns == std::vector<std::string>{"a;b", "c;d"});
  CHECK(read_all(*reader)[0].fields == Fields{"1;2", "3;4"});
  auto pipe = baroz::make_string_source("a|b\n1|2\n", "f.csv");
  CHECK(read_all(*open_csv(*pipe, '|'))[0].fields == Fields{"1", "2"});
}

TEST_CASE("csv reader: '#' lines before the header are a preamble", "[io][csv]") {
  auto source = baroz::make_string_source(
      "# logger v2\n"   // 1
      "\n"              // 2 (blank)
      "# rate 10 Hz\n"  // 3
      "time,p\n"        // 4: header
      "1,2\n"           // 5
      "#3,4\n",         // 6: after the header, '#' starts an ordinary record
      "pre.csv");
  auto reader = open_csv(*source);
  CHECK(reader->layout().preamble_lines == 2);
  CHECK(reader->layout().header_line == 4);
  CHECK(reader->layout().columns == std::vector<std::string>{"time", "p"});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].line == 5);
  CHECK(rows[0].index == 1);
  CHECK(rows[1].fields == Fields{"#3", "4"});
  CHECK(rows[1].line == 6);
  CHECK(reader->blank_lines() == 1);
}

TEST_CASE("csv reader: blank lines are counted, not returned", "[io][csv]") {
  auto source = baroz::make_string_source("a,b\n\n1,2\r\n\r\n\n3,4\n\n", "b.csv");
  auto reader = open_csv(*source);
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].line == 3);
  CHECK(rows[0].index == 1);
  CHECK(rows[1].line == 6);
  CHECK(rows[1].index == 2);
  CHECK(reader->blank_lines() == 4);
}

TEST_CASE("csv reader: short rows give absent fields, empty fields are present", "[io][csv]") {
  std::vector<Row> rows = read_csv("a,b,c\n1\n1,\n,,\n1,2,3\n");
  REQUIRE(rows.size() == 4);
  CHECK(rows[0].fields == Fields{"1", std::nullopt, std::nullopt});
  CHECK(rows[1].fields == Fields{"1", "", std::nullopt});
  CHECK(rows[2].fields == Fields{"", "", ""});
  CHECK(rows[3].fields == Fields{"1", "2", "3"});
  for (const Row& r : rows) CHECK(r.fields.size() == 3);
}

TEST_CASE("csv reader: unquoted fields keep their spaces, header names are trimmed", "[io][csv]") {
  auto source = baroz::make_string_source(" time , \"p\" ,t\n 1 , 2 ,3\n", "s.csv");
  auto reader = open_csv(*source);
  CHECK(reader->layout().columns == std::vector<std::string>{"time", "p", "t"});
  CHECK(read_all(*reader)[0].fields == Fields{" 1 ", " 2 ", "3"});
}

TEST_CASE("csv reader: duplicate header names are kept", "[io][csv]") {
  auto source = baroz::make_string_source("p,p\n1,2\n", "d.csv");
  auto reader = open_csv(*source);
  CHECK(reader->layout().columns == std::vector<std::string>{"p", "p"});
  CHECK(read_all(*reader)[0].fields == Fields{"1", "2"});
}

TEST_CASE("csv reader: surplus fields are counted", "[io][csv]") {
  std::vector<Row> rows = read_csv("a,b\n1,2,3,4\n1,\"2\",\"3\"\n");
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].fields == Fields{"1", "2"});
  CHECK(rows[0].extra == 2);
  CHECK(rows[1].fields == Fields{"1", "2"});
  CHECK(rows[1].extra == 1);
}

TEST_CASE("csv reader flags stray quotes but returns the record", "[io][csv]") {
  std::vector<Row> rows = read_csv(
      "a,b\n"
      "1,ab\"c\n"   // quote inside an unquoted field
      "\"x\"y,2\n"  // text after a closing quote
      "3,4\n");
  REQUIRE(rows.size() == 3);
  CHECK(rows[0].problem == RecordProblem::kBadQuote);
  CHECK(rows[0].raw == "1,ab\"c");
  CHECK(rows[0].fields == Fields{"1", "ab\"c"});
  CHECK(rows[0].line == 2);
  CHECK(rows[1].problem == RecordProblem::kBadQuote);
  CHECK(rows[1].raw == "\"x\"y,2");
  CHECK(rows[1].fields.size() == 2);
  CHECK(rows[1].fields[1] == "2");
  CHECK(rows[1].line == 3);
  CHECK(rows[2].problem == RecordProblem::kNone);
  CHECK(rows[2].fields == Fields{"3", "4"});
  CHECK(rows[2].line == 4);
}

TEST_CASE("csv reader flags a quoted field open at the end of the input", "[io][csv]") {
  std::vector<Row> rows = read_csv("a,b\n1,2\n3,\"open\n4,5\n");
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].problem == RecordProblem::kNone);
  CHECK(rows[1].problem == RecordProblem::kUnterminatedQuote);
  CHECK(rows[1].line == 3);
  CHECK(rows[1].raw == "3,\"open\n4,5\n");
  CHECK(rows[1].fields == Fields{"3", "open\n4,5\n"});
}

TEST_CASE("csv reader flags a NUL byte", "[io][csv]") {
  std::vector<Row> rows = read_csv(std::string("a,b\n1,2\0x\n3,4\n", 14));
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].problem == RecordProblem::kBadEncoding);
  CHECK(rows[0].raw == std::string("1,2\0x", 5));
  CHECK(rows[1].problem == RecordProblem::kNone);
  CHECK(rows[1].line == 3);
}

TEST_CASE("csv reader rejects a record longer than 16 MiB and goes on", "[io][csv]") {
  const std::size_t kLimit = std::size_t{16} << 20;  // the reader's pinned record limit
  SECTION("a 17 MiB line") {
    std::string text = "a,b\n1,2\n";
    text += std::string(std::size_t{17} << 20, 'x');
    text += "\n3,4\n";
    std::vector<Row> rows = read_csv(text);
    REQUIRE(rows.size() == 3);
    CHECK(rows[0].fields == Fields{"1", "2"});
    CHECK(rows[1].problem == RecordProblem::kTooLong);
    CHECK(rows[1].line == 3);
    CHECK(rows[1].index == 2);
    CHECK(rows[1].raw == std::string(1024, 'x'));
    CHECK(rows[1].fields == Fields{std::nullopt, std::nullopt});
    CHECK(rows[2].problem == RecordProblem::kNone);
    CHECK(rows[2].fields == Fields{"3", "4"});
    CHECK(rows[2].line == 4);
    CHECK(rows[2].index == 3);
  }
  SECTION("exactly 16 MiB is accepted, one byte more is not") {
    std::string text = "a,b\n" + std::string(kLimit - 2, '7') + ",8\r\n";
    text += std::string(kLimit - 1, '7') + ",8\n5,6";
    std::vector<Row> rows = read_csv(text);
    REQUIRE(rows.size() == 3);
    CHECK(rows[0].problem == RecordProblem::kNone);
    CHECK(rows[0].raw.size() == kLimit);
    CHECK(rows[0].fields[1] == "8");
    CHECK(rows[1].problem == RecordProblem::kTooLong);
    CHECK(rows[2].fields == Fields{"5", "6"});
    CHECK(rows[2].line == 4);
  }
  SECTION("a quoted field that never closes, in pieces") {
    std::string text = "a,b\n1,\"" + std::string(std::size_t{17} << 20, 'q') + "\n2,3\n";
    ChunkedSource source(text, {65536, 100000});
    auto reader = open_csv(source);
    std::vector<Row> rows = read_all(*reader);
    REQUIRE(rows.size() == 2);
    CHECK(rows[0].problem == RecordProblem::kTooLong);
    CHECK(rows[1].fields == Fields{"2", "3"});
    CHECK(rows[1].line == 3);
  }
}

TEST_CASE("csv reader gives the same records whatever the read sizes", "[io][csv]") {
  // A mix of every structure, long enough (> 2 MiB) to cross the 1 MiB
  // buffer boundary many times, with multi-line quoted records.
  std::string text = "\xEF\xBB\xBF# preamble\ntime,note,p\r\n";
  std::mt19937 rng(12345);
  std::size_t records = 1;  // the last one, below
  for (int i = 0; i < 60000; ++i) {
    records += i % 7 != 2;
    switch (i % 7) {
      case 0:
        text += std::to_string(i) + ",\"multi\r\nline \"\"" + std::to_string(i) + "\"\"\",1000\r\n";
        break;
      case 1:
        text += std::to_string(i) + ",plain,1001.25\n";
        break;
      case 2:
        text += "\n";
        break;
      case 3:
        text += std::to_string(i) + ",\"a,b\"\n";
        break;
      case 4:
        text += std::to_string(i) + ",x,y,z\r\n";
        break;
      case 5:
        text += std::to_string(i) + "," + std::string(rng() % 200, 'w') + ",7\n";
        break;
      default:
        text += std::to_string(i) + ",bad\"quote,9\n";
        break;
    }
  }
  text += "end,\"no newline\"";

  auto one_shot = baroz::make_string_source(text, "mix.csv");
  std::vector<Row> expected = read_all(*open_csv(*one_shot));
  REQUIRE(expected.size() == records);
  CHECK(expected[0] == Row{3,
                           1,
                           "0,\"multi\r\nline \"\"0\"\"\",1000",
                           {"0", "multi\r\nline \"0\"", "1000"},
                           0,
                           RecordProblem::kNone,
                           ""});
  CHECK(expected[1] ==
        Row{5, 2, "1,plain,1001.25", {"1", "plain", "1001.25"}, 0, RecordProblem::kNone, ""});
  CHECK(expected[2].line == 7);  // after the blank line 6
  CHECK(expected[2].fields == Fields{"3", "a,b", std::nullopt});
  CHECK(expected[3].extra == 1);
  CHECK(expected[5].problem == RecordProblem::kBadQuote);
  CHECK(expected.back().fields == Fields{"end", "no newline", std::nullopt});

  SECTION("one byte at a time") {
    ChunkedSource source(text, {1});
    auto reader = open_csv(source);
    CHECK(reader->layout().had_bom);
    CHECK(read_all(*reader) == expected);
  }
  SECTION("random chunk sizes") {
    std::vector<std::size_t> chunks;
    for (int i = 0; i < 1000; ++i) chunks.push_back(1 + rng() % 70000);
    ChunkedSource source(text, chunks);
    CHECK(read_all(*open_csv(source)) == expected);
  }
}

TEST_CASE("csv reader: a record straddling the 1 MiB buffer boundary is intact", "[io][csv]") {
  // Rows of 29 bytes do not divide 1 MiB, so one row crosses every boundary.
  std::string text = "time,pressure,temperature\n";
  const int kRows = 100000;
  for (int i = 0; i < kRows; ++i)
    text += "17330976" + std::to_string(10000 + i) + ".25,1013.2512,15.125\n";
  REQUIRE(text.size() > (std::size_t{2} << 20));
  auto source = baroz::make_string_source(text, "big.csv");
  auto reader = open_csv(*source);
  Record record;
  int n = 0;
  bool all_equal = true;
  while (reader->next(record)) {
    std::string time = "17330976" + std::to_string(10000 + n) + ".25";
    all_equal = all_equal && record.fields.size() == 3 && record.fields[0] == time &&
                record.fields[1] == "1013.2512" && record.fields[2] == "15.125" &&
                record.line == static_cast<std::uint64_t>(n) + 2;
    ++n;
  }
  CHECK(n == kRows);
  CHECK(all_equal);
}

TEST_CASE("csv reader hands out complete records before reading more (live telemetry)",
          "[io][csv]") {
  PieceSource source({"a,b\n1,2\n3,", "4\n5,6\n"});
  auto reader = baroz::open_record_reader(source, {});
  CHECK(source.reads() == 1);
  Record record;
  REQUIRE(reader->next(record));
  CHECK(record.raw == "1,2");
  CHECK(source.reads() == 1);  // record 1 came without asking the source again
  REQUIRE(reader->next(record));
  CHECK(record.raw == "3,4");
  CHECK(source.reads() == 2);
  REQUIRE(reader->next(record));
  CHECK(record.raw == "5,6");
  CHECK(source.reads() == 2);
  CHECK_FALSE(reader->next(record));
}

TEST_CASE("csv reader streams from a pipe without waiting for its end", "[io][csv]") {
  int fds[2];
  REQUIRE(::pipe(fds) == 0);
  std::atomic<bool> got_first{false};
  std::atomic<bool> timed_out{false};
  std::thread writer([&] {
    const std::string first = "time,p\n1,1000\n";
    CHECK(::write(fds[1], first.data(), first.size()) == static_cast<ssize_t>(first.size()));
    auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(10);
    while (!got_first && std::chrono::steady_clock::now() < deadline)
      std::this_thread::sleep_for(std::chrono::milliseconds(1));
    timed_out = !got_first;
    const std::string rest = "2,1001\n";
    CHECK(::write(fds[1], rest.data(), rest.size()) == static_cast<ssize_t>(rest.size()));
    ::close(fds[1]);
  });
  {
    auto source = baroz::make_fd_source(fds[0], "<stdin>");
    auto reader = baroz::open_record_reader(*source, {});
    Record record;
    REQUIRE(reader->next(record));
    got_first = true;
    CHECK(record.raw == "1,1000");
    REQUIRE(reader->next(record));
    CHECK(record.raw == "2,1001");
    CHECK_FALSE(reader->next(record));
  }
  writer.join();
  ::close(fds[0]);
  CHECK_FALSE(timed_out);  // the first record arrived while the pipe was still open
}

TEST_CASE("csv reader: a header-less input is an input error naming the source", "[io][csv]") {
  CHECK(error_of("", "flight.csv") == "flight.csv: no header row");
  CHECK(error_of("\n\r\n\n", "flight.csv") == "flight.csv: no header row");
  CHECK(error_of("# only a comment\n\n# another", "flight.csv") == "flight.csv: no header row");
  CHECK(error_of("\xEF\xBB\xBF", "<stdin>") == "<stdin>: no header row");  // sniffed as CSV
  CHECK(error_of("\n\"time,p\n1,2\n", "h.csv") == "h.csv:2: header row: unterminated quoted field");
}

TEST_CASE("open_record_reader chooses the format from the extension, else the content",
          "[io][csv][ndjson]") {
  auto format_of = [](const std::string& text, const std::string& name,
                      LogFormat forced = LogFormat::kAuto) {
    auto source = baroz::make_string_source(text, name);
    baroz::ReaderOptions options;
    options.format = forced;
    return baroz::open_record_reader(*source, options)->layout().format;
  };
  const std::string csv = "a,b\n1,2\n";
  const std::string json = "{\"a\":1}\n";
  CHECK(format_of(csv, "x.csv") == LogFormat::kCsv);
  CHECK(format_of(csv, "x.TSV") == LogFormat::kCsv);
  CHECK(format_of(csv, "x.txt") == LogFormat::kCsv);
  CHECK(format_of(csv, "dir.v2/x.dat") == LogFormat::kCsv);
  CHECK(format_of(json, "x.ndjson") == LogFormat::kNdjson);
  CHECK(format_of(json, "x.jsonl") == LogFormat::kNdjson);
  CHECK(format_of(json, "x.JSON") == LogFormat::kNdjson);
  // The extension wins over the content.
  CHECK(format_of("{\"a\",b\n", "x.csv") == LogFormat::kCsv);
  // No (known) extension: sniffed.
  CHECK(format_of(json, "<stdin>") == LogFormat::kNdjson);
  CHECK(format_of(csv, "<stdin>") == LogFormat::kCsv);
  CHECK(format_of("\xEF\xBB\xBF \r\n\n\t{\"a\":1}\n", "log") == LogFormat::kNdjson);
  CHECK(format_of(json, "dir.json/log.bin") == LogFormat::kNdjson);
  CHECK(format_of(csv, "dir.json/log") == LogFormat::kCsv);
  // An explicit format wins over both.
  CHECK(format_of(json, "x.csv", LogFormat::kNdjson) == LogFormat::kNdjson);
  CHECK(format_of(json, "x.ndjson", LogFormat::kCsv) == LogFormat::kCsv);
}

TEST_CASE("sniffing keeps the bytes it read, also when they come one at a time",
          "[io][csv][ndjson]") {
  ChunkedSource source("\xEF\xBB\xBF\n\ntime;p\n1;2\n", {1});
  auto reader = baroz::open_record_reader(source, {});
  CHECK(reader->layout().format == LogFormat::kCsv);
  CHECK(reader->layout().had_bom);
  CHECK(reader->layout().delimiter == ';');
  CHECK(reader->layout().header_line == 3);
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].fields == Fields{"1", "2"});
  CHECK(rows[0].line == 4);
  CHECK(reader->blank_lines() == 2);
}

TEST_CASE("record_problem_text gives short lower-case phrases", "[io]") {
  CHECK(baroz::record_problem_text(RecordProblem::kUnterminatedQuote) ==
        "unterminated quoted field");
  CHECK(baroz::record_problem_text(RecordProblem::kBadQuote) == "stray quote in field");
  CHECK(baroz::record_problem_text(RecordProblem::kTooLong) == "record longer than 16 MiB");
  CHECK(baroz::record_problem_text(RecordProblem::kBadJson) == "not a json object");
  CHECK(baroz::record_problem_text(RecordProblem::kBadEncoding) == "nul byte in record");
  CHECK(baroz::record_problem_text(RecordProblem::kNone).empty());
}

TEST_CASE("open_file_source reads a file and names missing ones", "[io][source]") {
  const std::string path = std::string(BAROZ_TEST_DATA_DIR) + "/data/reader_sample.csv";
  auto source = baroz::open_file_source(path);
  CHECK(source->name() == path);
  auto reader = baroz::open_record_reader(*source, {});
  CHECK(reader->layout().had_bom);
  CHECK(reader->layout().crlf);
  CHECK(reader->layout().preamble_lines == 1);
  CHECK(reader->layout().columns == std::vector<std::string>{"time", "pressure_hpa", "note"});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].fields == Fields{"0.0", "1013.25", "on the pad, \"ready\""});
  CHECK(rows[1].fields == Fields{"0.1", "1013.24", "two\r\nlines"});
  CHECK(rows[1].line == 4);
  CHECK(source->bytes_read() == 149);  // the file's size in bytes (ls -l)

  // glibc's strerror text for ENOENT and EISDIR (POSIX <errno.h> names), from memory.
  try {
    baroz::open_file_source("/nonexistent-dir/flight.csv");
    FAIL("no error");
  } catch (const baroz::Error& e) {
    CHECK(e.code() == baroz::ExitCode::kInput);
    CHECK(std::string(e.what()) ==
          "cannot open '/nonexistent-dir/flight.csv': no such file or directory");
  }
  try {
    baroz::open_file_source(BAROZ_TEST_DATA_DIR);
    FAIL("no error");
  } catch (const baroz::Error& e) {
    CHECK(std::string(e.what()) ==
          "cannot open '" + std::string(BAROZ_TEST_DATA_DIR) + "': is a directory");
  }
}

TEST_CASE("byte sources hash every byte they deliver when asked", "[io][source]") {
  // Source: FIPS 180-2, Appendix B.1 (SHA-256 of "abc").
  const std::string kAbc = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad";
  SECTION("hashing is off by default (it costs as much as reading)") {
    ChunkedSource source("abc", {1});
    char buffer[4];
    while (source.read(buffer, sizeof buffer) > 0) {
    }
    CHECK(source.sha256_hex().empty());
  }
  SECTION("string source through the reader") {
    ChunkedSource source("abc", {1});
    source.enable_hashing();
    auto reader = baroz::open_record_reader(source, {});
    Record record;
    CHECK_FALSE(reader->next(record));
    CHECK(source.bytes_read() == 3);
    CHECK(source.sha256_hex() == kAbc);
  }
  SECTION("istream source") {
    std::istringstream in("abc");
    auto source = baroz::make_istream_source(in, "<stdin>");
    source->enable_hashing();
    char buffer[16];
    std::size_t total = 0;
    while (std::size_t n = source->read(buffer + total, sizeof buffer - total)) total += n;
    CHECK(std::string(buffer, total) == "abc");
    CHECK(source->sha256_hex() == kAbc);
  }
}

TEST_CASE("istream source feeds the reader", "[io][source]") {
  std::istringstream in("time,p\n1,2\n3,4\n");
  auto source = baroz::make_istream_source(in, "<stdin>");
  auto reader = baroz::open_record_reader(*source, {});
  std::vector<Row> rows = read_all(*reader);
  REQUIRE(rows.size() == 2);
  CHECK(rows[1].fields == Fields{"3", "4"});
  CHECK(source->name() == "<stdin>");
}
