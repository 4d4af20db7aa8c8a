#pragma once
// Parsing of SCPI response data (IEEE 488.2 §8.7 response forms, SCPI-1999 Vol 1 §7).
// Every parser takes one response (or one element of a list), ignores surrounding
// whitespace, and throws IoError(protocol) naming the offending text (escaped) when the
// text is not of the expected form. Nothing here guesses: "1.2.3" is an error, not 1.2.

#include <string>
#include <string_view>
#include <vector>

namespace zout {

// A numeric response. SCPI-1999 reserves 9.91E37 for "not a number" (an overloaded or
// invalid measurement) and +/-9.9E37 for infinities; those are never a usable number.
struct ScpiNumber {
  enum class Kind { number, not_a_number, plus_infinity, minus_infinity };
  Kind kind = Kind::number;
  double value = 0.0;  // meaningful only when kind == number; finite then

  bool is_number() const { return kind == Kind::number; }
};

// "+1.23E-3", "-5", "12.5", "1e3", "#H1F" (IEEE 488.2 non-decimal forms #H #Q #B).
ScpiNumber parse_number(std::string_view text);
// Like parse_number but a special value is an IoError(protocol) ("overload/invalid").
double parse_finite_number(std::string_view text);
// NR1 integer, optionally signed; "#H"/"#Q"/"#B" forms accepted. Decimals are refused.
long long parse_integer(std::string_view text);
// "1"/"0", "ON"/"OFF" (any case).
bool parse_boolean(std::string_view text);
// A string response in double (or single) quotes; doubled quotes inside stand for one.
std::string parse_quoted_string(std::string_view text);

// Splits a comma-separated response into elements, leaving commas inside quotes alone;
// elements are trimmed. An empty response gives an empty list.
std::vector<std::string> split_list(std::string_view text);
// A comma-separated list of numbers (each element through parse_number).
std::vector<ScpiNumber> parse_number_list(std::string_view text);

}  // namespace zout
