#pragma once
// A refused bench or plan file. The message always names the file, the JSON path and the
// rule: "config/plans/x.json: plan.load.steps_amps[3]: -2e-05 is negative; steps must be >= 0".

#include <stdexcept>
#include <string>

namespace zout {

class ConfigError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace zout
