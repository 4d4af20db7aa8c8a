#pragma once
// What the simulated instruments are wired to: the generator drives it, the load and the
// DMM sit on its output, and the switch picks which slot of the panel is connected. The
// instruments know only this interface; Panel implements it with the circuit simulation.
// Every call carries the simulated time (seconds since the bench started, never decreasing).

#include <optional>

#include "drivers/sim/circuit/unit_simulation.h"

namespace zout::sim {

class Fixture {
 public:
  virtual ~Fixture() = default;

  // The generator's and the load's settings, taking effect at `now_s`.
  virtual void set_drive(const DriveSettings& drive, double now_s) = 0;
  virtual void set_load(const LoadSettings& load, double now_s) = 0;

  // The output of the connected unit at `now_s` (cycle mean, ripple, the load's current and
  // voltage); all zero when no unit is connected (an open output).
  virtual OutputState output(double now_s) = 0;

  // The switch: connects slot `slot` (1-based) and disconnects any other; opens everything.
  virtual void close_slot(int slot, double now_s) = 0;
  virtual void open_all(double now_s) = 0;
  virtual std::optional<int> closed_slot() const = 0;
  virtual int slot_count() const = 0;
};

}  // namespace zout::sim
