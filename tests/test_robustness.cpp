// Robustness of the readers and of the whole `baroz height` pipeline:
// thousands of mutated logs through the in-process command line, chunked
// against one-shot reading, live streaming through a pipe, and constant
// memory on a large log.
//
// The properties checked come from:
// - RFC 4180 §2 (Shafranovich, "Common Format and MIME Type for
//   Comma-Separated Values (CSV) Files", IETF 2005): how records, quoted
//   fields and line breaks inside quotes are counted (the rejects file and
//   the output are parsed by the small RFC 4180 parser below, so that a raw
//   field holding a quoted line break counts as one record);
// - RFC 8259 (Bray, "The JavaScript Object Notation (JSON) Data Interchange
//   Format", IETF 2017) for the NDJSON logs;
// - the product specification, "Bad input (pinned)": a bad row is rejected,
//   never a crash; rows read = written + rejected, always; --rejects lists
//   every rejected row as source,line,reason,raw with physical 1-based line
//   numbers; exit status 0 (also with skipped rows) or 2 (no usable rows);
// - the product specification, "Conventions of the ecosystem": NaN or
//   infinity is never written; with a pipe as input the tool streams and
//   writes each row as soon as it is computed (--line-buffered);
// - io/record.hpp: a reader streams with constant memory and its records do
//   not depend on how the bytes arrive.
//
// The random inputs are deterministic (fixed seeds). For a longer soak run:
//   BAROZ_ROBUST_SEED=N BAROZ_ROBUST_ITERATIONS=N baroz_tests "[robust]"
#include <catch2/catch.hpp>

#include <sys/resource.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <functional>
#include <mutex>
#include <optional>
#include <map>
#include <sstream>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/io/byte_source.hpp"
#include "baroz/io/record.hpp"
#include "baroz/output/byte_sink.hpp"
#include "baroz/output/rejects_writer.hpp"
#include "baroz/pipeline/diagnostics.hpp"
#include "baroz/pipeline/height_job.hpp"
#include "cli_harness.hpp"

#if defined(__SANITIZE_ADDRESS__)
#define BAROZ_TEST_ASAN 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define BAROZ_TEST_ASAN 1
#endif
#endif

namespace {

using baroz::ByteSink;
using baroz::ByteSource;
using baroz::LogLayout;
using baroz::Record;
using baroz::RecordProblem;
using baroz::test::CliResult;
using baroz::test::run_cli;
using baroz::test::TempDir;

// ---------------------------------------------------------------------------
// Helpers

/// A count from the environment (soak runs), else `fallback`.
std::uint64_t env_count(const char* name, std::uint64_t fallback) {
  const char* text = std::getenv(name);
  if (text == nullptr || *text == '\0') return fallback;
  return std::strtoull(text, nullptr, 10);
}

/// Deterministic pseudo-random numbers, the same on every platform
/// (std::uniform_int_distribution is not). splitmix64: G. L. Steele, D. Lea,
/// C. H. Flood, "Fast splittable pseudorandom number generators", OOPSLA
/// 2014; constants as in S. Vigna's public-domain splitmix64.c.
class Rng {
 public:
  explicit Rng(std::uint64_t seed) : state_(seed) {}
  std::uint64_t next() {
    std::uint64_t z = (state_ += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
  }
  /// Uniform in [0, n) for n > 0 (the modulo bias does not matter here).
  std::size_t below(std::size_t n) { return n == 0 ? 0 : static_cast<std::size_t>(next() % n); }
  bool one_in(std::size_t n) { return below(n) == 0; }

 private:
  std::uint64_t state_;
};

/// `s` with control and non-ASCII bytes escaped, for failure messages.
std::string escaped(std::string_view s, std::size_t limit = 800) {
  std::string out;
  for (unsigned char c : s.substr(0, std::min(limit, s.size()))) {
    if (c == '\\') {
      out += "\\\\";
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '\r') {
      out += "\\r";
    } else if (c == '\t') {
      out += "\\t";
    } else if (c >= 0x20 && c < 0x7f) {
      out += static_cast<char>(c);
    } else {
      char hex[8];
      std::snprintf(hex, sizeof hex, "\\x%02x", c);
      out += hex;
    }
  }
  if (s.size() > limit) out += "...(" + std::to_string(s.size()) + " bytes)";
  return out;
}

using CsvRecords = std::vector<std::vector<std::string>>;

/// Splits `text` into records of fields by RFC 4180 §2: fields separated by
/// commas, records ended by LF or CRLF (the last may lack it), a quoted field
/// may hold commas, line breaks and "" for one quote. Returns nullopt when
/// the text is not well-formed RFC 4180 (a quote in an unquoted field, text
/// after a closing quote, an unterminated quote, a lone CR outside quotes).
std::optional<CsvRecords> parse_rfc4180(std::string_view text) {
  CsvRecords records;
  std::vector<std::string> record;
  std::string field;
  std::size_t i = 0;
  const std::size_t n = text.size();
  while (i < n) {
    field.clear();
    if (text[i] == '"') {  // RFC 4180 §2 rules 5-7
      ++i;
      for (;;) {
        if (i >= n) return std::nullopt;
        if (text[i] == '"') {
          if (i + 1 < n && text[i + 1] == '"') {
            field += '"';
            i += 2;
            continue;
          }
          ++i;
          break;
        }
        field += text[i++];
      }
    } else {
      while (i < n && text[i] != ',' && text[i] != '\n' && text[i] != '\r' && text[i] != '"')
        field += text[i++];
      if (i < n && text[i] == '"') return std::nullopt;
    }
    record.push_back(field);
    if (i >= n) break;
    if (text[i] == ',') {
      ++i;
      if (i >= n) record.emplace_back();  // a final empty field
      continue;
    }
    if (text[i] == '\r') {
      if (i + 1 >= n || text[i + 1] != '\n') return std::nullopt;
      ++i;
    }
    if (text[i] != '\n') return std::nullopt;
    ++i;
    records.push_back(std::move(record));
    record.clear();
  }
  if (!record.empty()) records.push_back(std::move(record));
  return records;
}

/// The counts of "baroz: N rows read, N written, N rejected" (the last such
/// line of `err`), or nullopt when there is none.
struct CountLine {
  std::uint64_t read = 0, written = 0, rejected = 0;
};
std::optional<CountLine> find_count_line(const std::string& err) {
  std::optional<CountLine> found;
  std::istringstream lines(err);
  std::string line;
  while (std::getline(lines, line)) {
    unsigned long long r = 0, w = 0, j = 0;
    int used = -1;
    if (std::sscanf(line.c_str(), "baroz: %llu rows read, %llu written, %llu rejected%n", &r, &w,
                    &j, &used) == 3 &&
        used == static_cast<int>(line.size()))
      found = CountLine{r, w, j};
  }
  return found;
}

/// A number as the writers write it: optional minus, digits, optional
/// fraction; never "nan" or "inf" (product spec, "Conventions").
bool is_plain_number(std::string_view s) {
  std::size_t i = 0;
  if (i < s.size() && s[i] == '-') ++i;
  const std::size_t digits = i;
  while (i < s.size() && s[i] >= '0' && s[i] <= '9') ++i;
  if (i == digits) return false;
  if (i < s.size() && s[i] == '.') {
    const std::size_t fraction = ++i;
    while (i < s.size() && s[i] >= '0' && s[i] <= '9') ++i;
    if (i == fraction) return false;
  }
  return i == s.size();
}

/// A source that hands out its bytes in chunks of random size 1..max_chunk,
/// as a pipe or a slow device does.
class RandomChunkSource final : public ByteSource {
 public:
  RandomChunkSource(std::string data, std::string name, std::uint64_t seed, std::size_t max_chunk)
      : ByteSource(std::move(name)), data_(std::move(data)), rng_(seed), max_chunk_(max_chunk) {}

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    const std::size_t n =
        std::min({capacity, 1 + rng_.below(max_chunk_), data_.size() - position_});
    std::memcpy(buffer, data_.data() + position_, n);
    position_ += n;
    return n;
  }

 private:
  std::string data_;
  std::size_t position_ = 0;
  Rng rng_;
  std::size_t max_chunk_;
};

/// Everything a reader returned, copied out of the reader's buffers.
struct RecordCopy {
  std::uint64_t line = 0;
  std::uint64_t index = 0;
  std::string raw;
  std::vector<std::optional<std::string>> fields;  // nullopt: absent field
  std::size_t extra_fields = 0;
  RecordProblem problem = RecordProblem::kNone;
  std::string problem_detail;
  bool operator==(const RecordCopy&) const = default;
};

struct ReadAll {
  std::string error;  // "code: message" when opening threw baroz::Error
  LogLayout layout;
  std::vector<RecordCopy> records;
  std::uint64_t blank_lines = 0;
};

ReadAll read_all(ByteSource& source, const baroz::ReaderOptions& options) {
  ReadAll result;
  std::unique_ptr<baroz::RecordReader> reader;
  try {
    reader = baroz::open_record_reader(source, options);
  } catch (const baroz::Error& e) {
    result.error = std::to_string(static_cast<int>(e.code())) + ": " + e.what();
    return result;
  }
  result.layout = reader->layout();
  Record record;
  while (reader->next(record)) {
    RecordCopy copy;
    copy.line = record.line;
    copy.index = record.index;
    copy.raw = std::string(record.raw);
    for (std::string_view f : record.fields)
      copy.fields.push_back(f.data() == nullptr ? std::nullopt
                                                : std::optional<std::string>(std::string(f)));
    copy.extra_fields = record.extra_fields;
    copy.problem = record.problem;
    copy.problem_detail = std::string(record.problem_detail);
    result.records.push_back(std::move(copy));
  }
  result.blank_lines = reader->blank_lines();
  return result;
}

std::string describe(const RecordCopy& r) {
  std::string s = "line " + std::to_string(r.line) + " index " + std::to_string(r.index) +
                  " problem " + std::to_string(static_cast<int>(r.problem)) + " extra " +
                  std::to_string(r.extra_fields) + " raw \"" + escaped(r.raw, 200) + "\" fields [";
  for (const auto& f : r.fields) s += f ? "\"" + escaped(*f, 60) + "\" " : "<absent> ";
  return s + "] detail \"" + r.problem_detail + "\"";
}

/// The first difference between two reads, or "" when they are the same.
std::string first_difference(const ReadAll& a, const ReadAll& b) {
  if (a.error != b.error) return "error: \"" + a.error + "\" vs \"" + b.error + "\"";
  const LogLayout& x = a.layout;
  const LogLayout& y = b.layout;
  if (x.format != y.format || x.delimiter != y.delimiter || x.had_bom != y.had_bom ||
      x.crlf != y.crlf || x.preamble_lines != y.preamble_lines ||
      x.header_line != y.header_line || x.columns != y.columns)
    return "layout differs";
  const std::size_t n = std::min(a.records.size(), b.records.size());
  for (std::size_t i = 0; i < n; ++i)
    if (!(a.records[i] == b.records[i]))
      return "record " + std::to_string(i + 1) + ": " + describe(a.records[i]) + "\n   vs " +
             describe(b.records[i]);
  if (a.records.size() != b.records.size())
    return "record count " + std::to_string(a.records.size()) + " vs " +
           std::to_string(b.records.size());
  if (a.blank_lines != b.blank_lines) return "blank line count differs";
  return {};
}

// ---------------------------------------------------------------------------
// Seed logs and mutations

struct SeedLog {
  std::string name;  // for messages
  std::string text;
  bool ndjson = false;
};

/// CSV with a byte order mark, CRLF, a quoted header, quoted numbers, quoted
/// fields holding the delimiter, "" and a CRLF line break (RFC 4180 §2).
std::string seed_csv_quoted() {
  std::string s = "\xEF\xBB\xBF\"time_s\",\"pressure_hpa\",\"temperature_c\",\"note\"\r\n";
  const char* notes[] = {"\"rest, on the pad\"", "plain", "\"say \"\"hi\"\"\"",
                         "\"two\r\nlines\"",     "",      "\"\""};
  for (int i = 0; i < 24; ++i) {
    const double p = 1013.25 - (i < 6 ? 0.0 : 2.5 * (i - 5));
    char row[96];
    const double t = 15.0 - 0.1 * i;
    if (i % 7 == 4)
      std::snprintf(row, sizeof row, "%d,%.2f,,", i, p);  // no temperature: kept, flagged
    else if (i % 5 == 3)
      std::snprintf(row, sizeof row, "%d,\"%.2f\",%.1f,", i, p, t);
    else
      std::snprintf(row, sizeof row, "%d,%.2f,%.1f,", i, p, t);
    s += row;
    s += notes[i % 6];
    s += "\r\n";
  }
  return s;
}

/// ';'-separated with a '#' preamble, pressure in Pa, LF, a blank line and
/// no final line break.
std::string seed_csv_semicolon() {
  std::string s = "# logger fw 2.1\n# site: test field\ntime_s;pressure_pa;temp_c\n";
  for (int i = 0; i < 20; ++i) {
    char row[64];
    std::snprintf(row, sizeof row, "%.1f;%d;%.2f", 0.5 * i, 101325 - (i < 4 ? 0 : 40 * (i - 3)),
                  14.0 - 0.05 * i);
    s += row;
    if (i == 10) s += "\n";  // a blank line
    if (i < 19) s += "\n";
  }
  return s;
}

/// Tab-separated with RFC 3339 times (fractions, Z and an offset).
std::string seed_tsv_rfc3339() {
  std::string s = "time\tpressure_hpa\ttemperature_c\thumidity_pct\n";
  for (int i = 0; i < 16; ++i) {
    char row[96];
    const int minute = i / 4, centis = (i % 4) * 25;
    if (i % 6 == 5)  // 12:mm local at +02:00 is 10:mm Z
      std::snprintf(row, sizeof row, "2024-05-01T12:%02d:%02d.%02d+02:00\t%.2f\t%.1f\t%d\n", minute,
                    i, centis, 1013.0 - 0.75 * i, 12.0 + 0.1 * i, 40 + i);
    else
      std::snprintf(row, sizeof row, "2024-05-01T10:%02d:%02d.%02dZ\t%.2f\t%.1f\t%d\n", minute, i,
                    centis, 1013.0 - 0.75 * i, 12.0 + 0.1 * i, 40 + i);
    s += row;
  }
  return s;
}

/// NDJSON: null, keys in another order, an unknown nested key, CRLF, a blank
/// line, numbers as strings and in exponent form (RFC 8259 §6).
std::string seed_ndjson_plain() {
  std::string s;
  for (int i = 0; i < 20; ++i) {
    char row[200];
    const double p = 1013.25 - (i < 5 ? 0.0 : 1.5 * (i - 4));
    switch (i % 6) {
      case 0:
        std::snprintf(row, sizeof row,
                      "{\"time_s\":%d,\"pressure_hpa\":%.2f,\"temperature_c\":15.0}\n", i, p);
        break;
      case 1:
        std::snprintf(row, sizeof row,
                      "{\"time_s\":%d,\"pressure_hpa\":%.2f,\"temperature_c\":null}\n", i, p);
        break;
      case 2:
        std::snprintf(row, sizeof row,
                      "{\"pressure_hpa\":%.2f,\"time_s\":%d,\"temperature_c\":14.8,"
                      "\"extra\":{\"a\":[1,2,{\"b\":null}]}}\r\n",
                      p, i);
        break;
      case 3:
        std::snprintf(row, sizeof row,
                      " { \"time_s\" : %d , \"pressure_hpa\" : \"%.2f\" , \"temperature_c\" : "
                      "\"14.5\" } \n\n",
                      i, p);
        break;
      case 4:
        std::snprintf(row, sizeof row,
                      "{\"time_s\":%d.0e0,\"pressure_hpa\":%.4e,\"temperature_c\":1.45E1}\n", i,
                      p);
        break;
      default:
        std::snprintf(row, sizeof row, "{\"time_s\":%d,\"pressure_hpa\":%.2f}\n", i, p);
        break;
    }
    s += row;
  }
  return s;
}

/// NDJSON with a byte order mark, epoch milliseconds, renamed columns, a
/// GNSS column, string escapes and a last line without a line break.
std::string seed_ndjson_epoch() {
  std::string s = "\xEF\xBB\xBF";
  for (int i = 0; i < 16; ++i) {
    char row[200];
    std::snprintf(row, sizeof row,
                  "{\"time_ms\":%lld,\"baro_hpa\":%.4f,\"air_temp_c\":%.2f,\"gnss_alt\":%.2f,"
                  "\"note\":\"%s\"}%s",
                  1714557600000LL + 100LL * i, 1002.4 - (i < 4 ? 0.0 : 0.3 * (i - 3)),
                  27.1 - 0.01 * i, 146.2 + 2.5 * i, i % 3 == 0 ? "\\u00b0C \\\"q\\\"" : "ok",
                  i < 15 ? "\n" : "");
    s += row;
  }
  return s;
}

std::vector<SeedLog> seed_logs() {
  return {{"csv quoted crlf bom", seed_csv_quoted(), false},
          {"csv semicolon preamble", seed_csv_semicolon(), false},
          {"tsv rfc3339", seed_tsv_rfc3339(), false},
          {"ndjson plain", seed_ndjson_plain(), true},
          {"ndjson epoch bom", seed_ndjson_epoch(), true}};
}

/// The bounds [begin, end) of the physical line holding byte `pos` (end
/// includes its LF).
std::pair<std::size_t, std::size_t> line_around(const std::string& s, std::size_t pos) {
  if (s.empty()) return {0, 0};
  pos = std::min(pos, s.size() - 1);
  std::size_t begin = s.rfind('\n', pos == 0 ? 0 : pos - 1);
  begin = (begin == std::string::npos || pos == 0) ? 0 : begin + 1;
  std::size_t end = s.find('\n', pos);
  end = end == std::string::npos ? s.size() : end + 1;
  return {begin, end};
}

/// Applies 1 to 4 random mutations: bit flips, random bytes, inserted
/// quotes, delimiters, line breaks, NUL, braces and JSON/number tokens,
/// deletions, truncation, duplicated and deleted lines, long runs.
/// Adds the number applied to `*applied` when given.
std::string mutate(std::string s, Rng& rng, std::uint64_t* applied = nullptr) {
  static constexpr char kSpecials[] = {'"', ',', ';', '\t', '\n', '\r', '\0', '{', '}',
                                       '[', ']', ':', ' ',  '#',  '\\', '-',  'e', '.'};
  static constexpr std::string_view kTokens[] = {
      "\r\n",     "\"\"",  "\xEF\xBB\xBF", "null",  "1e999", "nan",   "-inf",
      "\\u0000",  "\\ud800", "{}",         "[]",    "\xff\xfe", "\",\"", "99999999999999999999",
      "0x1p3",    "1,5",   "true",         "\":\"", "\n\n\n", "\"\n\"", "-0",
      "2024-13-45T99:99:99Z"};
  const std::size_t count = 1 + rng.below(4);
  if (applied != nullptr) *applied += count;
  for (std::size_t m = 0; m < count; ++m) {
    const std::size_t pos = rng.below(s.size() + 1);
    switch (rng.below(12)) {
      case 0:  // one bit flipped
        if (!s.empty()) s[pos % s.size()] ^= static_cast<char>(1u << rng.below(8));
        break;
      case 1:  // one byte replaced
        if (!s.empty()) s[pos % s.size()] = static_cast<char>(rng.below(256));
        break;
      case 2:
      case 3:  // a structural character inserted
        s.insert(pos, 1, kSpecials[rng.below(std::size(kSpecials))]);
        break;
      case 4:  // a token inserted
        s.insert(pos, kTokens[rng.below(std::size(kTokens))]);
        break;
      case 5:  // bytes deleted
        s.erase(pos, 1 + rng.below(8));
        break;
      case 6:  // truncated
        s.resize(pos);
        break;
      case 7: {  // a line duplicated 1 to 3 times
        auto [b, e] = line_around(s, pos);
        std::string line = s.substr(b, e - b);
        if (!line.empty() && line.back() != '\n') line += '\n';
        const std::size_t copies = 1 + rng.below(3);
        for (std::size_t c = 0; c < copies; ++c) s.insert(e, line);
        break;
      }
      case 8: {  // a line deleted
        auto [b, e] = line_around(s, pos);
        s.erase(b, e - b);
        break;
      }
      case 9: {  // two lines swapped
        auto [b1, e1] = line_around(s, pos);
        auto [b2, e2] = line_around(s, rng.below(s.size() + 1));
        if (e1 <= b2) {
          std::string second = s.substr(b2, e2 - b2), first = s.substr(b1, e1 - b1);
          s.replace(b2, e2 - b2, first);
          s.replace(b1, e1 - b1, second);
        }
        break;
      }
      case 10:  // a long run of one character (many 32-byte blocks)
        s.insert(pos, 1 + rng.below(300), kSpecials[rng.below(std::size(kSpecials))]);
        break;
      default:  // a long field of digits
        s.insert(pos, std::string(1 + rng.below(200), static_cast<char>('0' + rng.below(10))));
        break;
    }
  }
  return s;
}

// ---------------------------------------------------------------------------
// The property of one `baroz height` run over `input`

/// What one run produced, from the command line or from run_height_job.
struct RunOutcome {
  int status = 0;                   // exit status (library: 0 with rows written, else 2)
  std::optional<CountLine> counts;  // the count line (library: the report's counts)
  std::string out;                  // the series
  std::optional<std::string> rejects;  // the rejects file, if one was written
  std::string err;                  // stderr, for failure messages
};

/// `baroz height --ref-pressure 1013.25 --rejects FILE ARGUMENT` in-process.
RunOutcome run_height_cli(const std::string& argument, const std::string& stdin_text,
                          const std::string& rejects_path) {
  std::filesystem::remove(rejects_path);
  const CliResult r = run_cli(
      {"height", "--ref-pressure", "1013.25", "--rejects", rejects_path, argument}, stdin_text);
  RunOutcome outcome;
  outcome.status = r.status;
  outcome.counts = find_count_line(r.err);
  outcome.out = r.out;
  if (std::filesystem::exists(rejects_path))
    outcome.rejects = baroz::test::read_file(rejects_path);
  outcome.err = r.err;
  return outcome;
}

/// The same run through the library (height_job.hpp): no option parsing and
/// no files, so that many more mutations fit in the time.
RunOutcome run_height_library(ByteSource& source) {
  baroz::HeightOptions options;
  options.reference.kind = baroz::ReferenceKind::kPressure;
  options.reference.pressure_pa = 101325.0;  // 1013.25 hPa
  std::ostringstream out, err, rejects_text;
  auto sink = baroz::make_ostream_sink(out, "output");
  baroz::RejectsWriter rejects(baroz::make_ostream_sink(rejects_text, "rejects"));
  baroz::Diagnostics diagnostics(err, baroz::ErrorFormat::kText);
  RunOutcome outcome;
  try {
    const baroz::HeightReport report =
        baroz::run_height_job(source, *sink, options, diagnostics, &rejects);
    sink->commit();
    rejects.commit();
    outcome.counts = CountLine{report.rows_read, report.rows_written, report.rows_rejected};
    outcome.status = report.rows_written > 0 ? 0 : 2;
    outcome.rejects = rejects_text.str();
  } catch (const baroz::Error& e) {  // a setup problem: the input's header, columns
    outcome.status = static_cast<int>(e.code());
    err << e.what() << '\n';
  }
  outcome.out = out.str();
  outcome.err = err.str();
  return outcome;
}

/// Checks one run: exit status, the count line, the output rows and the
/// rejects file against each other and against the reader's own records.
/// `source` is the input's name ("<stdin>" or the path): it decides the
/// format (by extension, else sniffed) and is the rejects' source column.
void check_height_run(const std::string& input, const std::string& source, const RunOutcome& r) {
  INFO("stderr: " << escaped(r.err, 1500));
  // Without --strict, bad data is 0 (rows skipped) or 2 (no usable rows or an
  // unreadable header); the options are fixed and valid, so never 1.
  REQUIRE((r.status == 0 || r.status == 2));

  // What the reader alone makes of the same bytes, with the same name (the
  // name decides the format by extension, else the content is sniffed).
  auto source_bytes = baroz::make_string_source(input, source);
  const ReadAll reader = read_all(*source_bytes, baroz::ReaderOptions{});
  std::map<std::uint64_t, std::string_view> raw_at_line;
  for (const auto& rec : reader.records) raw_at_line.emplace(rec.line, rec.raw);

  const std::optional<CountLine>& counts = r.counts;
  if (r.status == 0) REQUIRE(counts.has_value());
  if (!reader.error.empty()) {
    // The reader refused the input (no header, no JSON object): no rows.
    CHECK(r.status == 2);
    CHECK_FALSE(counts.has_value());
  }
  if (!counts) return;

  // Product spec, "Bad input (pinned)": rows read = written + rejected.
  CHECK(counts->read == counts->written + counts->rejected);
  CHECK(counts->read == reader.records.size());  // every record is a row read
  if (r.status == 0) CHECK(counts->written > 0);
  if (r.status == 2) CHECK(counts->written == 0);

  // The series: a header and one line per row written.
  const auto newlines = static_cast<std::uint64_t>(std::count(r.out.begin(), r.out.end(), '\n'));
  REQUIRE(newlines >= 1);
  CHECK(newlines - 1 == counts->written);
  const std::optional<CsvRecords> out = parse_rfc4180(r.out);
  REQUIRE(out.has_value());
  REQUIRE(out->size() == counts->written + 1);
  const std::vector<std::string>& header = out->front();
  auto column = [&header](std::string_view name) {
    auto it = std::find(header.begin(), header.end(), name);
    return it == header.end() ? std::size_t{0} : static_cast<std::size_t>(it - header.begin());
  };
  const std::size_t elapsed = column("elapsed_s"), pressure = column("pressure_hpa"),
                    temperature = column("temperature_c"), height = column("height_m"),
                    low = column("height_low_m"), high = column("height_high_m");
  REQUIRE(std::min({elapsed, pressure, temperature, height, low, high}) > 0);
  for (std::size_t i = 1; i < out->size(); ++i) {
    const std::vector<std::string>& row = (*out)[i];
    INFO("output row " << i << ": " << escaped(r.out.substr(0, 2000)));
    REQUIRE(row.size() == header.size());
    // Never NaN or infinity; temperature may be empty where unknown.
    CHECK(is_plain_number(row[elapsed]));
    CHECK(is_plain_number(row[pressure]));
    CHECK((row[temperature].empty() || is_plain_number(row[temperature])));
    CHECK(is_plain_number(row[height]));
    CHECK(is_plain_number(row[low]));
    CHECK(is_plain_number(row[high]));
    if (is_plain_number(row[low]) && is_plain_number(row[height]) && is_plain_number(row[high])) {
      CHECK(std::stod(row[low]) <= std::stod(row[height]));
      CHECK(std::stod(row[height]) <= std::stod(row[high]));
    }
  }

  // The rejects file: its header, then exactly one record per rejected row
  // (counted as RFC 4180 records: a raw field may hold quoted line breaks).
  REQUIRE(r.rejects.has_value());
  INFO("rejects: " << escaped(*r.rejects, 1500));
  const std::optional<CsvRecords> rejects = parse_rfc4180(*r.rejects);
  REQUIRE(rejects.has_value());
  REQUIRE(!rejects->empty());
  CHECK(rejects->front() == std::vector<std::string>{"source", "line", "reason", "raw"});
  CHECK(rejects->size() - 1 == counts->rejected);
  for (std::size_t i = 1; i < rejects->size(); ++i) {
    const std::vector<std::string>& rec = (*rejects)[i];
    REQUIRE(rec.size() == 4);
    CHECK(rec[0] == source);
    // The physical 1-based line where a record of the input starts, and
    // that record's text as the reader gave it (nothing is lost).
    std::uint64_t line = 0;
    const auto [end, ec] = std::from_chars(rec[1].data(), rec[1].data() + rec[1].size(), line);
    CHECK((ec == std::errc() && end == rec[1].data() + rec[1].size()));
    const auto record = raw_at_line.find(line);
    REQUIRE(record != raw_at_line.end());
    CHECK(rec[3] == record->second);
    CHECK(!rec[2].empty());
  }
}

// ---------------------------------------------------------------------------
// Live streaming through a pipe

/// How far the consumer has got (records read, rows written), shared with a
/// writer thread that waits for it.
struct Progress {
  std::mutex mutex;
  std::condition_variable changed;
  std::uint64_t seen = 0;

  void publish(std::uint64_t n) {
    {
      std::lock_guard lock(mutex);
      seen = n;
    }
    changed.notify_all();
  }
  bool wait_for(std::uint64_t n, std::chrono::milliseconds timeout) {
    std::unique_lock lock(mutex);
    return changed.wait_for(lock, timeout, [&] { return seen >= n; });
  }
};

bool write_all(int fd, std::string_view data) {
  while (!data.empty()) {
    const ssize_t n = ::write(fd, data.data(), data.size());
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) return false;
    data.remove_prefix(static_cast<std::size_t>(n));
  }
  return true;
}

/// Writes `first` (the header, or the first line of an NDJSON log) with
/// rows[0], then each rows[k] only once the consumer has reported k, with a
/// short pause; waits for the last row to be reported, then closes `fd`.
/// Returns 0, or the count the consumer never reached (it was waiting for
/// more input instead of handing out what had arrived).
std::uint64_t feed_rows(int fd, const std::string& first, const std::vector<std::string>& rows,
                        Progress& progress) {
  constexpr std::chrono::milliseconds kTimeout{10000};
  std::uint64_t stuck = 0;
  if (!write_all(fd, first + rows[0])) stuck = 1;
  for (std::size_t k = 1; stuck == 0 && k <= rows.size(); ++k) {
    if (!progress.wait_for(k, kTimeout)) {
      stuck = k;
      break;
    }
    if (k == rows.size()) break;
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
    if (!write_all(fd, rows[k])) stuck = k + 1;
  }
  ::close(fd);
  return stuck;
}

/// A pipe whose ends are closed at the end of the scope (the write end may
/// be handed over).
struct Pipe {
  int read_fd = -1;
  int write_fd = -1;
  Pipe() {
    int fds[2];
    if (::pipe(fds) == 0) {
      read_fd = fds[0];
      write_fd = fds[1];
    }
  }
  ~Pipe() {
    if (read_fd >= 0) ::close(read_fd);
  }
};

/// Joins a thread at the end of the scope (also when a REQUIRE throws).
struct Joined {
  std::thread thread;
  ~Joined() {
    if (thread.joinable()) thread.join();
  }
};

/// Collects the output of a live job and reports each complete row.
class LiveSink final : public ByteSink {
 public:
  explicit LiveSink(Progress& progress) : progress_(progress) {}
  void write(const char* data, std::size_t size) override {
    text_.append(data, size);
    lines_ += static_cast<std::uint64_t>(std::count(data, data + size, '\n'));
    progress_.publish(lines_ > 0 ? lines_ - 1 : 0);  // the first line is the header
  }
  void flush() override {}
  const std::string& text() const { return text_; }

 private:
  Progress& progress_;
  std::string text_;
  std::uint64_t lines_ = 0;
};

// ---------------------------------------------------------------------------
// A large synthetic log

/// A log that is never held in memory: rows are made as they are read.
/// `regular`: it says it never blocks, like a file (the pipeline then reads
/// ahead on a second thread), else it is read like a pipe.
/// 50 Hz; at rest at 1013.250 hPa (+-0.02 hPa of deterministic noise) for
/// the first 60 s, then climbing at 0.5 hPa/s to 500 hPa, then going up and
/// down between 500 and 1000 hPa at the same rate.
class SyntheticLogSource final : public ByteSource {
 public:
  static constexpr std::uint64_t kRate = 50;  // rows per second
  static constexpr std::uint64_t kRestRows = 60 * kRate;

  SyntheticLogSource(std::uint64_t rows, bool regular)
      : ByteSource("synthetic.csv"),
        rows_(rows),
        regular_(regular),
        pending_("time_s,pressure_pa,temperature_c\n") {}
  bool is_regular_file() const override { return regular_; }

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    std::size_t n = 0;
    while (n < capacity) {
      if (offset_ == pending_.size()) {
        if (next_row_ == rows_) break;
        make_row(next_row_++);
      }
      const std::size_t take = std::min(capacity - n, pending_.size() - offset_);
      std::memcpy(buffer + n, pending_.data() + offset_, take);
      offset_ += take;
      n += take;
    }
    return n;
  }

 private:
  /// Pressure of row i in tenths of a pascal.
  static std::int64_t pressure_dpa(std::uint64_t i) {
    // A splitmix-style hash of i for the noise: -20..20 dPa = +-0.02 hPa.
    std::uint64_t z = (i + 1) * 0x9E3779B97F4A7C15ull;
    z = (z ^ (z >> 31)) * 0xBF58476D1CE4E5B9ull;
    const auto noise = static_cast<std::int64_t>((z >> 33) % 41) - 20;
    constexpr std::int64_t kRest = 1013250, kLow = 500000, kHigh = 1000000;
    constexpr std::int64_t kStep = 100;  // 0.5 hPa/s at 50 Hz = 10 Pa per row
    if (i < kRestRows) return kRest + noise;
    const auto k = static_cast<std::int64_t>(i - kRestRows);
    const std::int64_t down = k * kStep;
    if (down <= kRest - kLow) return kRest - down + noise;
    const std::int64_t q = (down - (kRest - kLow)) % (2 * (kHigh - kLow));
    return (q < kHigh - kLow ? kLow + q : kHigh - (q - (kHigh - kLow))) + noise;
  }

  void make_row(std::uint64_t i) {
    char row[64];
    char* p = row;
    char* const end = row + sizeof row;
    p = std::to_chars(p, end, i / kRate).ptr;
    *p++ = '.';
    const std::uint64_t centis = (i % kRate) * (100 / kRate);
    *p++ = static_cast<char>('0' + centis / 10);
    *p++ = static_cast<char>('0' + centis % 10);
    *p++ = ',';
    const std::int64_t dpa = pressure_dpa(i);
    p = std::to_chars(p, end, dpa / 10).ptr;
    *p++ = '.';
    *p++ = static_cast<char>('0' + dpa % 10);
    const char temperature[] = ",12.5\n";
    std::memcpy(p, temperature, sizeof temperature - 1);
    p += sizeof temperature - 1;
    pending_.assign(row, static_cast<std::size_t>(p - row));
    offset_ = 0;
  }

  std::uint64_t rows_;
  bool regular_;
  std::uint64_t next_row_ = 0;
  std::string pending_;
  std::size_t offset_ = 0;
};

/// Counts the lines written and discards them.
class CountingSink final : public ByteSink {
 public:
  void write(const char* data, std::size_t size) override {
    lines_ += static_cast<std::uint64_t>(std::count(data, data + size, '\n'));
    bytes_ += size;
  }
  void flush() override {}
  std::uint64_t lines() const { return lines_; }
  std::uint64_t bytes() const { return bytes_; }

 private:
  std::uint64_t lines_ = 0;
  std::uint64_t bytes_ = 0;
};

/// Peak resident set size of the process [KiB] (Linux ru_maxrss unit).
long peak_rss_kib() {
  rusage usage{};
  ::getrusage(RUSAGE_SELF, &usage);
  return usage.ru_maxrss;
}

/// Resets the peak to the current resident set size (Linux >= 4.0,
/// proc(5) /proc/pid/clear_refs "5"); false where not available.
bool reset_peak_rss() {
  std::ofstream clear("/proc/self/clear_refs");
  if (!clear) return false;
  clear << "5";
  clear.flush();
  return static_cast<bool>(clear);
}

}  // namespace

// ---------------------------------------------------------------------------
// Tests

// Guards: a damaged log never crashes `baroz height` or makes it exit with
// anything but 0 or 2, and nothing is silently lost: the count line adds up
// (read = written + rejected), every reader record is a row read, the
// output has one row per row written (numbers only, never NaN), and the
// rejects file has one RFC 4180 record per rejected row, each naming the
// source and the physical line where its record starts. Most mutations go
// through run_height_job directly (fast); a share goes through the whole
// command line, from standard input and from files (files are parsed on a
// second thread, see pipeline/sample_feed.hpp).
TEST_CASE("mutated logs never crash baroz height and every row is accounted for", "[robust]") {
  const std::vector<SeedLog> seeds = seed_logs();
  TempDir dir;
  const std::string rejects_path = dir / "rejects.csv";

  // The seeds themselves are valid logs: every row written, none rejected.
  for (const SeedLog& seed : seeds) {
    INFO("seed: " << seed.name);
    const RunOutcome r = run_height_cli("-", seed.text, rejects_path);
    INFO("stderr: " << r.err);
    REQUIRE(r.status == 0);
    REQUIRE(r.counts.has_value());
    CHECK(r.counts->rejected == 0);
    CHECK(r.counts->written > 10);
    check_height_run(seed.text, "<stdin>", r);
  }

  const std::uint64_t seed = env_count("BAROZ_ROBUST_SEED", 20240501);
  // Each run costs a few ms under AddressSanitizer, most of it the readers'
  // 1 MiB buffers; 600 runs carry about 2900 mutations.
  const std::uint64_t iterations = env_count("BAROZ_ROBUST_ITERATIONS", 600);
  const std::uint64_t cli_every = 8;  // one run in 8 through the command line
  Rng rng(seed);
  std::uint64_t exit_0 = 0, exit_2 = 0, mutations = 0;
  for (std::uint64_t it = 0; it < iterations; ++it) {
    const SeedLog& base = seeds[rng.below(seeds.size())];
    std::string input = base.text;
    // Usually a few mutations; now and then many on a longer log.
    const std::size_t rounds = rng.one_in(8) ? 4 + rng.below(12) : 1;
    if (rounds > 1) input += input.substr(input.find('\n') + 1);
    for (std::size_t m = 0; m < rounds; ++m) input = mutate(std::move(input), rng, &mutations);
    // A name without an extension (sniffed), a name for its format, or one
    // whose extension forces CSV whatever the content.
    const std::size_t how = rng.below(3);
    const std::string name = how == 0   ? "<stdin>"
                             : how == 2 ? "log.dat"
                             : base.ndjson ? "log.ndjson"
                                           : "log.csv";
    INFO("seed " << seed << ", iteration " << it << ", from \"" << base.name << "\", name "
                 << name << ": \"" << escaped(input) << "\"");
    RunOutcome r;
    std::string source = name;
    if (it % cli_every == 0) {
      if (how == 0) {
        r = run_height_cli("-", input, rejects_path);
      } else {
        source = dir.file(name, input);
        r = run_height_cli(source, "", rejects_path);
      }
    } else if (rng.one_in(2)) {
      auto whole = baroz::make_string_source(input, name);  // read ahead on a second thread
      r = run_height_library(*whole);
    } else {
      RandomChunkSource pieces(input, name, rng.next(), 1 + rng.below(64));  // as from a pipe
      r = run_height_library(pieces);
    }
    check_height_run(input, source, r);
    (r.status == 0 ? exit_0 : exit_2) += 1;
  }
  // The mutations must leave many logs usable, or the test would only ever
  // check the "no usable rows" path.
  CAPTURE(iterations, mutations, exit_0, exit_2);
  CHECK(exit_0 > iterations / 4);
  CHECK(exit_2 > 0);
}

// Guards: the readers' records do not depend on how the bytes arrive
// (io/byte_source.hpp: a pipe returns what has arrived). The record end
// search is resumable, the SIMD fast path falls back to the general path at
// buffer ends, and the format sniffing reads in pieces: for random valid and
// mutated CSV and NDJSON, reading in chunks of 1..n bytes gives exactly the
// one-shot records (lines, indexes, raw text, fields with absent/empty,
// extra fields, problems and their detail), layout and blank-line count.
TEST_CASE("chunked reading gives exactly the records of one-shot reading", "[robust]") {
  const std::vector<SeedLog> seeds = seed_logs();
  const std::uint64_t seed = env_count("BAROZ_ROBUST_SEED", 20240501) + 1;
  const std::uint64_t iterations = env_count("BAROZ_ROBUST_ITERATIONS", 700);
  Rng rng(seed);
  static constexpr std::size_t kMaxChunks[] = {1, 2, 3, 5, 8, 16, 31, 33, 64, 200, 4096};
  static constexpr std::string_view kNames[] = {"<stdin>", "log.csv", "log.ndjson", "log.tsv"};

  // Random valid CSV: random delimiter, line ends, quoting, empty fields,
  // fields longer than the 32-byte blocks of the fast path.
  auto random_csv = [&rng] {
    const char delimiter = ",;\t"[rng.below(3)];
    const bool crlf = rng.one_in(2);
    const std::string eol = crlf ? "\r\n" : "\n";
    std::string s = rng.one_in(3) ? "\xEF\xBB\xBF" : "";
    if (rng.one_in(3)) s += "# preamble" + eol + "#" + eol;
    const std::size_t columns = 1 + rng.below(6);
    for (std::size_t c = 0; c < columns; ++c)
      s += (c ? std::string(1, delimiter) : "") + "col" + std::to_string(c);
    s += eol;
    const std::size_t rows = rng.below(40);
    for (std::size_t r = 0; r < rows; ++r) {
      if (rng.one_in(10)) s += eol;  // a blank line
      const std::size_t fields = rng.one_in(8) ? 1 + rng.below(8) : columns;
      for (std::size_t c = 0; c < fields; ++c) {
        if (c) s += delimiter;
        std::string value(rng.below(rng.one_in(10) ? 120 : 12), 'x');
        for (char& ch : value) ch = "0123456789.-eab "[rng.below(16)];
        switch (rng.below(5)) {
          case 0:
            s += '"' + value + '"';
            break;
          case 1:  // quoted with the delimiter, "" and a line break inside
            s += '"' + value + delimiter + "\"\"" + eol + value + '"';
            break;
          default:
            s += value;
            break;
        }
      }
      if (r + 1 < rows || rng.one_in(2)) s += eol;
    }
    return s;
  };
  // Random valid NDJSON: shuffled and missing keys, nested values, escapes.
  auto random_ndjson = [&rng] {
    std::string s = rng.one_in(3) ? "\xEF\xBB\xBF" : "";
    const std::size_t rows = 1 + rng.below(30);
    const char* values[] = {"1",     "-2.5e3",     "\"text\"", "\"\\u00b0C\\n\\\"\"", "null",
                            "true",  "[1,[2],{}]", "{\"a\":{\"b\":[null]}}", "0.000125",
                            "\"\""};
    for (std::size_t r = 0; r < rows; ++r) {
      if (rng.one_in(10)) s += rng.one_in(2) ? "\n" : "  \r\n";
      s += '{';
      const std::size_t keys = rng.below(6);
      for (std::size_t k = 0; k < keys; ++k) {
        if (k) s += ',';
        s += "\"k" + std::to_string(rng.below(6)) + "\":" + values[rng.below(std::size(values))];
      }
      s += '}';
      if (rng.one_in(10)) s += std::string(rng.below(100), ' ');
      if (r + 1 < rows || rng.one_in(2)) s += rng.one_in(4) ? "\r\n" : "\n";
    }
    return s;
  };

  for (std::uint64_t it = 0; it < iterations; ++it) {
    std::string input;
    switch (rng.below(4)) {
      case 0:
        input = random_csv();
        break;
      case 1:
        input = random_ndjson();
        break;
      case 2:
        input = mutate(rng.one_in(2) ? random_csv() : random_ndjson(), rng);
        break;
      default:
        input = mutate(seeds[rng.below(seeds.size())].text, rng);
        break;
    }
    const std::string name(kNames[rng.below(std::size(kNames))]);
    baroz::ReaderOptions options;
    if (rng.one_in(6)) options.delimiter = ",;\t"[rng.below(3)];
    const std::size_t max_chunk = kMaxChunks[rng.below(std::size(kMaxChunks))];
    INFO("seed " << seed << ", iteration " << it << ", name " << name << ", chunks up to "
                 << max_chunk << ", input \"" << escaped(input) << "\"");

    auto whole = baroz::make_string_source(input, name);
    const ReadAll expected = read_all(*whole, options);
    RandomChunkSource pieces(input, name, rng.next(), max_chunk);
    const ReadAll got = read_all(pieces, options);
    const std::string difference = first_difference(expected, got);
    INFO(difference);
    REQUIRE(difference.empty());
  }
}

// Guards: the buffer limits (io/csv_reader.hpp, io/ndjson_reader.hpp): a
// record longer than the 1 MiB buffer grows it, the buffer compacts across
// refills, and a record over 16 MiB is one kTooLong record (raw: its first
// 1024 bytes), after which reading goes on at the next line with the right
// line numbers; the same with random chunks of up to 64 KiB.
TEST_CASE("records larger than the buffer and over the limit read the same in chunks",
          "[robust]") {
  constexpr std::size_t kMiB = std::size_t{1} << 20;
  Rng rng(77);
  const std::string big_quoted = [&] {
    std::string f;
    while (f.size() < kMiB + kMiB / 2) f += "0123456789,abcdef\r\n\"\"";
    return f;
  }();

  SECTION("csv") {
    std::string input = "time_s,pressure_hpa,note\n";
    for (int i = 0; i < 30000; ++i) input += std::to_string(i) + ",1013.25,\"quoted, row\"\n";
    input += "30000,1000,\"" + big_quoted + "\"\n";        // > 1 MiB: the buffer grows
    input += "30001,1000," + std::string(17 * kMiB, 'x') + "\n";  // > 16 MiB: too long
    input += "30002,999.5,after\n";
    const std::uint64_t big_line = 30002;  // header is line 1
    auto whole = baroz::make_string_source(input, "big.csv");
    const ReadAll expected = read_all(*whole, {});
    REQUIRE(expected.error.empty());
    REQUIRE(expected.records.size() == 30003);
    const RecordCopy& quoted = expected.records[30000];
    CHECK(quoted.line == big_line);
    CHECK(quoted.problem == RecordProblem::kNone);
    REQUIRE(quoted.fields.size() == 3);
    // RFC 4180 §2 rule 7: "" in a quoted field is one quote.
    std::string unescaped;
    for (std::size_t p = 0; p < big_quoted.size(); ++p) {
      unescaped += big_quoted[p];
      if (big_quoted[p] == '"') ++p;  // the second quote of ""
    }
    CHECK(quoted.fields[2] == unescaped);
    const auto quoted_newlines =
        static_cast<std::uint64_t>(std::count(big_quoted.begin(), big_quoted.end(), '\n'));
    const RecordCopy& too_long = expected.records[30001];
    CHECK(too_long.problem == RecordProblem::kTooLong);
    CHECK(too_long.raw.size() == 1024);
    CHECK(too_long.line == big_line + quoted_newlines + 1);
    const RecordCopy& after = expected.records[30002];
    CHECK(after.problem == RecordProblem::kNone);
    CHECK(after.line == too_long.line + 1);
    CHECK(after.fields[2] == std::optional<std::string>("after"));

    RandomChunkSource pieces(input, "big.csv", rng.next(), 64 * 1024);
    const std::string difference = first_difference(expected, read_all(pieces, {}));
    INFO(difference);
    CHECK(difference.empty());
  }

  SECTION("ndjson") {
    std::string input;
    for (int i = 0; i < 30000; ++i)
      input += "{\"time_s\":" + std::to_string(i) + ",\"pressure_hpa\":1013.25}\n";
    input += "{\"time_s\":30000,\"pressure_hpa\":1000,\"note\":\"" +
             std::string(kMiB + kMiB / 2, 'n') + "\"}\n";  // > 1 MiB: the buffer grows
    input += "{\"time_s\":30001,\"note\":\"" + std::string(17 * kMiB, 'x') + "\"}\n";
    input += "{\"time_s\":30002,\"pressure_hpa\":999.5}\n";
    auto whole = baroz::make_string_source(input, "big.ndjson");
    const ReadAll expected = read_all(*whole, {});
    REQUIRE(expected.error.empty());
    REQUIRE(expected.records.size() == 30003);
    CHECK(expected.records[30000].problem == RecordProblem::kNone);
    CHECK(expected.records[30000].line == 30001);
    CHECK(expected.records[30001].problem == RecordProblem::kTooLong);
    CHECK(expected.records[30001].raw.size() == 1024);
    CHECK(expected.records[30002].problem == RecordProblem::kNone);
    CHECK(expected.records[30002].line == 30003);
    CHECK(expected.records[30002].fields[0] == std::optional<std::string>("30002"));

    RandomChunkSource pieces(input, "big.ndjson", rng.next(), 64 * 1024);
    const std::string difference = first_difference(expected, read_all(pieces, {}));
    INFO(difference);
    CHECK(difference.empty());
  }
}

// Guards: the error line format (product spec, "Conventions": `baroz:
// FILE:LINE[:COL]: message`, one line a problem, so that grep and awk can
// read stderr): a rejected field that holds a line break (a quoted CSV field
// per RFC 4180 §2 rule 6, or a JSON "\n" escape per RFC 8259 §7) must not
// split its message over two lines (io/sample_decoder.cpp escapes control
// characters when it quotes a field).
TEST_CASE("a field with a line break gives a one-line error message", "[robust]") {
  const std::string logs[] = {
      "time_s,pressure_hpa\n0,1013.25\n1,\"10\n13\"\n2,1012\n",
      "{\"time_s\":0,\"pressure_hpa\":1013.25}\n{\"time_s\":1,\"pressure_hpa\":\"10\\n13\"}\n"
      "{\"time_s\":2,\"pressure_hpa\":1012}\n"};
  for (const std::string& log : logs) {
    const CliResult r = run_cli({"height", "--ref-pressure", "1013.25", "-q", "-"}, log);
    INFO("stderr: " << escaped(r.err));
    CHECK(r.status == 0);
    CHECK(find_count_line(r.err).has_value());
    for (const std::string& line : baroz::test::split_lines(r.err))
      CHECK(line.rfind("baroz: ", 0) == 0);
  }
}

// Guards: live telemetry (product spec, "Conventions": `tail -f
// telemetry.csv | baroz height ...` works during a flight). Reading a pipe,
// the reader hands out each record as soon as its line has arrived, without
// waiting for more input: the writer thread writes row k+1 only after the
// reader has returned record k, and gives up (failing the test instead of
// hanging) after 10 s. CSV and NDJSON, by extension and sniffed.
TEST_CASE("a pipe is read record by record as the rows arrive", "[robust]") {
  struct Case {
    const char* name;
    std::string first;  // header (CSV) or nothing (NDJSON)
    bool ndjson;
  };
  const Case cases[] = {{"telemetry.csv", "time_s,pressure_hpa\n", false},
                        {"<stdin>", "time_s;pressure_hpa\r\n", false},
                        {"telemetry.ndjson", "", true},
                        {"<stdin>", "", true}};
  for (const Case& c : cases) {
    INFO(c.name << (c.ndjson ? " ndjson" : " csv"));
    std::vector<std::string> rows;
    for (int i = 0; i < 25; ++i) {
      const std::string p = std::to_string(1013.25 - 0.5 * i);
      const bool semicolon = c.first.find(';') != std::string::npos;
      if (c.ndjson)
        rows.push_back("{\"time_s\":" + std::to_string(i) + ",\"pressure_hpa\":" + p + "}\n");
      else
        rows.push_back(std::to_string(i) + (semicolon ? ";" + p + "\r\n" : "," + p + "\n"));
    }
    Pipe pipe;
    REQUIRE(pipe.read_fd >= 0);
    Progress progress;
    std::uint64_t stuck = 0;
    std::vector<std::string> times;
    {
      Joined writer{
          std::thread([&] { stuck = feed_rows(pipe.write_fd, c.first, rows, progress); })};
      auto source = baroz::make_fd_source(pipe.read_fd, c.name);
      auto reader = baroz::open_record_reader(*source, {});
      Record record;
      while (reader->next(record)) {
        times.emplace_back(record.fields.empty() ? std::string_view() : record.fields[0]);
        progress.publish(record.index);
      }
    }
    CHECK(stuck == 0);
    REQUIRE(times.size() == rows.size());
    for (std::size_t i = 0; i < times.size(); ++i) CHECK(times[i] == std::to_string(i));
  }
}

// Guards: the same through the library's height pipeline with line-buffered
// output (product spec, "Conventions": --line-buffered writes each row as
// soon as it is computed). With a known reference pressure nothing is held
// back, so each output row must reach the sink before the next input row is
// written; the writer gives up after 10 s instead of hanging.
TEST_CASE("the height pipeline writes each row before the next one arrives", "[robust]") {
  std::vector<std::string> rows;
  for (int i = 0; i < 25; ++i)
    rows.push_back(std::to_string(i) + "," + std::to_string(1013.25 - 0.75 * i) + ",15.0\n");
  baroz::HeightOptions options;
  options.reference.kind = baroz::ReferenceKind::kPressure;
  options.reference.pressure_pa = 101325.0;
  options.series.line_buffered = true;

  Pipe pipe;
  REQUIRE(pipe.read_fd >= 0);
  Progress progress;
  LiveSink sink(progress);
  std::ostringstream messages;
  baroz::Diagnostics diagnostics(messages, baroz::ErrorFormat::kText);
  std::uint64_t stuck = 0;
  baroz::HeightReport report;
  {
    Joined writer{std::thread([&] {
      stuck = feed_rows(pipe.write_fd, "time_s,pressure_hpa,temperature_c\n", rows, progress);
    })};
    auto source = baroz::make_fd_source(pipe.read_fd, "telemetry.csv");
    report = baroz::run_height_job(*source, sink, options, diagnostics, nullptr);
  }
  INFO(messages.str());
  CHECK(stuck == 0);
  CHECK(report.rows_read == rows.size());
  CHECK(report.rows_written == rows.size());
  CHECK(report.rows_rejected == 0);
  const auto out = parse_rfc4180(sink.text());
  REQUIRE(out.has_value());
  REQUIRE(out->size() == rows.size() + 1);
  for (std::size_t i = 0; i < rows.size(); ++i) CHECK((*out)[i + 1][0] == std::to_string(i));
}

// Guards: constant memory whatever the input's size (io/record.hpp; the
// pipeline's hold-back is bounded, reference/reference.hpp). A synthetic log
// of 3 million rows (1 million under AddressSanitizer, for time), streamed
// through run_height_job with the automatic reference window (it holds rows
// back until the launch at 60 s is found) and a sink that discards: the peak
// resident set size may grow by less than 64 MiB over the run. Both ways of
// reading: ahead on a second thread (a file) and inline (a pipe), both
// with the default model (profile: the log has temperatures), built in a
// first pass or causally; also under AddressSanitizer, since causal
// rebuilds recompute only the layers that changed.
TEST_CASE("a large log runs in constant memory", "[robust][slow]") {
#if defined(BAROZ_TEST_ASAN)
  const std::uint64_t rows = env_count("BAROZ_ROBUST_LARGE_ROWS", 1'000'000);
#else
  const std::uint64_t rows = env_count("BAROZ_ROBUST_LARGE_ROWS", 3'000'000);
#endif
  bool regular = true;
  SECTION("read ahead, as a file") { regular = true; }
  SECTION("read inline, as a pipe") { regular = false; }
  baroz::HeightOptions options;  // default: --ref-window auto, model auto (profile: T column)
  SyntheticLogSource source(rows, regular);
  CountingSink sink;
  std::ostringstream messages;
  baroz::Diagnostics diagnostics(messages, baroz::ErrorFormat::kText);

  const bool reset = reset_peak_rss();
  const long before_kib = peak_rss_kib();
  const baroz::HeightReport report =
      baroz::run_height_job(source, sink, options, diagnostics, nullptr);
  const long after_kib = peak_rss_kib();
  const long growth_kib = after_kib - before_kib;

  INFO(messages.str());
  CAPTURE(rows, regular, reset, before_kib, after_kib, growth_kib, sink.bytes());
  if (!reset) WARN("cannot reset the peak RSS; the growth measured may be too small");
  CHECK(report.rows_read == rows);
  CHECK(report.rows_written == rows);
  CHECK(report.rows_rejected == 0);
  CHECK(sink.lines() == rows + 1);  // the header and one line per row
  REQUIRE(report.reference.has_value());
  REQUIRE(report.reference->window.has_value());
  const baroz::ReferenceWindow& window = *report.reference->window;
  CHECK(window.launch_found);
  // The synthetic log starts climbing after its 60 s rest; the detector
  // needs the 5 s sustain to confirm it, so the window ends near 60 s.
  const double launch_s = static_cast<double>(window.launch_ns - window.start_ns) * 1e-9;
  CHECK(launch_s >= 59.0);
  CHECK(launch_s <= 61.0);
  CHECK(growth_kib < 64 * 1024);
}
