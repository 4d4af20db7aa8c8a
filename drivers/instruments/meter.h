#pragma once
// The DMM role: DC volts (output level) and AC volts (ripple, true RMS).
// Readings come back as ScpiNumber so an overload (9.91E37) is never mistaken for a value.

#include <vector>

#include "drivers/scpi/response.h"

namespace zout {

class Meter {
 public:
  virtual ~Meter() = default;

  // DC volts on the range that holds `range_volts`, integrating over `nplc` power-line cycles.
  virtual void configure_dc_volts(double range_volts, double nplc) = 0;
  // AC volts (true RMS) on the range that holds `range_volts`.
  virtual void configure_ac_volts(double range_volts) = 0;

  // One reading in the configured function.
  virtual ScpiNumber read_one() = 0;
  // `count` readings taken back to back in the configured function.
  virtual std::vector<ScpiNumber> read_many(int count) = 0;
};

}  // namespace zout
