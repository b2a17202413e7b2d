// Column roles: which column of a log holds time, pressure, temperature, ...
// and in which unit. Found from the column names (with common variants and a
// unit suffix), overridable per role with --col ROLE=NAME and the unit options.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "baroz/core/time.hpp"
#include "baroz/core/units.hpp"

namespace baroz {

/// Roles a column can play. Names pinned by the product specification.
enum class Role : std::uint8_t {
  kTime, kPressure, kTemperature, kHumidity, kLat, kLon, kGnssAlt, kCount
};
inline constexpr std::size_t kRoleCount = static_cast<std::size_t>(Role::kCount);

std::string_view role_name(Role role);  ///< "time", "pressure", ..., "gnss_alt"
std::optional<Role> parse_role(std::string_view name);

/// A column name split into its base words and an optional unit, e.g.
/// "pressure_pa" -> {"pressure"}, "pa"; "Time (s)" -> {"time"}, "s";
/// "p[Pa]" -> {"p"}, "Pa"; "temp_ext_c" -> {"temp","ext"}, "c".
struct ColumnName {
  std::vector<std::string> words;  ///< lower-case words of the base name
  std::string unit;                ///< unit text as written, empty if none
};
ColumnName split_column_name(std::string_view name);

/// How a time column is written.
enum class TimeFormat { kUndecided, kNumber, kRfc3339 };

/// The resolved mapping for one log.
struct ColumnMap {
  static constexpr std::int32_t kAbsent = -1;
  std::array<std::int32_t, kRoleCount> index{};   ///< column index per role, kAbsent if none
  std::array<std::string, kRoleCount> name{};     ///< the column's name as in the header
  std::array<std::string, kRoleCount> unit_source{};  ///< "name", "option" or "default"
  PressureUnit pressure_unit = PressureUnit::kHPa;
  TemperatureUnit temperature_unit = TemperatureUnit::kCelsius;
  LengthUnit gnss_alt_unit = LengthUnit::kMetre;
  TimeUnit time_unit = TimeUnit::kSeconds;        ///< for numeric time
  TimeFormat time_format = TimeFormat::kUndecided;///< decided from the first record
  int tz_offset_s = 0;                            ///< for RFC 3339 times without zone

  bool has(Role role) const { return index[static_cast<std::size_t>(role)] != kAbsent; }
  std::int32_t at(Role role) const { return index[static_cast<std::size_t>(role)]; }
};

/// What the user asked for on the command line.
struct ColumnOptions {
  /// --col ROLE=NAME; an empty NAME unassigns the role.
  std::vector<std::pair<Role, std::string>> overrides;
  std::optional<PressureUnit> pressure_unit;
  std::optional<TemperatureUnit> temperature_unit;
  std::optional<TimeUnit> time_unit;
  int tz_offset_s = 0;
  /// A table without time (a --profile FILE of pressure and temperature)
  /// sets this false; samples then have time 0.
  bool require_time = true;
};

/// Resolves roles and units for a header. Throws baroz::Error: usage for an
/// --col name that is not in the header; input when no time or pressure
/// column is found, when two columns could equally be one role, or when a
/// pressure or temperature column has no unit and no unit option is given.
/// `source` names the file in messages.
ColumnMap map_columns(const std::vector<std::string>& header, const ColumnOptions& options,
                      std::string_view source);

}  // namespace baroz
