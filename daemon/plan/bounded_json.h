#pragma once
// JSON from outside the program (a client's line, a plan or bench file), parsed with bounds so
// that no input can exhaust the stack or escape as an unexpected exception: nesting is refused
// past a depth while parsing (nlohmann's parser callback sees each value's depth before the value
// is built), a number beyond a double is a refusal rather than nlohmann's out_of_range, and the
// refusal's text shows bytes outside printable ASCII escaped, so it can itself be sent as JSON.

#include <nlohmann/json.hpp>

#include <stdexcept>
#include <string>

namespace zout {

// Deepest nesting accepted from outside: far beyond any plan, bench or request zout defines.
inline constexpr int max_json_depth = 64;

// The text is not JSON, nests deeper than allowed, or holds a number no double can hold.
class JsonRefused : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Parses `text`; throws JsonRefused saying why and at which byte. Never throws anything else
// for any input (std::bad_alloc aside).
nlohmann::json parse_bounded_json(const std::string& text, int max_depth = max_json_depth);

// `value` as compact JSON text with invalid UTF-8 replaced by U+FFFD; never throws for a
// value that parse_bounded_json returned or the program built.
std::string safe_dump(const nlohmann::json& value);

// `text` with bytes outside printable ASCII written as \xNN (and '\\' as "\\\\").
std::string escaped_bytes(const std::string& text);

}  // namespace zout
