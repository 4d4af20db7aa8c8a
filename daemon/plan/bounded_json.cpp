#include "bounded_json.h"

#include <fmt/format.h>

namespace zout {
namespace {

// Thrown from the parser callback to stop at the first value past the depth limit.
struct TooDeep {
  std::size_t depth;
};

}  // namespace

std::string escaped_bytes(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (const unsigned char c : text) {
    if (c == '\\') {
      out += "\\\\";
    } else if (c < 0x20 || c >= 0x7f) {
      out += fmt::format("\\x{:02x}", static_cast<unsigned>(c));
    } else {
      out += static_cast<char>(c);
    }
  }
  return out;
}

nlohmann::json parse_bounded_json(const std::string& text, int max_depth) {
  const nlohmann::json::parser_callback_t check_depth = [max_depth](int depth, nlohmann::json::parse_event_t event,
                                                                    nlohmann::json&) {
    // object_start/array_start arrive at the depth of the container being opened.
    if ((event == nlohmann::json::parse_event_t::object_start || event == nlohmann::json::parse_event_t::array_start) &&
        depth >= max_depth) {
      throw TooDeep{static_cast<std::size_t>(depth) + 1};
    }
    return true;
  };
  try {
    return nlohmann::json::parse(text, check_depth);
  } catch (const TooDeep&) {
    throw JsonRefused(fmt::format("nested deeper than {} levels (JSON arrays and objects within each other)", max_depth));
  } catch (const nlohmann::json::out_of_range& e) {
    // out_of_range.406: a number literal no double can hold (1e400, a 400-digit integer).
    throw JsonRefused(fmt::format("a number is out of range for a double: {}", escaped_bytes(e.what())));
  } catch (const nlohmann::json::exception& e) {
    throw JsonRefused(escaped_bytes(e.what()));
  }
}

std::string safe_dump(const nlohmann::json& value) {
  return value.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

}  // namespace zout
