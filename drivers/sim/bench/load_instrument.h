#pragma once
// The simulated electronic load (role "load"), on the unit's output. SCPI-1999 SOURce,
// INPut and MEASure subsystems:
//   [SOURce:]FUNCtion[:MODE] CURRent|RESistance            constant current or resistance
//   [SOURce:]CURRent[:LEVel][:IMMediate][:AMPLitude]        0 .. 100 mA, DEF 0
//   [SOURce:]RESistance[:LEVel][:IMMediate][:AMPLitude]     1 Ω .. 1 GΩ, DEF 1 GΩ
//   INPut[:STATe] ON|OFF
//   MEASure[:SCALar]:CURRent[:DC]?, MEASure[:SCALar]:VOLTage[:DC]?   its own readback
// Every setting has its query; numeric queries take MIN/MAX/DEF. A readback is the mean over
// a 20 ms aperture of what the load sinks and sees. In CC mode the load cannot hold its
// current below 2 V (LoadSettings::min_operating_volts). *RST: CC, 0 A, 1 GΩ, input off.

#include "fixture.h"
#include "scpi_instrument.h"

namespace zout::sim {

class LoadInstrument : public ScpiInstrument {
 public:
  static constexpr double readback_aperture_s = 0.020;

  // `fixture` must outlive the instrument.
  explicit LoadInstrument(Fixture& fixture);

  void reset(double now_s) override;

  const LoadSettings& settings() const { return load_; }

 private:
  class Readback;

  void apply(double now_s);

  Fixture& fixture_;
  LoadSettings load_;
};

}  // namespace zout::sim
