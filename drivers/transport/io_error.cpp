#include "io_error.h"

#include <fmt/format.h>

namespace zout {

const char* to_string(IoErrorKind kind) {
  switch (kind) {
    case IoErrorKind::open_failed: return "open failed";
    case IoErrorKind::timeout: return "timeout";
    case IoErrorKind::disconnected: return "disconnected";
    case IoErrorKind::protocol: return "protocol error";
  }
  return "unknown";
}

IoError::IoError(IoErrorKind kind, const std::string& message)
    : std::runtime_error(message), kind_(kind) {}

std::string escape_bytes(std::string_view bytes, std::size_t max_bytes) {
  std::string out;
  const std::size_t shown = std::min(bytes.size(), max_bytes);
  for (std::size_t i = 0; i < shown; ++i) {
    const auto c = static_cast<unsigned char>(bytes[i]);
    switch (c) {
      case '\r': out += "\\r"; break;
      case '\n': out += "\\n"; break;
      case '\t': out += "\\t"; break;
      case '\\': out += "\\\\"; break;
      default:
        if (c >= 0x20 && c < 0x7f) {
          out += static_cast<char>(c);
        } else {
          out += fmt::format("\\x{:02X}", c);
        }
    }
  }
  if (bytes.size() > shown) out += fmt::format("... ({} more bytes)", bytes.size() - shown);
  return out;
}

}  // namespace zout
