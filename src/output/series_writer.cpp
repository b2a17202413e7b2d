#include "baroz/output/series_writer.hpp"

#include <cmath>
#include <cstring>

#include "baroz/core/constants.hpp"
#include "baroz/output/fixed_format.hpp"
#include "baroz/output/json_writer.hpp"

namespace baroz {
namespace {

constexpr std::size_t kBufferSize = 1 << 20;

bool needs_csv_quotes(std::string_view s) {
  for (char c : s)
    if (c == ',' || c == '"' || c == '\n' || c == '\r') return true;
  return false;
}

/// Whether `s` is a JSON number (RFC 8259 §6), so it can be echoed bare.
bool is_json_number(std::string_view s) {
  std::size_t i = 0, n = s.size();
  if (i < n && s[i] == '-') ++i;
  if (i >= n) return false;
  if (s[i] == '0') ++i;
  else if (s[i] >= '1' && s[i] <= '9') while (i < n && s[i] >= '0' && s[i] <= '9') ++i;
  else return false;
  if (i < n && s[i] == '.') {
    ++i;
    if (i >= n || s[i] < '0' || s[i] > '9') return false;
    while (i < n && s[i] >= '0' && s[i] <= '9') ++i;
  }
  if (i < n && (s[i] == 'e' || s[i] == 'E')) {
    ++i;
    if (i < n && (s[i] == '+' || s[i] == '-')) ++i;
    if (i >= n || s[i] < '0' || s[i] > '9') return false;
    while (i < n && s[i] >= '0' && s[i] <= '9') ++i;
  }
  return i == n;
}

/// The longest flags field: every name, quoted, with its separator.
constexpr std::size_t kMaxFlagsChars = [] {
  std::size_t n = 2;  // the NDJSON brackets
  for (std::string_view name : kFlagNames) n += name.size() + 3;
  return n;
}();

}  // namespace

std::string flags_text(std::uint32_t flags) {
  std::string out;
  for (std::size_t b = 0; b < std::size(kFlagNames); ++b)
    if (flags & (1u << b)) {
      if (!out.empty()) out += '|';
      out += kFlagNames[b];
    }
  return out;
}

SeriesWriter::SeriesWriter(ByteSink& sink, const SeriesOptions& options, bool time_is_number)
    : sink_(sink), options_(options), time_is_number_(time_is_number), buffer_(kBufferSize) {
  const bool ft = options_.height_unit == LengthUnit::kFoot;
  const std::string hs = ft ? "_ft" : "_m";
  const std::string hu = ft ? "ft" : "m";
  columns_ = {
      {"time", "", "time", "time as given in the input"},
      {"elapsed_s", "s", "", "time since the first accepted sample"},
      {"pressure_hpa", "hPa", "air_pressure", "static air pressure"},
      {"temperature_c", "degC", "air_temperature", "air temperature, empty where unknown"},
      {"height" + hs, hu, "height", "geometric height above the reference level"},
      {"height_low" + hs, hu, "", "lower bound of the height band"},
      {"height_high" + hs, hu, "", "upper bound of the height band"},
  };
  if (options_.altitude)
    columns_.push_back({"altitude" + hs, hu, "altitude", "geometric height above mean sea level"});
  if (options_.vspeed)
    columns_.push_back({"vspeed_mps", "m s-1", "",
                        "vertical speed from a local fit of the height (positive up)"});
  if (options_.geopotential)
    columns_.push_back({"geopotential_height" + hs, hu, "geopotential_height",
                        "geopotential height above the reference level"});
  if (options_.gnss_alt)
    columns_.push_back({"gnss_alt" + hs, hu, "", "GNSS altitude as logged"});
  for (const auto& term : options_.sigma_columns)
    columns_.push_back({term + hs, hu, "",
                        "1-sigma height contribution of the budget term " + term});
  if (options_.flags)
    columns_.push_back({"flags", "", "", "'|'-separated sample flags"});
  for (const auto& c : columns_) keys_.push_back("\"" + c.name + "\":");
}

SeriesWriter::~SeriesWriter() = default;

void SeriesWriter::reserve(std::size_t bytes) {
  if (used_ + bytes > buffer_.size()) {
    flush();
    if (bytes > buffer_.size()) buffer_.resize(bytes);
  }
}

void SeriesWriter::flush() {
  if (used_ > 0) sink_.write(buffer_.data(), used_);
  used_ = 0;
  sink_.flush();
}

char* SeriesWriter::number(char* p, double value, int decimals, double scale) {
  value *= scale;
  if (!is_writable(value)) {
    if (options_.format == OutputFormat::kNdjson) {
      std::memcpy(p, "null", 4);
      return p + 4;
    }
    return p;
  }
  return write_fixed(p, value, decimals);
}

void SeriesWriter::write_header() {
  if (options_.format != OutputFormat::kCsv) return;
  std::string h;
  for (const auto& c : columns_) h += (h.empty() ? "" : ",") + c.name;
  h += '\n';
  reserve(h.size());
  std::memcpy(buffer_.data() + used_, h.data(), h.size());
  used_ += h.size();
  if (options_.line_buffered) flush();
}

void SeriesWriter::write_row(const SeriesRow& r) {
  // Worst case: every byte of the time as \uXXXX, every number at full
  // width with its NDJSON key, every flag.
  reserve(6 * r.time_text.size() + (16 + options_.sigma_columns.size()) * (kMaxFixedChars + 32) +
          kMaxFlagsChars);
  char* const start = buffer_.data() + used_;
  char* p = start;
  const bool csv = options_.format == OutputFormat::kCsv;
  const double hscale = options_.height_unit == LengthUnit::kFoot ? 1.0 / constants::kFoot : 1.0;
  std::size_t col = 0;
  auto sep = [&] {
    if (csv) {
      if (col > 0) *p++ = ',';
    } else {
      *p++ = col == 0 ? '{' : ',';
      const std::string& k = keys_[col];
      std::memcpy(p, k.data(), k.size());
      p += k.size();
    }
    ++col;
  };

  sep();
  if (csv) {
    if (needs_csv_quotes(r.time_text)) {
      *p++ = '"';
      for (char c : r.time_text) {
        if (c == '"') *p++ = '"';
        *p++ = c;
      }
      *p++ = '"';
    } else {
      std::memcpy(p, r.time_text.data(), r.time_text.size());
      p += r.time_text.size();
    }
  } else if (time_is_number_ && is_json_number(r.time_text)) {
    std::memcpy(p, r.time_text.data(), r.time_text.size());
    p += r.time_text.size();
  } else {
    std::string s;
    append_json_string(s, r.time_text);
    std::memcpy(p, s.data(), s.size());
    p += s.size();
  }
  sep();
  p = write_elapsed_ns(p, r.elapsed_ns, options_.elapsed_decimals);
  sep();
  p = number(p, r.pressure_pa, options_.pressure_decimals, 0.01);
  sep();
  p = number(p, std::isnan(r.temperature_k) ? r.temperature_k
                                            : r.temperature_k - constants::kZeroCelsius,
             options_.temperature_decimals, 1.0);
  sep();
  p = number(p, r.height_m, options_.height_decimals, hscale);
  sep();
  p = number(p, r.height_low_m, options_.height_decimals, hscale);
  sep();
  p = number(p, r.height_high_m, options_.height_decimals, hscale);
  if (options_.altitude) {
    sep();
    p = number(p, r.altitude_m, options_.height_decimals, hscale);
  }
  if (options_.vspeed) {
    sep();
    p = number(p, r.vspeed_mps, options_.vspeed_decimals, 1.0);
  }
  if (options_.geopotential) {
    sep();
    p = number(p, r.geopotential_m, options_.height_decimals, hscale);
  }
  if (options_.gnss_alt) {
    sep();
    p = number(p, r.gnss_alt_m, options_.height_decimals, hscale);
  }
  for (std::size_t i = 0; i < options_.sigma_columns.size(); ++i) {
    sep();
    p = number(p, r.sigma_m ? r.sigma_m[i] : kMissing, options_.height_decimals, hscale);
  }
  if (options_.flags) {
    sep();
    if (!csv) *p++ = '[';
    bool first = true;
    for (std::size_t b = 0; b < std::size(kFlagNames); ++b) {
      if (!(r.flags & (1u << b))) continue;
      if (!first) *p++ = csv ? '|' : ',';
      first = false;
      if (!csv) *p++ = '"';
      std::memcpy(p, kFlagNames[b].data(), kFlagNames[b].size());
      p += kFlagNames[b].size();
      if (!csv) *p++ = '"';
    }
    if (!csv) *p++ = ']';
  }
  if (!csv) *p++ = '}';
  *p++ = '\n';
  used_ += static_cast<std::size_t>(p - start);
  if (options_.line_buffered) flush();
}

}  // namespace baroz
