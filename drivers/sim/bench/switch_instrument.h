#pragma once
// The simulated switch (role "switch"): a one-of-N multiplexer connecting one slot of the
// panel to the bench. Channels are slot numbers. SCPI-1999 ROUTe subsystem:
//   ROUTe:CLOSe (@N)            connects slot N, opening any other (break before make);
//                               one channel only, else -221 Settings conflict
//   ROUTe:CLOSe? (@list)        1 or 0 per listed channel, comma-separated
//   ROUTe:CLOSe:STATe?          the closed channel as a list: "(@3)", or "(@)"
//   ROUTe:OPEN (@list)          opens the listed channels
//   ROUTe:OPEN? (@list)         1 or 0 per listed channel (1 = open)
//   ROUTe:OPEN:ALL              opens every channel
// A channel outside 1..slots is -222 Data out of range. Closing takes 10 ms (relay settling,
// common practice for signal relays). Power-on: slot 1 closed, so a bench whose daemon has
// no switch measures slot 1. *RST: all open.

#include "fixture.h"
#include "scpi_instrument.h"

namespace zout::sim {

class SwitchInstrument : public ScpiInstrument {
 public:
  static constexpr double relay_settle_s = 0.010;

  // `fixture` must outlive the instrument.
  explicit SwitchInstrument(Fixture& fixture);

  void reset(double now_s) override;

 private:
  std::vector<int> channels(const ParameterReader& parameters) const;

  Fixture& fixture_;
};

}  // namespace zout::sim
