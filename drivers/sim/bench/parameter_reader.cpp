#include "parameter_reader.h"

#include <cctype>
#include <charconv>
#include <cmath>

#include <fmt/format.h>

#include "scpi_error.h"

namespace zout::sim {

namespace {

std::string upper(std::string_view text) {
  std::string out(text);
  for (auto& c : out) c = static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  return out;
}

std::string short_form(std::string_view mnemonic) {
  std::string out;
  for (char c : mnemonic) {
    if (!std::islower(static_cast<unsigned char>(c))) out += c;
  }
  return out;
}

const char* kind_name(Parameter::Kind kind) {
  switch (kind) {
    case Parameter::Kind::number: return "a number";
    case Parameter::Kind::mnemonic: return "character data";
    case Parameter::Kind::string: return "a string";
    case Parameter::Kind::expression: return "an expression";
  }
  return "?";
}

std::string_view trim(std::string_view text) {
  while (!text.empty() && (text.front() == ' ' || text.front() == '\t')) text.remove_prefix(1);
  while (!text.empty() && (text.back() == ' ' || text.back() == '\t')) text.remove_suffix(1);
  return text;
}

int channel_number(std::string_view text, std::string_view list) {
  text = trim(text);
  int value = 0;
  const auto [end, error] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (text.empty() || error != std::errc() || end != text.data() + text.size()) {
    throw ScpiError(scpi_code::expression_error, fmt::format("bad channel \"{}\" in (@{})", text, list));
  }
  return value;
}

}  // namespace

bool ParameterReader::mnemonic_matches(std::string_view typed, std::string_view mnemonic) {
  const std::string typed_upper = upper(typed);
  return typed_upper == upper(mnemonic) || typed_upper == short_form(mnemonic);
}

double ParameterReader::suffix_multiplier(std::string_view suffix, std::string_view unit) {
  if (suffix.empty()) return 1.0;
  const std::string typed = upper(suffix);
  if (unit.empty()) throw ScpiError(scpi_code::suffix_not_allowed, fmt::format("suffix {}", suffix));
  const std::string unit_upper = upper(unit);
  if (typed.size() < unit_upper.size() || typed.compare(typed.size() - unit_upper.size(), unit_upper.size(), unit_upper) != 0) {
    throw ScpiError(scpi_code::invalid_suffix, fmt::format("suffix {}; expected a unit of {}", suffix, unit));
  }
  const std::string prefix = typed.substr(0, typed.size() - unit_upper.size());
  // IEEE 488.2 §7.7.3 suffix multipliers (from memory). Suffixes are case-blind, so "M" is
  // milli and mega is "MA" -- except MHZ and MOHM, which the standard defines as mega.
  if (prefix == "M" && (unit_upper == "HZ" || unit_upper == "OHM")) return 1e6;
  static const struct {
    const char* prefix;
    double multiplier;
  } table[] = {{"", 1.0},   {"EX", 1e18}, {"PE", 1e15}, {"T", 1e12},  {"G", 1e9},   {"MA", 1e6}, {"K", 1e3},
               {"M", 1e-3}, {"U", 1e-6},  {"N", 1e-9},  {"P", 1e-12}, {"F", 1e-15}, {"A", 1e-18}};
  for (const auto& entry : table) {
    if (prefix == entry.prefix) return entry.multiplier;
  }
  throw ScpiError(scpi_code::invalid_suffix, fmt::format("suffix {}; unknown multiplier {}", suffix, prefix));
}

const Parameter& ParameterReader::at(std::size_t index) const {
  if (index >= parameters_.size()) {
    throw ScpiError(scpi_code::missing_parameter, fmt::format("parameter {} is missing", index + 1));
  }
  return parameters_[index];
}

void ParameterReader::allow_at_most(std::size_t count) const {
  if (parameters_.size() > count) {
    throw ScpiError(scpi_code::parameter_not_allowed,
                    fmt::format("{} parameter(s) given, at most {} allowed", parameters_.size(), count));
  }
}

void ParameterReader::require(std::size_t count) const {
  if (parameters_.size() < count) {
    throw ScpiError(scpi_code::missing_parameter,
                    fmt::format("{} parameter(s) given, {} required", parameters_.size(), count));
  }
}

double ParameterReader::number(std::size_t index, const NumericSpec& spec) const {
  const Parameter& p = at(index);
  double value = 0.0;
  switch (p.kind) {
    case Parameter::Kind::mnemonic:
      if (mnemonic_matches(p.text, "MINimum")) return spec.minimum;
      if (mnemonic_matches(p.text, "MAXimum")) return spec.maximum;
      if (mnemonic_matches(p.text, "DEFault")) return spec.default_value;
      throw ScpiError(scpi_code::invalid_character_data,
                      fmt::format("{}; expected a number, MIN, MAX or DEF", p.text));
    case Parameter::Kind::number:
      value = p.number * suffix_multiplier(p.suffix, spec.unit);
      break;
    default:
      throw ScpiError(scpi_code::data_type_error, fmt::format("parameter {} is {}; expected a number", index + 1,
                                                              kind_name(p.kind)));
  }
  if (!std::isfinite(value) || value < spec.minimum || value > spec.maximum) {
    throw ScpiError(scpi_code::data_out_of_range,
                    fmt::format("{} outside {:g} to {:g}{}", p.text, spec.minimum, spec.maximum,
                                spec.unit.empty() ? "" : " " + spec.unit));
  }
  return value;
}

long long ParameterReader::integer(std::size_t index, const NumericSpec& spec) const {
  return std::llround(number(index, spec));
}

bool ParameterReader::boolean(std::size_t index) const {
  const Parameter& p = at(index);
  if (p.kind == Parameter::Kind::number) {
    if (!p.suffix.empty()) throw ScpiError(scpi_code::suffix_not_allowed, fmt::format("suffix {}", p.suffix));
    return std::llround(p.number) != 0;
  }
  if (p.kind == Parameter::Kind::mnemonic) {
    const std::string typed = upper(p.text);
    if (typed == "ON") return true;
    if (typed == "OFF") return false;
    throw ScpiError(scpi_code::invalid_character_data, fmt::format("{}; expected ON, OFF, 1 or 0", p.text));
  }
  throw ScpiError(scpi_code::data_type_error,
                  fmt::format("parameter {} is {}; expected ON, OFF, 1 or 0", index + 1, kind_name(p.kind)));
}

std::string ParameterReader::choice(std::size_t index, std::initializer_list<std::string_view> options) const {
  const Parameter& p = at(index);
  std::string allowed;
  for (const auto option : options) allowed += (allowed.empty() ? "" : ", ") + std::string(option);
  if (p.kind != Parameter::Kind::mnemonic) {
    throw ScpiError(scpi_code::data_type_error,
                    fmt::format("parameter {} is {}; expected one of {}", index + 1, kind_name(p.kind), allowed));
  }
  for (const auto option : options) {
    if (mnemonic_matches(p.text, option)) return std::string(option);
  }
  throw ScpiError(scpi_code::invalid_character_data, fmt::format("{}; expected one of {}", p.text, allowed));
}

bool ParameterReader::is_keyword(std::size_t index, std::string_view mnemonic) const {
  return index < parameters_.size() && parameters_[index].kind == Parameter::Kind::mnemonic &&
         mnemonic_matches(parameters_[index].text, mnemonic);
}

std::string ParameterReader::string(std::size_t index) const {
  const Parameter& p = at(index);
  if (p.kind != Parameter::Kind::string) {
    throw ScpiError(scpi_code::data_type_error,
                    fmt::format("parameter {} is {}; expected a quoted string", index + 1, kind_name(p.kind)));
  }
  return p.text;
}

std::vector<int> ParameterReader::channel_list(std::size_t index) const {
  const Parameter& p = at(index);
  if (p.kind != Parameter::Kind::expression) {
    throw ScpiError(scpi_code::data_type_error,
                    fmt::format("parameter {} is {}; expected a channel list (@N)", index + 1, kind_name(p.kind)));
  }
  std::string_view body = trim(p.text);
  if (body.empty() || body.front() != '@') {
    throw ScpiError(scpi_code::expression_error, fmt::format("({}) is not a channel list (@N)", p.text));
  }
  body.remove_prefix(1);
  std::vector<int> channels;
  if (trim(body).empty()) return channels;  // "(@)" is the empty list
  std::size_t start = 0;
  for (std::size_t i = 0; i <= body.size(); ++i) {
    if (i != body.size() && body[i] != ',') continue;
    const std::string_view entry = body.substr(start, i - start);
    start = i + 1;
    const auto colon = entry.find(':');
    if (colon == std::string_view::npos) {
      channels.push_back(channel_number(entry, body));
      continue;
    }
    const int first = channel_number(entry.substr(0, colon), body);
    const int last = channel_number(entry.substr(colon + 1), body);
    if (last < first || last - first > 1000) {
      throw ScpiError(scpi_code::expression_error, fmt::format("bad channel range {} in (@{})", entry, body));
    }
    for (int channel = first; channel <= last; ++channel) channels.push_back(channel);
  }
  return channels;
}

}  // namespace zout::sim
