#include "daemon/text/si_text.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "daemon/text/missing_value.h"

namespace zout::text {
namespace {

constexpr std::string_view prefix_symbols[] = {"p", "n", "µ", "m", "", "k", "M", "G"};
constexpr int lowest_power = -4;  // p = 1000^-4
constexpr int highest_power = 3;  // G = 1000^3

// Decimal digits before the point of a magnitude >= 1 (1 below that).
int integer_digits_of(double magnitude) {
  return magnitude >= 1.0 ? static_cast<int>(std::floor(std::log10(magnitude))) + 1 : 1;
}

double rounded_to(double magnitude, int decimals) {
  const double scale = std::pow(10.0, decimals);
  return std::round(magnitude * scale) / scale;
}

// A finite non-zero value split into mantissa, power of 1000 and decimals to print, after the
// rounding to `digits` significant digits has been allowed to carry.
struct SiParts {
  double mantissa = 0.0;
  int power = 0;
  int decimals = 0;
};

SiParts parts_of(double value, int digits) {
  digits = std::max(1, digits);
  SiParts p;
  p.power = std::clamp(static_cast<int>(std::floor(std::log10(std::abs(value)) / 3.0)), lowest_power, highest_power);
  p.mantissa = value / std::pow(1000.0, p.power);
  int integer_digits = integer_digits_of(std::abs(p.mantissa));
  p.decimals = std::max(0, digits - integer_digits);
  const double shown = rounded_to(std::abs(p.mantissa), p.decimals);
  if (shown >= 1000.0 && p.power < highest_power) {
    // 999.96 → "1.000 k", not "1000.0".
    ++p.power;
    p.mantissa /= 1000.0;
    p.decimals = std::max(0, digits - 1);
  } else if (integer_digits_of(shown) > integer_digits) {
    // 9.9996 → "10.00", not "10.000".
    p.decimals = std::max(0, digits - integer_digits_of(shown));
  }
  return p;
}

std::string joined(std::string number, std::string_view prefix, std::string_view unit) {
  if (prefix.empty() && unit.empty()) return number;
  number += ' ';
  number += prefix;
  number += unit;
  return number;
}

// Half away from zero, as people round (printf alone rounds an exact half to even).
std::string fixed(double mantissa, int decimals) {
  const double rounded = std::copysign(rounded_to(std::abs(mantissa), decimals), mantissa);
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, rounded);
  return buffer;
}

}  // namespace

SiPrefix si_prefix_for(double magnitude) {
  magnitude = std::abs(magnitude);
  if (!std::isfinite(magnitude) || magnitude == 0.0) return {"", 1.0};
  const int power =
      std::clamp(static_cast<int>(std::floor(std::log10(magnitude) / 3.0)), lowest_power, highest_power);
  return {prefix_symbols[power - lowest_power], std::pow(1000.0, power)};
}

std::string si_text(double value, std::string_view unit, int digits) {
  if (!std::isfinite(value)) return missing_value_mark;
  if (value == 0.0) return joined("0", "", unit);
  const SiParts p = parts_of(value, digits);
  return joined(fixed(p.mantissa, p.decimals), prefix_symbols[p.power - lowest_power], unit);
}

std::string si_text(const std::optional<double>& value, std::string_view unit, int digits) {
  return value ? si_text(*value, unit, digits) : std::string(missing_value_mark);
}

std::string si_text_compact(double value, std::string_view unit, int max_digits) {
  if (!std::isfinite(value)) return missing_value_mark;
  if (value == 0.0) return joined("0", "", unit);
  const SiParts p = parts_of(value, max_digits);
  std::string number = fixed(p.mantissa, p.decimals);
  if (number.find('.') != std::string::npos) {
    while (number.back() == '0') number.pop_back();
    if (number.back() == '.') number.pop_back();
  }
  return joined(number, prefix_symbols[p.power - lowest_power], unit);
}

std::string si_with_uncertainty(double value, double uncertainty, std::string_view unit, int digits) {
  if (!std::isfinite(value)) return missing_value_mark;
  const std::string shown = si_text(value, unit, digits) + " ± ";
  if (!std::isfinite(uncertainty)) return shown + missing_value_mark;
  uncertainty = std::abs(uncertainty);
  if (uncertainty == 0.0) return shown + si_text(0.0, unit);
  int uncertainty_digits = 2;
  if (value != 0.0) {
    const SiParts p = parts_of(value, digits);
    const int last_digit_decade = 3 * p.power - p.decimals;
    const int leading_decade = static_cast<int>(std::floor(std::log10(uncertainty)));
    uncertainty_digits = std::clamp(leading_decade - last_digit_decade + 1, 2, std::max(2, digits));
  }
  return shown + si_text(uncertainty, unit, uncertainty_digits);
}

std::string si_with_uncertainty(const std::optional<double>& value, const std::optional<double>& uncertainty,
                                std::string_view unit, int digits) {
  if (!value) return missing_value_mark;
  if (!uncertainty) return si_text(*value, unit, digits);
  return si_with_uncertainty(*value, *uncertainty, unit, digits);
}

}  // namespace zout::text
