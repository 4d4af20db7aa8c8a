#include "program_message.h"

#include <cctype>
#include <charconv>
#include <cmath>

#include <fmt/format.h>

#include "scpi_error.h"

namespace zout::sim {

namespace {

bool is_space(char c) { return c == ' ' || c == '\t'; }
bool is_alpha(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
bool is_digit(char c) { return c >= '0' && c <= '9'; }
bool is_name_char(char c) { return is_alpha(c) || is_digit(c) || c == '_'; }

std::string upper(std::string_view text) {
  std::string out(text);
  for (auto& c : out) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  return out;
}

std::string_view trim(std::string_view text) {
  while (!text.empty() && is_space(text.front())) text.remove_prefix(1);
  while (!text.empty() && is_space(text.back())) text.remove_suffix(1);
  return text;
}

// Text for error details: printable ASCII kept, the rest as \xNN, cut at 40 characters.
std::string printable(std::string_view text) {
  std::string out;
  for (std::size_t i = 0; i < text.size() && i < 40; ++i) {
    const auto byte = static_cast<unsigned char>(text[i]);
    if (byte >= 0x20 && byte < 0x7f) {
      out += static_cast<char>(byte);
    } else {
      out += fmt::format("\\x{:02X}", byte);
    }
  }
  if (text.size() > 40) out += "...";
  return out;
}

[[noreturn]] void syntax(const std::string& what) { throw ScpiError(scpi_code::syntax_error, what); }

// Splits `text` at `separator` outside quoted strings and parentheses.
std::vector<std::string_view> split_outside(std::string_view text, char separator) {
  std::vector<std::string_view> parts;
  std::size_t start = 0;
  char quote = 0;
  int depth = 0;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (quote != 0) {
      if (c == quote) quote = 0;  // a doubled quote closes and re-opens: same effect
      continue;
    }
    if (c == '"' || c == '\'') {
      quote = c;
    } else if (c == '(') {
      ++depth;
    } else if (c == ')') {
      if (depth > 0) --depth;
    } else if (c == separator && depth == 0) {
      parts.push_back(text.substr(start, i - start));
      start = i + 1;
    }
  }
  parts.push_back(text.substr(start));
  return parts;
}

void parse_header(std::string_view header, ProgramUnit& unit) {
  unit.header = std::string(header);
  if (header.back() == '?') {
    unit.query = true;
    header.remove_suffix(1);
  }
  if (header.empty()) syntax(fmt::format("empty header \"{}\"", unit.header));
  if (header.front() == '*') {
    // IEEE 488.2 §7.6.1.3: a common command header is '*' and a mnemonic.
    const auto name = header.substr(1);
    if (name.empty() || !is_alpha(name.front())) syntax(fmt::format("bad common header \"{}\"", unit.header));
    for (char c : name) {
      if (!is_name_char(c)) syntax(fmt::format("bad common header \"{}\"", unit.header));
    }
    unit.common = true;
    unit.nodes.push_back(upper(header));
    return;
  }
  if (header.front() == ':') {
    unit.absolute = true;
    header.remove_prefix(1);
  }
  // IEEE 488.2 §7.6.1.4 compound header: mnemonics joined by single colons, each starting
  // with a letter.
  for (const auto node : split_outside(header, ':')) {
    if (node.empty() || !is_alpha(node.front())) syntax(fmt::format("bad header \"{}\"", printable(unit.header)));
    for (char c : node) {
      if (!is_name_char(c)) syntax(fmt::format("bad header \"{}\"", printable(unit.header)));
    }
    unit.nodes.push_back(upper(node));
  }
}

Parameter parse_string(std::string_view text) {
  const char quote = text.front();
  Parameter p;
  p.kind = Parameter::Kind::string;
  std::size_t i = 1;
  for (; i < text.size(); ++i) {
    if (text[i] != quote) {
      p.text += text[i];
      continue;
    }
    if (i + 1 < text.size() && text[i + 1] == quote) {  // a doubled quote stands for one
      p.text += quote;
      ++i;
      continue;
    }
    break;
  }
  if (i >= text.size()) syntax(fmt::format("string not terminated: {}", printable(text)));
  if (i + 1 != text.size()) syntax(fmt::format("characters after the string: {}", printable(text)));
  return p;
}

Parameter parse_non_decimal(std::string_view text) {
  // IEEE 488.2 §7.7.4: #H hexadecimal, #Q octal, #B binary.
  if (text.size() < 3) syntax(fmt::format("bad non-decimal number {}", printable(text)));
  int base = 0;
  switch (std::toupper(static_cast<unsigned char>(text[1]))) {
    case 'H': base = 16; break;
    case 'Q': base = 8; break;
    case 'B': base = 2; break;
    default: syntax(fmt::format("bad non-decimal number {}", printable(text)));
  }
  const auto digits = text.substr(2);
  unsigned long long value = 0;
  const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), value, base);
  if (error != std::errc() || end != digits.data() + digits.size()) {
    syntax(fmt::format("bad non-decimal number {}", printable(text)));
  }
  Parameter p;
  p.kind = Parameter::Kind::number;
  p.text = std::string(text);
  p.number = static_cast<double>(value);
  return p;
}

Parameter parse_decimal(std::string_view text) {
  // IEEE 488.2 §7.7.2 decimal numeric program data: [+|-] mantissa [E [+|-] digits], then
  // optionally white space and a suffix (§7.7.3).
  std::size_t i = 0;
  if (text[i] == '+' || text[i] == '-') ++i;
  std::size_t mantissa_digits = 0;
  while (i < text.size() && is_digit(text[i])) ++i, ++mantissa_digits;
  if (i < text.size() && text[i] == '.') {
    ++i;
    while (i < text.size() && is_digit(text[i])) ++i, ++mantissa_digits;
  }
  if (mantissa_digits == 0) syntax(fmt::format("bad number {}", printable(text)));
  std::size_t number_end = i;
  // An exponent: 'E' followed by an optionally signed integer. An 'E' not followed by
  // digits is not an exponent (it may start a suffix, as in "1E" never does, but "1EV" ...).
  if (i < text.size() && (text[i] == 'e' || text[i] == 'E')) {
    std::size_t j = i + 1;
    if (j < text.size() && (text[j] == '+' || text[j] == '-')) ++j;
    std::size_t exponent_digits = 0;
    while (j < text.size() && is_digit(text[j])) ++j, ++exponent_digits;
    if (exponent_digits > 0) {
      number_end = j;
      i = j;
    }
  }
  Parameter p;
  p.kind = Parameter::Kind::number;
  p.text = std::string(text);
  std::string digits(text.substr(0, number_end));
  if (!digits.empty() && digits.front() == '+') digits.erase(0, 1);
  const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), p.number);
  if (error != std::errc() || end != digits.data() + digits.size() || !std::isfinite(p.number)) {
    syntax(fmt::format("bad number {}", printable(text)));
  }
  auto suffix = trim(text.substr(i));
  for (char c : suffix) {
    if (!is_alpha(c) && c != '/') syntax(fmt::format("bad number {}", printable(text)));
  }
  p.suffix = std::string(suffix);
  return p;
}

Parameter parse_parameter(std::string_view text) {
  if (text.empty()) syntax("empty parameter");
  const char first = text.front();
  if (first == '"' || first == '\'') return parse_string(text);
  if (first == '(') {
    if (text.back() != ')') syntax(fmt::format("expression not closed: {}", printable(text)));
    Parameter p;
    p.kind = Parameter::Kind::expression;
    p.text = std::string(text.substr(1, text.size() - 2));
    return p;
  }
  if (first == '#') return parse_non_decimal(text);
  if (is_digit(first) || first == '+' || first == '-' || first == '.') return parse_decimal(text);
  if (is_alpha(first)) {
    for (char c : text) {
      if (!is_name_char(c)) syntax(fmt::format("bad parameter {}", printable(text)));
    }
    Parameter p;
    p.kind = Parameter::Kind::mnemonic;
    p.text = std::string(text);
    return p;
  }
  syntax(fmt::format("bad parameter {}", printable(text)));
}

}  // namespace

std::vector<std::string> ProgramMessageParser::split_units(std::string_view message) {
  std::vector<std::string> units;
  for (const auto part : split_outside(message, ';')) {
    const auto unit = trim(part);
    if (!unit.empty()) units.emplace_back(unit);
  }
  return units;
}

ProgramUnit ProgramMessageParser::parse_unit(std::string_view text) {
  for (char c : text) {
    const auto byte = static_cast<unsigned char>(c);
    // IEEE 488.2 §7.4.1: program messages are 7-bit ASCII; controls other than white
    // space have no place inside a unit.
    if ((byte < 0x20 && c != '\t') || byte >= 0x7f) {
      throw ScpiError(scpi_code::invalid_character, fmt::format("byte 0x{:02X} in \"{}\"", byte, printable(text)));
    }
  }
  text = trim(text);
  ProgramUnit unit;
  if (text.empty()) syntax("empty command");
  std::size_t header_end = 0;
  while (header_end < text.size() && !is_space(text[header_end])) ++header_end;
  parse_header(text.substr(0, header_end), unit);
  const auto rest = trim(text.substr(header_end));
  if (rest.empty()) return unit;
  for (const auto part : split_outside(rest, ',')) {
    unit.parameters.push_back(parse_parameter(trim(part)));
  }
  return unit;
}

}  // namespace zout::sim
