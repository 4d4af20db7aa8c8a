#pragma once
// An electronic load driven through a dialect of role "load" (see config/dialects/).

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/load.h"
#include "drivers/instruments/operation_runner.h"
#include "drivers/scpi/session.h"

namespace zout {

class ScpiLoad : public Load {
 public:
  // Throws DialectError unless `dialect` has role "load". `session` must outlive this.
  ScpiLoad(Session& session, Dialect dialect);

  void select_mode(LoadMode mode) override;
  // Setters throw std::invalid_argument for a non-finite value, before anything is sent.
  void set_current_amps(double current_amps) override;
  void set_resistance_ohms(double resistance_ohms) override;
  void set_input(bool on) override;

  // In SI units after the dialect's scale; an overload (9.91E37) is an IoError(protocol),
  // never a value.
  double measure_current_amps() override;
  double measure_voltage_volts() override;

 private:
  OperationRunner runner_;
};

}  // namespace zout
