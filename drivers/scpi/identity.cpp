#include "identity.h"

#include <fmt/format.h>

#include "drivers/transport/io_error.h"

namespace zout {
namespace {

std::string_view trim(std::string_view text) {
  constexpr std::string_view space = " \t\r\n\v\f";
  const std::size_t first = text.find_first_not_of(space);
  if (first == std::string_view::npos) return {};
  return text.substr(first, text.find_last_not_of(space) - first + 1);
}

[[noreturn]] void fail(std::string_view reason, std::string_view reply) {
  throw IoError(IoErrorKind::protocol,
                fmt::format("expected a *IDN? reply of four comma-separated fields "
                            "(manufacturer,model,serial,firmware), got \"{}\" ({})",
                            escape_bytes(reply), reason));
}

}  // namespace

// IEEE 488.2 §10.14: the reply is arbitrary ASCII, so quotes carry no meaning here and the
// split is on plain commas.
Identity parse_identity(std::string_view reply) {
  const std::string_view t = trim(reply);
  std::string_view fields[3];
  std::string_view rest = t;
  for (std::string_view& field : fields) {
    const std::size_t comma = rest.find(',');
    if (comma == std::string_view::npos) fail("fewer than four fields", t);
    field = trim(rest.substr(0, comma));
    rest = rest.substr(comma + 1);
  }
  Identity id{std::string(fields[0]), std::string(fields[1]), std::string(fields[2]),
              std::string(trim(rest))};  // any further commas belong to the firmware field
  if (id.manufacturer.empty()) fail("empty manufacturer", t);
  if (id.model.empty()) fail("empty model", t);
  return id;
}

}  // namespace zout
