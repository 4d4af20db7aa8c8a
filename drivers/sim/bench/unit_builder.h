#pragma once
// Builds the circuit of one unit from the sim config, its serial number and its fault. The
// serial number seeds the unit's component spread (FNV-1a of the serial, then SeededRandom),
// so the same serial always gives the same unit, on every run and platform.
//
// Spread (our own choice of plausible production figures):
//   cascade and filter capacitors  C·(1 + e), e Gaussian with σ = tolerance/2, cut at ±tolerance
//   diode saturation current       Is·exp(0.25·g)  (log-normal: junctions vary by tens of %)
//   diode emission coefficient     N·(1 + 0.02·g)
//   diode series resistance        Rs·(1 + 0.1·g), at least 0
//   filter resistor                R·(1 + 0.01·e), e cut at ±1 % (a 1 % metal-film part)
// with g standard normal. Faults (UnitFault) then change one part, chosen by the serial.

#include <string>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "sim_config.h"

namespace zout::sim {

// The circuit of the unit `serial` with `fault`, as wired on this bench (the generator's
// output resistance and the DMM's input resistance from `config`).
CascadeCircuit build_unit_circuit(const SimConfig& config, const std::string& serial, UnitFault fault);

}  // namespace zout::sim
