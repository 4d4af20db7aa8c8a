#include "response_format.h"

#include <fmt/format.h>

namespace zout::sim {

std::string format_nr3(double value) { return fmt::format("{:+.9E}", value); }

std::string format_nr1(long long value) { return fmt::format("{}", value); }

std::string format_boolean(bool value) { return value ? "1" : "0"; }

std::string format_string(std::string_view text) {
  std::string out = "\"";
  for (char c : text) {
    out += c;
    if (c == '"') out += '"';
  }
  out += '"';
  return out;
}

}  // namespace zout::sim
