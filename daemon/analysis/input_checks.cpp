#include "input_checks.h"

#include <charconv>
#include <cmath>
#include <stdexcept>
#include <system_error>

namespace zout::analysis {

namespace {

[[noreturn]] void fail(std::string_view what, std::string_view problem, double value) {
  throw std::invalid_argument(std::string(what) + " " + std::string(problem) + " (" +
                              format_number(value) + ")");
}

}  // namespace

void require_finite(double value, std::string_view what) {
  if (!std::isfinite(value)) fail(what, "is not finite", value);
}

void require_positive(double value, std::string_view what) {
  require_finite(value, what);
  if (!(value > 0.0)) fail(what, "must be > 0", value);
}

void require_non_negative(double value, std::string_view what) {
  require_finite(value, what);
  if (value < 0.0) fail(what, "must be >= 0", value);
}

void require_all_finite(std::span<const double> values, std::string_view what) {
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (!std::isfinite(values[i])) {
      fail(std::string(what) + "[" + std::to_string(i) + "]", "is not finite", values[i]);
    }
  }
}

void require_same_size(std::size_t a, std::size_t b, std::string_view what_a,
                       std::string_view what_b) {
  if (a != b) {
    throw std::invalid_argument(std::string(what_a) + " has " + std::to_string(a) +
                                " values but " + std::string(what_b) + " has " +
                                std::to_string(b));
  }
}

std::string format_number(double value) {
  if (std::isnan(value)) return "nan";
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  char buffer[64];
  const auto result =
      std::to_chars(buffer, buffer + sizeof buffer, value, std::chars_format::general, 6);
  if (result.ec != std::errc()) return "?";
  return std::string(buffer, result.ptr);
}

}  // namespace zout::analysis
