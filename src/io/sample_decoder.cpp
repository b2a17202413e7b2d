#include "baroz/io/sample_decoder.hpp"

#include <cmath>

#include <fmt/format.h>

#include "baroz/core/number_parse.hpp"

namespace baroz {
namespace {

/// A field's text for a message: at most 40 characters, control characters
/// escaped so that one problem stays one line ("10\n13" for a quoted line break).
std::string shown(std::string_view text) {
  const bool cut = text.size() > 40;
  if (cut) text = text.substr(0, 37);
  std::string out;
  for (char c : text) {
    const auto u = static_cast<unsigned char>(c);
    if (c == '\n') out += "\\n";
    else if (c == '\r') out += "\\r";
    else if (c == '\t') out += "\\t";
    else if (u < 0x20 || u == 0x7f) out += fmt::format("\\x{:02x}", u);
    else out += c;
  }
  if (cut) out += "...";
  return out;
}

RejectReason reason_for(RecordProblem p) {
  switch (p) {
    case RecordProblem::kUnterminatedQuote: return RejectReason::kUnterminatedQuote;
    case RecordProblem::kBadQuote: return RejectReason::kBadQuote;
    case RecordProblem::kTooLong: return RejectReason::kTooLong;
    case RecordProblem::kBadJson: return RejectReason::kBadJson;
    case RecordProblem::kBadEncoding: return RejectReason::kBadEncoding;
    case RecordProblem::kNone: break;
  }
  return RejectReason::kBadJson;
}

// Epoch seconds from this value on are read as absolute (2001-09-09).
constexpr TimeNs kEpochThresholdNs = 1'000'000'000LL * 1'000'000'000LL;

}  // namespace

bool SampleDecoder::fail(RowProblem& problem, const Record& record, RejectReason reason,
                         Role role, std::string message) const {
  problem.reason = reason;
  problem.line = record.line;
  problem.record = record.index;
  problem.raw = record.raw;
  if (role != Role::kCount) {
    problem.column = map_.name[static_cast<std::size_t>(role)];
    problem.field = map_.at(role);
  } else {
    problem.column.clear();
    problem.field = -1;
  }
  problem.message = std::move(message);
  return false;
}

bool SampleDecoder::parse_time(std::string_view text, TimeNs& out) {
  if (map_.time_format == TimeFormat::kUndecided) {
    if (auto n = parse_decimal_time(text, map_.time_unit)) {
      map_.time_format = TimeFormat::kNumber;
      absolute_time_ = *n >= kEpochThresholdNs;
      out = *n;
      return true;
    }
    if (auto t = parse_rfc3339(text, map_.tz_offset_s)) {
      map_.time_format = TimeFormat::kRfc3339;
      absolute_time_ = true;
      out = *t;
      return true;
    }
    return false;
  }
  std::optional<TimeNs> t = map_.time_format == TimeFormat::kNumber
                                ? parse_decimal_time(text, map_.time_unit)
                                : parse_rfc3339(text, map_.tz_offset_s);
  if (!t) return false;
  out = *t;
  return true;
}

bool SampleDecoder::decode_time(const Record& record, std::string_view time_text, Sample& s,
                                RowProblem& problem) {
  if (time_text.data() == nullptr)
    return fail(problem, record, RejectReason::kMissingField, Role::kTime,
                fmt::format("column '{}': missing field", map_.name[0]));
  while (!time_text.empty() && (time_text.front() == ' ' || time_text.front() == '\t'))
    time_text.remove_prefix(1);
  while (!time_text.empty() && (time_text.back() == ' ' || time_text.back() == '\t'))
    time_text.remove_suffix(1);
  if (time_text.empty())
    return fail(problem, record, RejectReason::kMissingField, Role::kTime,
                fmt::format("column '{}': empty field", map_.name[0]));
  if (!parse_time(time_text, s.time_ns))
    return fail(problem, record, RejectReason::kBadTime, Role::kTime,
                fmt::format("column '{}': \"{}\" is not a valid time ({})", map_.name[0],
                            shown(time_text),
                            map_.time_format == TimeFormat::kRfc3339
                                ? "expected RFC 3339 like the first row"
                                : map_.time_format == TimeFormat::kNumber
                                      ? "expected a number like the first row"
                                      : "expected a number or an RFC 3339 date-time"));
  s.time_text = time_text;
  return true;
}

bool SampleDecoder::decode(const Record& record, Sample& s, RowProblem& problem) {
  if (record.problem != RecordProblem::kNone) {
    std::string msg(record_problem_text(record.problem));
    if (!record.problem_detail.empty()) msg += fmt::format(" ({})", record.problem_detail);
    return fail(problem, record, reason_for(record.problem), Role::kCount, std::move(msg));
  }
  const std::size_t n = record.fields.size();
  if (record.extra_fields > 0)
    return fail(problem, record, RejectReason::kExtraFields, Role::kCount,
                fmt::format("record has {} fields, the header has {}", n + record.extra_fields, n));
  if (short_rows_are_errors_ && n > 0 && record.fields[n - 1].data() == nullptr) {
    std::size_t present = 0;
    while (present < n && record.fields[present].data() != nullptr) ++present;
    return fail(problem, record, RejectReason::kMissingField, Role::kCount,
                fmt::format("record has {} fields, the header has {}", present, n));
  }

  auto field = [&](Role role) -> std::string_view {
    return record.fields[static_cast<std::size_t>(map_.at(role))];
  };
  s.line = record.line;
  s.record = record.index;
  s.raw = record.raw;
  s.flags = kFlagNone;

  // Time (required, except in a table without time: see ColumnOptions).
  if (!map_.has(Role::kTime)) {
    s.time_ns = 0;
    s.time_text = {};
  } else if (!decode_time(record, field(Role::kTime), s, problem)) {
    return false;
  }

  // Numeric roles. Returns false (and fills problem) on a bad field;
  // `value` is NaN for a missing optional value.
  auto number = [&](Role role, bool required, double& value) -> bool {
    value = kMissing;
    if (!map_.has(role)) return true;
    const std::string& name = map_.name[static_cast<std::size_t>(role)];
    std::string_view text = field(role);
    if (text.data() == nullptr) {
      if (required)
        return fail(problem, record, RejectReason::kMissingField, role,
                    fmt::format("column '{}': missing field", name));
      return true;
    }
    ParsedNumber parsed = parse_number(text, decimal_comma_);
    switch (parsed.status) {
      case NumberStatus::kOk: value = parsed.value; return true;
      case NumberStatus::kEmpty:
        if (required)
          return fail(problem, record, RejectReason::kMissingField, role,
                      fmt::format("column '{}': empty field", name));
        return true;
      case NumberStatus::kNotANumber:
        return fail(problem, record, RejectReason::kNotANumber, role,
                    fmt::format("column '{}': \"{}\" is not a number", name, shown(text)));
      case NumberStatus::kNonFinite:
        return fail(problem, record, RejectReason::kNonFinite, role,
                    fmt::format("column '{}': \"{}\" is not a finite number", name, shown(text)));
    }
    return true;
  };

  double v = 0.0;
  if (!number(Role::kPressure, true, v)) return false;
  s.pressure_pa = to_pascal(v, map_.pressure_unit);

  if (!number(Role::kTemperature, false, v)) return false;
  if (map_.has(Role::kTemperature)) {
    if (std::isnan(v)) {
      s.flags |= kFlagNoTemperature;
      s.temperature_k = kMissing;
    } else {
      s.temperature_k = to_kelvin(v, map_.temperature_unit);
    }
  } else {
    s.temperature_k = kMissing;
  }
  if (!number(Role::kHumidity, false, v)) return false;
  s.humidity_pct = v;
  if (map_.has(Role::kHumidity) && std::isnan(v)) s.flags |= kFlagNoHumidity;

  if (!number(Role::kLat, false, v)) return false;
  s.lat_deg = v;
  if (!number(Role::kLon, false, v)) return false;
  s.lon_deg = v;
  if (!number(Role::kGnssAlt, false, v)) return false;
  s.gnss_alt_m = std::isnan(v) ? v : v * metres_per(map_.gnss_alt_unit);
  if ((map_.has(Role::kLat) && std::isnan(s.lat_deg)) ||
      (map_.has(Role::kLon) && std::isnan(s.lon_deg)) ||
      (map_.has(Role::kGnssAlt) && std::isnan(s.gnss_alt_m)))
    s.flags |= kFlagNoGnss;
  return true;
}

}  // namespace baroz
