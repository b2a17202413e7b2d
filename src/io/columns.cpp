#include "baroz/io/columns.hpp"

#include <algorithm>
#include <cctype>

#include <fmt/format.h>

#include "baroz/core/error.hpp"

namespace baroz {
namespace {

constexpr std::array<std::string_view, kRoleCount> kRoleNames = {
    "time", "pressure", "temperature", "humidity", "lat", "lon", "gnss_alt"};

std::string to_lower(std::string_view s) {
  std::string out(s);
  for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}

std::string_view trim(std::string_view s) {
  while (!s.empty() && (s.front() == ' ' || s.front() == '\t')) s.remove_prefix(1);
  while (!s.empty() && (s.back() == ' ' || s.back() == '\t')) s.remove_suffix(1);
  return s;
}

bool is_time_unit(std::string_view u) { return parse_time_unit(u).has_value(); }
bool is_pressure_unit(std::string_view u) { return parse_pressure_unit(u).has_value(); }
bool is_temperature_unit(std::string_view u) { return parse_temperature_unit(u).has_value(); }
bool is_length_unit(std::string_view u) { return parse_length_unit(u).has_value(); }
bool is_percent_unit(std::string_view u) {
  std::string l = to_lower(u);
  return l == "%" || l == "pct" || l == "percent" || l == "%rh";
}
bool is_degree_unit(std::string_view u) {
  std::string l = to_lower(u);
  return l == "deg" || l == "degrees" || l == "°";
}
bool is_any_unit(std::string_view u) {
  return is_time_unit(u) || is_pressure_unit(u) || is_temperature_unit(u) ||
         is_length_unit(u) || is_percent_unit(u) || is_degree_unit(u);
}

bool has_word(const std::vector<std::string>& words, std::initializer_list<std::string_view> set) {
  for (const auto& w : words)
    for (auto s : set)
      if (w == s) return true;
  return false;
}

/// Score of a column for a role: 0 = not a candidate, higher = better.
int score(Role role, const ColumnName& c) {
  const auto& w = c.words;
  const std::string& u = c.unit;
  const bool gnss = has_word(w, {"gps", "gnss", "gpsalt"});
  switch (role) {
    case Role::kTime: {
      if (!u.empty() && !is_time_unit(u)) return 0;
      if (w.size() == 1 && (w[0] == "t" || w[0] == "s" || w[0] == "ms")) return 2;
      if (!has_word(w, {"time", "timestamp", "datetime", "date", "utc", "epoch", "unix", "ts",
                        "elapsed", "seconds", "millis", "clock", "zeit"}))
        return 0;
      return gnss ? 1 : 3;
    }
    case Role::kPressure: {
      if (!u.empty() && !is_pressure_unit(u)) return 0;
      if (w.size() == 1 && w[0] == "p") return 2;
      if (!has_word(w, {"pressure", "press", "pres", "baro", "barometer", "barometric",
                        "druck", "qfe", "pstat"}))
        return 0;
      if (has_word(w, {"diff", "differential", "pitot", "dynamic", "tank", "sealevel", "msl",
                       "qnh"}))
        return 0;
      return 3;
    }
    case Role::kTemperature: {
      if (!u.empty() && !is_temperature_unit(u)) return 0;
      const bool temp_word =
          has_word(w, {"temperature", "temp", "tmp", "ta", "tair", "airtemp", "t"});
      if (!temp_word) return 0;
      if (has_word(w, {"int", "internal", "inside", "board", "cpu", "mcu", "baro", "box",
                       "batt", "battery", "core", "imu", "chip", "die", "sensor", "gps", "gnss",
                       "dew", "dewpoint", "potential", "virtual", "pcb", "esc", "motor"}))
        return 0;
      if (w.size() == 1 && w[0] == "t" && u.empty()) return 0;  // bare "t" is time
      if (has_word(w, {"ext", "external", "outside", "out", "air", "ambient", "probe", "outer"}))
        return 3;
      return 2;
    }
    case Role::kHumidity: {
      if (!u.empty() && !is_percent_unit(u)) return 0;
      if (!has_word(w, {"humidity", "hum", "rh", "humid", "relhum"})) return 0;
      if (has_word(w, {"int", "internal", "inside", "box", "specific", "absolute"})) return 0;
      return 2;
    }
    case Role::kLat: {
      if (!u.empty() && !is_degree_unit(u)) return 0;
      return has_word(w, {"lat", "latitude"}) ? 2 : 0;
    }
    case Role::kLon: {
      if (!u.empty() && !is_degree_unit(u)) return 0;
      return has_word(w, {"lon", "lng", "long", "longitude"}) ? 2 : 0;
    }
    case Role::kGnssAlt: {
      if (!u.empty() && !is_length_unit(u)) return 0;
      if (w.size() == 1 && w[0] == "gpsalt") return 2;
      if (!gnss) return 0;
      return has_word(w, {"alt", "altitude", "height", "hmsl", "msl", "elevation"}) ? 2 : 0;
    }
    case Role::kCount: break;
  }
  return 0;
}

}  // namespace

std::string_view role_name(Role role) { return kRoleNames[static_cast<std::size_t>(role)]; }

std::optional<Role> parse_role(std::string_view name) {
  std::string l = to_lower(name);
  for (std::size_t i = 0; i < kRoleCount; ++i)
    if (l == kRoleNames[i]) return static_cast<Role>(i);
  if (l == "temp" || l == "air_temperature") return Role::kTemperature;
  if (l == "rh") return Role::kHumidity;
  if (l == "latitude") return Role::kLat;
  if (l == "longitude") return Role::kLon;
  if (l == "gnss_altitude" || l == "gps_alt") return Role::kGnssAlt;
  return std::nullopt;
}

ColumnName split_column_name(std::string_view raw) {
  ColumnName out;
  std::string_view name = trim(raw);
  // A unit in brackets or parentheses: "p[Pa]", "Time (s)", "T (°C)".
  for (auto [open, close] : {std::pair{'[', ']'}, std::pair{'(', ')'}}) {
    auto o = name.find(open);
    auto c = name.rfind(close);
    if (o != std::string_view::npos && c != std::string_view::npos && c > o) {
      out.unit = std::string(trim(name.substr(o + 1, c - o - 1)));
      name = trim(name.substr(0, o));
      break;
    }
  }
  // Words: split on anything that is not a letter or digit ('°' and '%' kept
  // with the word they touch, so "°C" and "%" survive as unit words).
  std::string word;
  auto flush = [&] {
    if (!word.empty()) out.words.push_back(to_lower(word));
    word.clear();
  };
  for (std::size_t i = 0; i < name.size(); ++i) {
    unsigned char ch = static_cast<unsigned char>(name[i]);
    const bool keep = std::isalnum(ch) || ch == '%' || ch >= 0x80;
    // camelCase boundary: "pressureHpa" -> "pressure", "hpa"
    if (keep && std::isupper(ch) && !word.empty() &&
        std::islower(static_cast<unsigned char>(word.back())))
      flush();
    // letter-digit boundary: "temp1" -> "temp", "1"
    if (keep && !word.empty() && ch < 0x80 &&
        (std::isdigit(ch) != 0) != (std::isdigit(static_cast<unsigned char>(word.back())) != 0) &&
        static_cast<unsigned char>(word.back()) < 0x80 && word.back() != '%' && ch != '%')
      flush();
    if (keep) word.push_back(name[i]);
    else flush();
  }
  flush();
  // A trailing unit word: "pressure_pa", "temp_ext_c", "time_ms", "rh_pct".
  if (out.unit.empty() && out.words.size() >= 2 && is_any_unit(out.words.back())) {
    out.unit = out.words.back();
    out.words.pop_back();
  }
  return out;
}

ColumnMap map_columns(const std::vector<std::string>& header, const ColumnOptions& options,
                      std::string_view source) {
  ColumnMap map;
  map.index.fill(ColumnMap::kAbsent);
  map.tz_offset_s = options.tz_offset_s;

  std::vector<ColumnName> names;
  names.reserve(header.size());
  for (const auto& h : header) names.push_back(split_column_name(h));

  std::array<bool, kRoleCount> forced{};
  for (const auto& [role, wanted] : options.overrides) {
    const auto r = static_cast<std::size_t>(role);
    forced[r] = true;
    if (wanted.empty()) continue;  // --col ROLE= : the role is not used
    std::int32_t found = ColumnMap::kAbsent;
    for (std::size_t i = 0; i < header.size() && found == ColumnMap::kAbsent; ++i)
      if (trim(header[i]) == trim(wanted)) found = static_cast<std::int32_t>(i);
    for (std::size_t i = 0; i < header.size() && found == ColumnMap::kAbsent; ++i)
      if (to_lower(trim(header[i])) == to_lower(trim(wanted))) found = static_cast<std::int32_t>(i);
    if (found == ColumnMap::kAbsent) {
      std::string list;
      for (const auto& h : header) list += (list.empty() ? "'" : ", '") + h + "'";
      throw usage_error(fmt::format("--col {}={}: {} has no column '{}' (columns: {})",
                                    role_name(role), wanted, source, wanted, list));
    }
    map.index[r] = found;
  }

  for (std::size_t r = 0; r < kRoleCount; ++r) {
    if (forced[r]) continue;
    const Role role = static_cast<Role>(r);
    int best = 0;
    std::vector<std::size_t> best_cols;
    for (std::size_t i = 0; i < names.size(); ++i) {
      bool taken = false;
      for (std::size_t q = 0; q < kRoleCount; ++q)
        if (map.index[q] == static_cast<std::int32_t>(i)) taken = true;
      if (taken) continue;
      int s = score(role, names[i]);
      if (s > best) {
        best = s;
        best_cols = {i};
      } else if (s == best && s > 0) {
        best_cols.push_back(i);
      }
    }
    if (best_cols.size() > 1) {
      std::string list;
      for (auto i : best_cols) list += (list.empty() ? "'" : " and '") + header[i] + "'";
      throw input_error(fmt::format(
          "{}: columns {} could both be the {} column; choose one with --col {}=NAME", source,
          list, role_name(role), role_name(role)));
    }
    if (best_cols.size() == 1) map.index[r] = static_cast<std::int32_t>(best_cols[0]);
  }

  for (std::size_t r = 0; r < kRoleCount; ++r)
    if (map.index[r] != ColumnMap::kAbsent)
      map.name[r] = header[static_cast<std::size_t>(map.index[r])];

  auto unit_of = [&](Role role) -> const std::string& {
    return names[static_cast<std::size_t>(map.at(role))].unit;
  };
  std::string all;
  for (const auto& h : header) all += (all.empty() ? "'" : ", '") + h + "'";
  if (!map.has(Role::kTime) && options.require_time)
    throw input_error(fmt::format(
        "{}: no time column found among {}; name it with --col time=NAME", source, all));
  if (!map.has(Role::kPressure))
    throw input_error(fmt::format(
        "{}: no pressure column found among {}; name it with --col pressure=NAME", source, all));

  const auto t = static_cast<std::size_t>(Role::kTime);
  if (!map.has(Role::kTime)) {
    map.time_unit = TimeUnit::kSeconds;
  } else if (options.time_unit) {
    map.time_unit = *options.time_unit;
    map.unit_source[t] = "option";
  } else if (auto u = parse_time_unit(unit_of(Role::kTime))) {
    map.time_unit = *u;
    map.unit_source[t] = "name";
  } else {
    const auto& w = names[static_cast<std::size_t>(map.at(Role::kTime))].words;
    if (has_word(w, {"ms", "millis", "msec"})) {
      map.time_unit = TimeUnit::kMilliseconds;
      map.unit_source[t] = "name";
    } else {
      map.time_unit = TimeUnit::kSeconds;
      map.unit_source[t] = "default";
    }
  }

  const auto p = static_cast<std::size_t>(Role::kPressure);
  if (options.pressure_unit) {
    map.pressure_unit = *options.pressure_unit;
    map.unit_source[p] = "option";
  } else if (auto u = parse_pressure_unit(unit_of(Role::kPressure))) {
    map.pressure_unit = *u;
    map.unit_source[p] = "name";
  } else {
    throw input_error(fmt::format(
        "{}: column '{}' has no pressure unit in its name; give --pressure-unit "
        "(Pa, hPa, kPa, mbar, bar, inHg, mmHg, psi, atm)",
        source, map.name[p]));
  }

  if (map.has(Role::kTemperature)) {
    const auto r = static_cast<std::size_t>(Role::kTemperature);
    if (options.temperature_unit) {
      map.temperature_unit = *options.temperature_unit;
      map.unit_source[r] = "option";
    } else if (auto u = parse_temperature_unit(unit_of(Role::kTemperature))) {
      map.temperature_unit = *u;
      map.unit_source[r] = "name";
    } else {
      throw input_error(fmt::format(
          "{}: column '{}' has no temperature unit in its name; give --temperature-unit "
          "(C, K, F), or --col temperature= to ignore the column",
          source, map.name[r]));
    }
  }
  if (map.has(Role::kGnssAlt)) {
    const auto r = static_cast<std::size_t>(Role::kGnssAlt);
    if (auto u = parse_length_unit(unit_of(Role::kGnssAlt))) {
      map.gnss_alt_unit = *u;
      map.unit_source[r] = "name";
    } else {
      map.gnss_alt_unit = LengthUnit::kMetre;
      map.unit_source[r] = "default";
    }
  }
  for (auto role : {Role::kHumidity, Role::kLat, Role::kLon})
    if (map.has(role)) map.unit_source[static_cast<std::size_t>(role)] = "default";
  return map;
}

}  // namespace baroz
