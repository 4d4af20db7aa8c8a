#pragma once
// A sim config that cannot be used: missing, not JSON, or breaking a rule. The message names
// the file and the JSON path of the offending item ("demo.json: dut.stages: ...").

#include <stdexcept>

namespace zout::sim {

class SimConfigError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace zout::sim
