#pragma once
// The simulated function generator (role "source"): a sine into the unit's input through its
// output resistance. SCPI-1999 SOURce and OUTPut subsystems; amplitude in volts peak.
//   [SOURce:]FUNCtion[:SHAPe] SINusoid                       (sine only: the circuit model's drive)
//   [SOURce:]FREQuency[:CW] / [SOURce:]FREQuency:FIXed      1 Hz .. 1 MHz, DEF 1 kHz
//   [SOURce:]VOLTage[:LEVel][:IMMediate][:AMPLitude]         0 .. 60 V peak, DEF 0.1 V
//   [SOURce:]VOLTage[:LEVel][:IMMediate]:OFFSet              -30 .. 30 V, DEF 0
//   OUTPut[:STATe] ON|OFF
// Every setting has its query; numeric queries take MIN/MAX/DEF. |offset| + amplitude must
// stay within 60 V (the output stage's swing), else -221 Settings conflict. *RST: sine,
// 1 kHz, 0.1 V, 0 V offset, output off.

#include "fixture.h"
#include "scpi_instrument.h"

namespace zout::sim {

class SourceInstrument : public ScpiInstrument {
 public:
  // `fixture` must outlive the instrument.
  explicit SourceInstrument(Fixture& fixture);

  void reset(double now_s) override;

  const DriveSettings& drive() const { return drive_; }

 private:
  void apply(double now_s);

  Fixture& fixture_;
  DriveSettings drive_;
};

}  // namespace zout::sim
