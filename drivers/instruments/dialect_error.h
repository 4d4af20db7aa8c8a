#pragma once
// A dialect file that cannot be used: missing, not JSON, or breaking a rule of the format.
// The message names the file and the JSON path of the offending item
// ("config/dialects/x.json: operations.set_current.send[0]: unknown placeholder ...").

#include <stdexcept>
#include <string>

namespace zout {

class DialectError : public std::runtime_error {
 public:
  explicit DialectError(const std::string& message) : std::runtime_error(message) {}
};

}  // namespace zout
