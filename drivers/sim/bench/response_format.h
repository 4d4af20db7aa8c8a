#pragma once
// How the simulated instruments write response data (IEEE 488.2 §8.7).

#include <string>
#include <string_view>

namespace zout::sim {

// SCPI-1999 Vol 1 §7.2.1.5 (from memory): 9.91E37 is "not a number", what a meter returns
// for an overloaded reading.
inline constexpr double scpi_not_a_number = 9.91e37;

// NR3 with nine digits after the point: "+1.234567890E+02" (IEEE 488.2 §8.7.4).
std::string format_nr3(double value);
// NR1: "12" (IEEE 488.2 §8.7.3).
std::string format_nr1(long long value);
// "1" or "0" (SCPI-1999 Vol 1 §7.3: a boolean query answers 1 or 0).
std::string format_boolean(bool value);
// A string response in double quotes, inner quotes doubled (IEEE 488.2 §8.7.8).
std::string format_string(std::string_view text);

}  // namespace zout::sim
