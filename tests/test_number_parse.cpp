// Strict, locale-independent number parsing (core/number_parse.hpp).
#include <catch2/catch.hpp>

#include <clocale>
#include <cmath>
#include <cstring>
#include <string>

#include "baroz/core/number_parse.hpp"

using baroz::NumberStatus;
using baroz::parse_number;

namespace {

NumberStatus status_of(std::string_view text, bool decimal_comma = false) {
  return parse_number(text, decimal_comma).status;
}

}  // namespace

TEST_CASE("parse_number accepts decimal and exponent forms", "[core][number]") {
  // Expected values are C++ floating literals: the compiler's correctly
  // rounded decimal-to-binary conversion is the reference.
  struct Case {
    const char* text;
    double expected;
  };
  const Case cases[] = {
      {"12", 12.0},         {"-3.25", -3.25},     {"+0.5", 0.5},       {".5", 0.5},
      {"5.", 5.0},          {"1e5", 1e5},         {"1E5", 1e5},        {"1.5E-3", 1.5e-3},
      {"2.5e+2", 250.0},    {"1013.25", 1013.25}, {"0.1", 0.1},        {"-0", -0.0},
      {"007", 7.0},         {"+1e-3", 1e-3},      {"101325", 101325.0},
      {"123456789012345678901234567890", 123456789012345678901234567890.0},
      {"0.000000000000000000000000000001", 1e-30},
      {"1e-400", 0.0},  // below the smallest subnormal: rounds to 0, still a number
  };
  for (const Case& c : cases) {
    INFO(c.text);
    const baroz::ParsedNumber parsed = parse_number(c.text);
    CHECK(parsed.status == NumberStatus::kOk);
    CHECK(parsed.value == c.expected);
  }
  CHECK(std::signbit(parse_number("-0").value));
}

TEST_CASE("parse_number trims spaces and tabs around the field", "[core][number]") {
  CHECK(parse_number(" 7").value == 7.0);
  CHECK(parse_number("7 ").value == 7.0);
  CHECK(parse_number("\t 7.5 \t").value == 7.5);
  CHECK(parse_number("  -2e3  ").value == -2000.0);
  CHECK(status_of(" 7 ") == NumberStatus::kOk);
}

TEST_CASE("parse_number reports empty fields", "[core][number]") {
  CHECK(status_of("") == NumberStatus::kEmpty);
  CHECK(status_of(" ") == NumberStatus::kEmpty);
  CHECK(status_of("   ") == NumberStatus::kEmpty);
  CHECK(status_of("\t \t") == NumberStatus::kEmpty);
  CHECK(status_of("", true) == NumberStatus::kEmpty);
  CHECK(status_of("  ", true) == NumberStatus::kEmpty);
}

TEST_CASE("parse_number reports nan, infinity and overflow as non-finite", "[core][number]") {
  for (const char* text :
       {"nan", "NaN", "NAN", "-nan", "+nan", "inf", "Inf", "-inf", "+INF", "infinity",
        "-Infinity", "+INFINITY", " nan ", "1e400", "-1e400", "1e309"}) {
    INFO(text);
    CHECK(status_of(text) == NumberStatus::kNonFinite);
  }
  CHECK(std::isnan(parse_number("nan").value));
  CHECK(parse_number("-inf").value == -HUGE_VAL);
  CHECK(parse_number("1e400").value == HUGE_VAL);
  // 2^1024 - 2^970 lies exactly halfway between DBL_MAX and 2^1024 and rounds
  // (half to even) to infinity. Source: IEEE 754-2008 section 4.3.1 and 7.4.
  CHECK(status_of("179769313486231580793728971405303415079934132710037826936173778980444968292764750946649017977587207096330286416692887910946555547851940402630657488671505820681908902000708383676273854845817711531764475730270069855571366959622842914819860834936475292719074168444365510704342711559699508093042880177904174497792") == NumberStatus::kNonFinite);
  // DBL_MAX itself is finite (IEEE 754 binary64 largest value).
  CHECK(status_of("1.7976931348623157e308") == NumberStatus::kOk);
}

TEST_CASE("parse_number rejects anything not consumed as a whole", "[core][number]") {
  for (const char* text :
       {"0x10", "1,5", "10O3.2", "1.2.3", "+", "-", ".", "+.", "-.", "e5", "1e", "1e+", "1e5x",
        "+-1", "++1", "-+1", "--1", "1 2", "1. 5", "- 1", "+ 1", "inf x", "infx", "nanx", "in",
        "abc", "1,000.5", "1_000", "1'000", "\xC2\xA0" "1", "1\n", "5%", "1d0", "0b1", "1f"}) {
    INFO(text);
    CHECK(status_of(text) == NumberStatus::kNotANumber);
  }
}

TEST_CASE("parse_number with decimal_comma reads one comma as the point", "[core][number]") {
  CHECK(parse_number("1,5", true).value == 1.5);
  CHECK(parse_number("-0,25", true).value == -0.25);
  CHECK(parse_number(" 3,75 ", true).value == 3.75);
  CHECK(parse_number("+1013,25", true).value == 1013.25);
  CHECK(parse_number("2", true).value == 2.0);
  CHECK(parse_number("1e3", true).value == 1000.0);
  CHECK(parse_number("1,5e2", true).value == 150.0);
  CHECK(parse_number(",5", true).value == 0.5);
  CHECK(status_of("1,5", true) == NumberStatus::kOk);
  for (const char* text : {"1.5", "1,2,3", "1.000,5", "1,000.5", ",", "1,,5", "1;5", "0x1,0"}) {
    INFO(text);
    CHECK(status_of(text, true) == NumberStatus::kNotANumber);
  }
  CHECK(status_of("nan", true) == NumberStatus::kNonFinite);
}

TEST_CASE("parse_number reads a field that is a view into a longer buffer", "[core][number]") {
  // Readers hand out views into the line; the characters after the view
  // must not be read.
  const std::string line = "1013.25;15.5";
  const std::string_view view(line.data(), 7);
  CHECK(parse_number(view).value == 1013.25);
  const std::string line2 = "12345";
  CHECK(parse_number(std::string_view(line2.data(), 2)).value == 12.0);
}

TEST_CASE("parse_number does not depend on the C locale", "[core][number]") {
  const auto check_c_style = [] {
    CHECK(parse_number("1.5").value == 1.5);
    CHECK(status_of("1,5") == NumberStatus::kNotANumber);
    CHECK(parse_number("1,5", true).value == 1.5);
  };
  check_c_style();  // in the "C" locale the test runner starts in

  // A locale whose decimal separator is ',' would make strtod read "1,5".
  // Not every machine has one installed; then only the part above runs.
  const char* chosen = nullptr;
  for (const char* name : {"de_DE.UTF-8", "de_DE.utf8", "de_DE", "fr_FR.UTF-8", "fr_FR.utf8",
                           "nl_NL.UTF-8", "es_ES.UTF-8", "it_IT.UTF-8", "ru_RU.UTF-8"}) {
    if (std::setlocale(LC_ALL, name) != nullptr &&
        std::strcmp(std::localeconv()->decimal_point, ",") == 0) {
      chosen = name;
      break;
    }
  }
  if (chosen == nullptr) {
    std::setlocale(LC_ALL, "C");
    WARN("no locale with a decimal comma is installed: locale part skipped");
    return;
  }
  INFO("locale " << chosen);
  check_c_style();
  std::setlocale(LC_ALL, "C");
  CHECK(std::strcmp(std::localeconv()->decimal_point, ".") == 0);
}
