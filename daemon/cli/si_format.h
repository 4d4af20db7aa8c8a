#pragma once
// Numbers for people: a value in an SI unit written with an engineering prefix and a fixed
// number of significant digits ("20 µA", "385.0 V", "212 kΩ"). Not for files: exports and
// --json keep full precision.

#include <optional>
#include <string>

namespace zout::cli {

// `value` in `unit` with the prefix (p n µ m – k M G) that puts the mantissa in [1, 1000),
// `digits` significant digits; 0 is "0 <unit>"; a non-finite value is "—".
std::string si(double value, const std::string& unit, int digits = 4);
// The same for an optional value; "—" when absent.
std::string si(const std::optional<double>& value, const std::string& unit, int digits = 4);
// Seconds as m:ss (under an hour) or h:mm:ss.
std::string clock_time(double seconds);

}  // namespace zout::cli
