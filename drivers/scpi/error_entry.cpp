#include "error_entry.h"

#include <fmt/format.h>

#include <charconv>
#include <system_error>
#include <vector>

#include "drivers/scpi/response.h"
#include "drivers/transport/io_error.h"

namespace zout {
namespace {

[[noreturn]] void fail(std::string_view reply) {
  throw IoError(IoErrorKind::protocol,
                fmt::format("expected an SCPI error entry <code>,\"<description>\", got \"{}\"",
                            escape_bytes(reply)));
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

// The code is a signed decimal integer (NR1) that fits in an int: "-113", "0", "+0".
bool read_code(std::string_view text, int& code) {
  const std::size_t first_digit = !text.empty() && (text[0] == '+' || text[0] == '-') ? 1 : 0;
  if (text.size() == first_digit) return false;
  for (std::size_t i = first_digit; i < text.size(); ++i) {
    if (!is_digit(text[i])) return false;
  }
  const std::string_view digits = text[0] == '+' ? text.substr(1) : text;
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), code);
  return ec == std::errc() && end == digits.data() + digits.size();
}

}  // namespace

// SCPI-1999 Vol 2 §21.8: <code>,"<description>[;<device-dependent info>]". The description
// may itself hold commas, so the reply is split quote-aware; whitespace around fields is allowed.
ErrorEntry parse_error_entry(std::string_view reply) {
  std::vector<std::string> fields;
  ErrorEntry entry;
  try {
    fields = split_list(reply);
    if (fields.size() != 2 || !read_code(fields[0], entry.code)) fail(reply);
    entry.message = parse_quoted_string(fields[1]);
  } catch (const IoError&) {
    fail(reply);
  }
  return entry;
}

}  // namespace zout
