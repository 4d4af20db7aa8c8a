#pragma once
// The electronic load role: sinks a set current (CC mode) or acts as a set resistance.

namespace zout {

enum class LoadMode { constant_current, constant_resistance };

class Load {
 public:
  virtual ~Load() = default;

  virtual void select_mode(LoadMode mode) = 0;
  virtual void set_current_amps(double current_amps) = 0;
  virtual void set_resistance_ohms(double resistance_ohms) = 0;
  virtual void set_input(bool on) = 0;

  // What the load itself measures at its input now.
  virtual double measure_current_amps() = 0;
  virtual double measure_voltage_volts() = 0;
};

}  // namespace zout
