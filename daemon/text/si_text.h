#pragma once
// Numbers for people: a value in an SI unit written with an engineering prefix and a fixed
// number of significant digits ("20.0 µA", "385.0 V", "212 kΩ"). Not for files: exports and
// --json keep full precision.

#include <optional>
#include <string>
#include <string_view>

namespace zout::text {

// An engineering prefix: its symbol and the power of 1000 it stands for.
struct SiPrefix {
  std::string_view symbol;  // "p", "n", "µ", "m", "", "k", "M" or "G"
  double factor = 1.0;      // 1e-12 ... 1e9
};

// The prefix that puts |magnitude| in [1, 1000), held to p ... G; none for 0 or a non-finite
// magnitude. (One prefix for a whole plot axis: pass the axis's largest magnitude.)
SiPrefix si_prefix_for(double magnitude);

// `value` in `unit` with the prefix that puts the mantissa in [1, 1000) and `digits`
// significant digits (more only where the integer part needs them); rounding that carries
// to 1000 moves up a prefix ("1.000 kΩ", not "1000 Ω"). 0 is "0 <unit>"; a non-finite value
// is the missing-value mark.
std::string si_text(double value, std::string_view unit, int digits = 4);
// The same for an optional value; the missing-value mark when absent.
std::string si_text(const std::optional<double>& value, std::string_view unit, int digits = 4);

// As si_text with up to `max_digits` significant digits, trailing zeros dropped: for values
// a person wrote, such as a plan's limits ("383 V", "225 kΩ", "21.5 nF").
std::string si_text_compact(double value, std::string_view unit, int max_digits = 6);

// "189.7 kΩ ± 11.8 kΩ": the value as si_text, the uncertainty (its magnitude) with its own
// prefix and unit and written to the value's last digit, with 2 to `digits` significant
// digits. A non-finite value is the missing-value mark; a non-finite uncertainty is written
// as the mark after the ±.
std::string si_with_uncertainty(double value, double uncertainty, std::string_view unit, int digits = 4);
// The same for optional figures: the mark when the value is absent, the value alone when
// the uncertainty is.
std::string si_with_uncertainty(const std::optional<double>& value, const std::optional<double>& uncertainty,
                                std::string_view unit, int digits = 4);

}  // namespace zout::text
