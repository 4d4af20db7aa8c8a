#include "si_format.h"

#include <fmt/format.h>

#include <cmath>

namespace zout::cli {

std::string si(double value, const std::string& unit, int digits) {
  if (!std::isfinite(value)) return "—";
  if (value == 0.0) return "0 " + unit;
  static const char* const prefixes[] = {"p", "n", "µ", "m", "", "k", "M", "G"};
  int exponent = static_cast<int>(std::floor(std::log10(std::abs(value)) / 3.0));
  exponent = std::max(-4, std::min(3, exponent));
  double mantissa = value / std::pow(1000.0, exponent);
  // Rounding may carry to 1000 (999.96 → "1000"): move up a prefix then.
  const int integer_digits = std::abs(mantissa) >= 100.0 ? 3 : std::abs(mantissa) >= 10.0 ? 2 : 1;
  int decimals = std::max(0, digits - integer_digits);
  if (std::abs(std::round(mantissa * std::pow(10.0, decimals)) / std::pow(10.0, decimals)) >= 1000.0 && exponent < 3) {
    ++exponent;
    mantissa /= 1000.0;
    decimals = std::max(0, digits - 1);
  }
  return fmt::format("{:.{}f} {}{}", mantissa, decimals, prefixes[exponent + 4], unit);
}

std::string si(const std::optional<double>& value, const std::string& unit, int digits) {
  return value ? si(*value, unit, digits) : "—";
}

std::string clock_time(double seconds) {
  if (!std::isfinite(seconds) || seconds < 0.0) return "—";
  const long total = std::lround(seconds);
  if (total < 3600) return fmt::format("{}:{:02}", total / 60, total % 60);
  return fmt::format("{}:{:02}:{:02}", total / 3600, (total / 60) % 60, total % 60);
}

}  // namespace zout::cli
