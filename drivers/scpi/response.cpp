#include "response.h"

#include <fmt/format.h>

#include <charconv>
#include <climits>
#include <cmath>
#include <optional>
#include <system_error>

#include "drivers/transport/io_error.h"

namespace zout {
namespace {

bool is_space(char c) {
  return c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '\v' || c == '\f';
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

std::string_view trim(std::string_view text) {
  while (!text.empty() && is_space(text.front())) text.remove_prefix(1);
  while (!text.empty() && is_space(text.back())) text.remove_suffix(1);
  return text;
}

[[noreturn]] void fail(std::string_view expected, std::string_view text) {
  throw IoError(IoErrorKind::protocol,
                fmt::format("expected {}, got \"{}\"", expected, escape_bytes(text)));
}

// IEEE 488.2 §7.7.4 non-decimal numeric forms: "#H" hex, "#Q" octal, "#B" binary, with the
// letter and hex digits in either case, no sign. Returns nullopt when `text` has no such
// prefix; throws when it has one but the digits are bad or do not fit in 64 bits.
std::optional<unsigned long long> parse_non_decimal(std::string_view text,
                                                    std::string_view expected) {
  if (text.size() < 2 || text[0] != '#') return std::nullopt;
  int base = 0;
  switch (text[1]) {
    case 'H': case 'h': base = 16; break;
    case 'Q': case 'q': base = 8; break;
    case 'B': case 'b': base = 2; break;
    default: fail(expected, text);
  }
  const std::string_view digits = text.substr(2);
  if (digits.empty() || digits.front() == '-' || digits.front() == '+') fail(expected, text);
  unsigned long long value = 0;
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), value, base);
  if (ec == std::errc::result_out_of_range) {
    fail("a non-decimal number that fits in 64 bits", text);
  }
  if (ec != std::errc() || end != digits.data() + digits.size()) fail(expected, text);
  return value;
}

// Checks the IEEE 488.2 §7.7.2 decimal form [+|-] mantissa [E|e [+|-] digits], where the
// mantissa has at least one digit and at most one '.'. No inner whitespace is accepted.
// Returns the decimal order of magnitude of the leading significant digit (0 for "5",
// -3 for "0.001", 2 for "1e2"), or 0 for a value of zero; it tells overflow from underflow.
long long check_decimal_form(std::string_view text) {
  constexpr std::string_view expected = "an SCPI number";
  std::size_t i = 0;
  if (i < text.size() && (text[i] == '+' || text[i] == '-')) ++i;
  long long order = 0;
  bool significant = false;
  std::size_t int_digits = 0;
  std::size_t frac_digits = 0;
  for (; i < text.size() && is_digit(text[i]); ++i, ++int_digits) {
    if (!significant && text[i] != '0') significant = true;
    else if (significant) ++order;
  }
  if (i < text.size() && text[i] == '.') {
    for (++i; i < text.size() && is_digit(text[i]); ++i, ++frac_digits) {
      if (!significant && text[i] != '0') {
        significant = true;
        order = -static_cast<long long>(frac_digits) - 1;
      }
    }
  }
  if (int_digits + frac_digits == 0) fail(expected, text);
  long long exponent = 0;
  if (i < text.size() && (text[i] == 'E' || text[i] == 'e')) {
    ++i;
    const bool negative = i < text.size() && text[i] == '-';
    if (i < text.size() && (text[i] == '+' || text[i] == '-')) ++i;
    const std::size_t start = i;
    while (i < text.size() && is_digit(text[i])) ++i;
    if (i == start) fail(expected, text);
    const auto [end, ec] = std::from_chars(text.data() + start, text.data() + i, exponent);
    // An exponent too long for long long is far out of double range; its sign is all that matters.
    if (ec == std::errc::result_out_of_range) exponent = LLONG_MAX / 4;
    if (negative) exponent = -exponent;
  }
  if (i != text.size()) fail(expected, text);
  return significant ? order + exponent : 0;
}

// SCPI-1999 Vol 1, 7.2.1 (from memory; §7.2.1.5 INFinity/NINFinity, §7.2.1.6 NAN): an
// instrument reports 9.91E37 for not-a-number and +/-9.9E37 for +/-infinity. Instruments
// print these with varying digits ("9.91000000E+37"), so they are matched with a relative
// tolerance. Our choice: any other magnitude above 1e37 is also reported as not_a_number,
// since no quantity we measure is that large; an overload-like value is never used as a number.
ScpiNumber classify(double value) {
  constexpr double infinity_marker = 9.9e37;
  constexpr double tolerance = 1e-6;
  const auto near = [](double x, double marker) { return std::fabs(x / marker - 1.0) < tolerance; };
  ScpiNumber n;
  if (std::isfinite(value) && std::fabs(value) <= 1e37) {
    n.value = value;
  } else if (near(value, infinity_marker)) {
    n.kind = ScpiNumber::Kind::plus_infinity;
  } else if (near(value, -infinity_marker)) {
    n.kind = ScpiNumber::Kind::minus_infinity;
  } else {
    n.kind = ScpiNumber::Kind::not_a_number;  // 9.91E37 itself, and every other absurd value
  }
  return n;
}

// The SCPI character forms of the special values (SCPI-1999 Vol 1, 7.2.1, from memory).
// IEEE 488.2 §8.7.1 character response data is upper case, so only the upper-case words are
// accepted; "nan", "inf", "infinity" as C prints them are refused.
std::optional<ScpiNumber::Kind> special_word(std::string_view text) {
  if (text == "NAN") return ScpiNumber::Kind::not_a_number;
  if (text == "INF" || text == "+INF") return ScpiNumber::Kind::plus_infinity;
  if (text == "NINF" || text == "-INF") return ScpiNumber::Kind::minus_infinity;
  return std::nullopt;
}

const char* kind_name(ScpiNumber::Kind kind) {
  switch (kind) {
    case ScpiNumber::Kind::number: return "number";
    case ScpiNumber::Kind::not_a_number: return "not-a-number";
    case ScpiNumber::Kind::plus_infinity: return "+infinity";
    case ScpiNumber::Kind::minus_infinity: return "-infinity";
  }
  return "unknown";
}

}  // namespace

ScpiNumber parse_number(std::string_view text) {
  constexpr std::string_view expected = "an SCPI number";
  const std::string_view t = trim(text);
  if (t.empty()) fail(expected, t);
  if (const auto kind = special_word(t)) {
    ScpiNumber n;
    n.kind = *kind;
    return n;
  }
  if (const auto integer = parse_non_decimal(t, expected)) {
    return classify(static_cast<double>(*integer));
  }
  const long long order = check_decimal_form(t);
  // std::from_chars takes no leading '+'; the form was checked above, so one '+' is safe to drop.
  const std::string_view digits = t.front() == '+' ? t.substr(1) : t;
  double value = 0.0;
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (ec == std::errc::result_out_of_range) {
    // Too large for a double: absurd, so not_a_number (see classify). Too small: the
    // nearest double, a signed zero.
    if (order > 0) return classify(HUGE_VAL);
    return classify(t.front() == '-' ? -0.0 : 0.0);
  }
  if (ec != std::errc() || end != digits.data() + digits.size()) fail(expected, t);
  return classify(value);
}

double parse_finite_number(std::string_view text) {
  const ScpiNumber n = parse_number(text);
  if (!n.is_number()) {
    throw IoError(IoErrorKind::protocol,
                  fmt::format("expected a finite SCPI number, got the overload/invalid value "
                              "\"{}\" ({})",
                              escape_bytes(trim(text)), kind_name(n.kind)));
  }
  return n.value;
}

long long parse_integer(std::string_view text) {
  constexpr std::string_view expected = "an SCPI integer (NR1 or #H/#Q/#B)";
  const std::string_view t = trim(text);
  if (t.empty()) fail(expected, t);
  if (const auto integer = parse_non_decimal(t, expected)) {
    if (*integer > static_cast<unsigned long long>(LLONG_MAX)) {
      fail("an SCPI integer within the signed 64-bit range", t);
    }
    return static_cast<long long>(*integer);
  }
  // [+|-] digits; std::from_chars takes no leading '+', so it is dropped after the check.
  const std::size_t first_digit = t.front() == '+' || t.front() == '-' ? 1 : 0;
  if (t.size() == first_digit) fail(expected, t);
  for (std::size_t i = first_digit; i < t.size(); ++i) {
    if (!is_digit(t[i])) fail(expected, t);
  }
  const std::string_view digits = t.front() == '+' ? t.substr(1) : t;
  long long value = 0;
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
  if (ec == std::errc::result_out_of_range) {
    fail("an SCPI integer within the signed 64-bit range", t);
  }
  if (ec != std::errc() || end != digits.data() + digits.size()) fail(expected, t);
  return value;
}

bool parse_boolean(std::string_view text) {
  const std::string_view t = trim(text);
  std::string upper(t);
  for (char& c : upper) {
    if (c >= 'a' && c <= 'z') c = static_cast<char>(c - 'a' + 'A');
  }
  if (upper == "1" || upper == "ON") return true;
  if (upper == "0" || upper == "OFF") return false;
  fail("an SCPI boolean (1, 0, ON or OFF)", t);
}

std::string parse_quoted_string(std::string_view text) {
  constexpr std::string_view expected = "an SCPI quoted string";
  const std::string_view t = trim(text);
  if (t.empty() || (t.front() != '"' && t.front() != '\'')) fail(expected, t);
  const char quote = t.front();
  std::string out;
  for (std::size_t i = 1; i < t.size(); ++i) {
    if (t[i] != quote) {
      out += t[i];
    } else if (i + 1 < t.size() && t[i + 1] == quote) {
      out += quote;  // a doubled quote stands for one
      ++i;
    } else if (i + 1 == t.size()) {
      return out;
    } else {
      fail("an SCPI quoted string with nothing after the closing quote", t);
    }
  }
  fail("an SCPI quoted string with a closing quote", t);
}

std::vector<std::string> split_list(std::string_view text) {
  // Quoted strings may hold commas; a doubled quote inside one just closes and reopens it,
  // which leaves the splitting unchanged. Arbitrary block data (#<n>...) is not handled here.
  const std::string_view t = trim(text);
  std::vector<std::string> elements;
  if (t.empty()) return elements;
  char open_quote = 0;
  std::size_t start = 0;
  for (std::size_t i = 0; i < t.size(); ++i) {
    const char c = t[i];
    if (open_quote != 0) {
      if (c == open_quote) open_quote = 0;
    } else if (c == '"' || c == '\'') {
      open_quote = c;
    } else if (c == ',') {
      elements.emplace_back(trim(t.substr(start, i - start)));
      start = i + 1;
    }
  }
  if (open_quote != 0) fail("an SCPI list with every quoted string closed", t);
  elements.emplace_back(trim(t.substr(start)));
  return elements;
}

std::vector<ScpiNumber> parse_number_list(std::string_view text) {
  const std::vector<std::string> elements = split_list(text);
  std::vector<ScpiNumber> numbers;
  numbers.reserve(elements.size());
  for (std::size_t i = 0; i < elements.size(); ++i) {
    try {
      numbers.push_back(parse_number(elements[i]));
    } catch (const IoError& e) {
      throw IoError(IoErrorKind::protocol,
                    fmt::format("element {} of list \"{}\": {}", i + 1,
                                escape_bytes(trim(text)), e.what()));
    }
  }
  return numbers;
}

}  // namespace zout
