// Fuzz target: the NDJSON record reader (io/ndjson_reader.hpp, simdjson
// On-Demand) and the sample decoder (io/sample_decoder.hpp) over arbitrary
// bytes.
//
// The first byte of an input chooses the options, the rest is the log:
//   bits 0-5  n: 0 reads the log in one piece only; n > 0 also reads it in
//             chunks of 1..n bytes (as a pipe delivers them) and requires
//             exactly the same records (differential check)
//   bit 6     open through open_record_reader with a name without extension,
//             so that the format is sniffed (the log may then be read as CSV)
// Aborts (so that the fuzzer saves the input) when an invariant breaks:
// - only baroz::Error escapes, and only from opening the reader;
// - every record has one field per column, indexes count 1, 2, 3, ...,
//   physical lines increase strictly, the raw text is not blank (CSV, when
//   sniffed: not empty); an NDJSON record has no extra fields, and a
//   kBadJson one has every field absent and says why;
// - chunked and one-shot reading give the same layout, records and counts.
// AddressSanitizer checks that every byte of every view is readable (the
// fields point into simdjson's string buffer and into the line buffer).
//
// Built with libFuzzer (clang++ -fsanitize=fuzzer, BAROZ_LIBFUZZER defined)
// or, without it, as a plain program that runs the files named on its
// command line (see README.md).
//
// References:
// - T. Bray (ed.), "The JavaScript Object Notation (JSON) Data Interchange
//   Format", RFC 8259, IETF, 2017.
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <iterator>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/core/error.hpp"
#include "baroz/core/sample.hpp"
#include "baroz/io/byte_source.hpp"
#include "baroz/io/columns.hpp"
#include "baroz/io/ndjson_reader.hpp"
#include "baroz/io/record.hpp"
#include "baroz/io/sample_decoder.hpp"
#include "baroz/validation/row_problem.hpp"

namespace {

[[noreturn]] void fail(const char* what) {
  std::fprintf(stderr, "fuzz_ndjson_reader: invariant broken: %s\n", what);
  std::abort();
}

/// Hands out its bytes in chunks of 1..max_chunk bytes (a fixed cycle).
class ChunkSource final : public baroz::ByteSource {
 public:
  ChunkSource(std::string_view data, std::string name, std::size_t max_chunk)
      : ByteSource(std::move(name)), data_(data), max_chunk_(max_chunk) {}

 protected:
  std::size_t read_some(char* buffer, std::size_t capacity) override {
    step_ = step_ % max_chunk_ + 1;  // 1, 2, ..., max_chunk, 1, 2, ...
    const std::size_t n = std::min({capacity, step_, data_.size() - position_});
    std::memcpy(buffer, data_.data() + position_, n);
    position_ += n;
    return n;
  }

 private:
  std::string_view data_;
  std::size_t position_ = 0;
  std::size_t max_chunk_;
  std::size_t step_ = 0;
};

struct Copy {
  std::uint64_t line = 0, index = 0;
  std::string raw;
  std::vector<std::optional<std::string>> fields;
  std::size_t extra = 0;
  baroz::RecordProblem problem = baroz::RecordProblem::kNone;
  std::string detail;
  bool operator==(const Copy&) const = default;
};

struct Result {
  bool opened = false;
  std::string error;
  baroz::LogLayout layout;
  std::vector<Copy> records;
  std::uint64_t blank_lines = 0;
  std::uint64_t unknown_keys = 0;
};

volatile unsigned char g_sink = 0;

void touch(std::string_view s) {
  unsigned char sum = 0;
  for (char c : s) sum = static_cast<unsigned char>(sum + static_cast<unsigned char>(c));
  g_sink = static_cast<unsigned char>(g_sink + sum);
}

bool is_blank(std::string_view s) {
  return std::all_of(s.begin(), s.end(),
                     [](char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n'; });
}

Result read(baroz::ByteSource& source, bool sniff, bool decode) {
  Result result;
  std::unique_ptr<baroz::RecordReader> reader;
  baroz::NdjsonReader* ndjson = nullptr;
  try {
    if (sniff) {
      reader = baroz::open_record_reader(source, baroz::ReaderOptions{});
      ndjson = dynamic_cast<baroz::NdjsonReader*>(reader.get());
    } else {
      auto direct = std::make_unique<baroz::NdjsonReader>(source);
      ndjson = direct.get();
      reader = std::move(direct);
    }
  } catch (const baroz::Error& e) {
    result.error = e.what();
    return result;
  }
  result.opened = true;
  result.layout = reader->layout();
  const std::size_t columns = result.layout.columns.size();

  std::optional<baroz::SampleDecoder> decoder;
  if (decode) {
    baroz::ColumnOptions options;  // units given, so that more keys map
    options.pressure_unit = baroz::PressureUnit::kHPa;
    options.temperature_unit = baroz::TemperatureUnit::kCelsius;
    try {
      decoder.emplace(baroz::map_columns(result.layout.columns, options, "fuzz"),
                      /*decimal_comma=*/false, /*short_rows_are_errors=*/ndjson == nullptr);
    } catch (const baroz::Error&) {
    }
  }

  baroz::Record record;
  baroz::Sample sample;
  baroz::RowProblem problem;
  std::uint64_t previous_line = 0;
  while (reader->next(record)) {
    if (record.fields.size() != columns) fail("field count differs from the columns'");
    if (record.index != result.records.size() + 1) fail("record indexes do not count 1, 2, 3");
    if (record.line <= previous_line) fail("line numbers do not increase");
    // A CSV line of blanks is a record (RFC 4180 §2 rule 4: spaces are part
    // of a field); an NDJSON line of blanks is not.
    if (ndjson != nullptr ? is_blank(record.raw) : record.raw.empty()) fail("a blank record");
    if (ndjson != nullptr) {
      if (record.extra_fields != 0) fail("extra fields in an ndjson record");
      if (record.problem == baroz::RecordProblem::kBadJson) {
        if (record.problem_detail.empty()) fail("a bad json record without its reason");
        for (std::string_view f : record.fields)
          if (f.data() != nullptr) fail("a bad json record with a present field");
      }
    }
    previous_line = record.line;
    touch(record.raw);
    touch(record.problem_detail);
    Copy copy;
    copy.line = record.line;
    copy.index = record.index;
    copy.raw = std::string(record.raw);
    for (std::string_view f : record.fields) {
      touch(f);
      copy.fields.push_back(f.data() == nullptr ? std::nullopt
                                                : std::optional<std::string>(std::string(f)));
    }
    copy.extra = record.extra_fields;
    copy.problem = record.problem;
    copy.detail = std::string(record.problem_detail);
    result.records.push_back(std::move(copy));
    if (decoder) {
      if (!decoder->decode(record, sample, problem)) {
        touch(problem.message);
        touch(problem.raw);
      }
    }
  }
  result.blank_lines = reader->blank_lines();
  if (ndjson != nullptr) result.unknown_keys = ndjson->unknown_keys();
  return result;
}

bool same(const Result& a, const Result& b) {
  const baroz::LogLayout& x = a.layout;
  const baroz::LogLayout& y = b.layout;
  return a.opened == b.opened && a.error == b.error && x.format == y.format &&
         x.delimiter == y.delimiter && x.had_bom == y.had_bom && x.crlf == y.crlf &&
         x.preamble_lines == y.preamble_lines && x.header_line == y.header_line &&
         x.columns == y.columns && a.records == b.records && a.blank_lines == b.blank_lines &&
         a.unknown_keys == b.unknown_keys;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  const std::size_t max_chunk = data[0] & 63u;
  const bool sniff = (data[0] & 64u) != 0;
  const std::string_view log(reinterpret_cast<const char*>(data) + 1, size - 1);
  const std::string name = sniff ? "fuzz" : "fuzz.ndjson";

  auto whole = baroz::make_string_source(std::string(log), name);
  const Result expected = read(*whole, sniff, /*decode=*/true);
  if (max_chunk > 0) {
    ChunkSource pieces(log, name, max_chunk);
    if (!same(expected, read(pieces, sniff, /*decode=*/false)))
      fail("chunked reading differs from one-shot reading");
  }
  return 0;
}

#ifndef BAROZ_LIBFUZZER
// Standalone driver (no libFuzzer): runs every file named on the command
// line, or every regular file of a directory named there, through the target
// once; with no argument, standard input.
int main(int argc, char** argv) {
  std::size_t runs = 0;
  auto run = [&runs](const std::string& bytes) {
    LLVMFuzzerTestOneInput(reinterpret_cast<const std::uint8_t*>(bytes.data()), bytes.size());
    ++runs;
  };
  if (argc < 2) {
    run(std::string(std::istreambuf_iterator<char>(std::cin), {}));
  }
  for (int i = 1; i < argc; ++i) {
    std::vector<std::filesystem::path> files;
    std::error_code ec;
    if (std::filesystem::is_directory(argv[i], ec)) {
      for (const auto& entry : std::filesystem::directory_iterator(argv[i]))
        if (entry.is_regular_file()) files.push_back(entry.path());
      std::sort(files.begin(), files.end());
    } else {
      files.emplace_back(argv[i]);
    }
    for (const auto& file : files) {
      std::ifstream in(file, std::ios::binary);
      if (!in) {
        std::fprintf(stderr, "%s: cannot open '%s'\n", argv[0], file.c_str());
        return 1;
      }
      run(std::string(std::istreambuf_iterator<char>(in), {}));
    }
  }
  std::fprintf(stderr, "%s: %zu inputs ran\n", argv[0], runs);
  return 0;
}
#endif
