#pragma once
// The same circuit as a SPICE netlist for ngspice (the outside reference of the tests and of
// scripts/bench-sim), and a parser for the `.meas` results ngspice prints in batch mode.
// Pure text: running ngspice is the caller's business.
//
// The netlist: `Vsrc src 0 SIN(offset amplitude f)` behind `Rsrc`; every capacitor (with IC=
// when an initial state is given) in series with its ESR resistor when it has one, its leakage
// resistor across; every diode `D… anode cathode DMk` with `.model DMk D(IS= N= RS=)` and its
// leakage resistor across; the filter; `Rmeter`; the load as `Iload out 0 DC I` (an ideal
// current source: it matches the simulated CC load only above min_operating_volts·(1 + 0.05))
// or `Rload`. The output terminal is node `out`.

#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/unit_simulation.h"

namespace zout::sim {

struct SpiceRun {
  double stop_time_s = 0.1;   // .tran stop time
  double max_step_s = 0.0;    // .tran maximum step; 0 = period / 200
  int measured_cycles = 5;    // .meas over the last this many drive cycles before stop_time_s
  // Capacitor voltages at t = 0 (same order as the simulation's state), written as IC= with
  // `uic`; empty = every capacitor starts discharged.
  std::vector<double> initial_state_volts;
  // When not empty, a .control block runs the analysis and writes time and v(out) to this
  // file with `wrdata` (the .meas lines are still evaluated).
  std::string waveform_path;
  double reltol = 1e-4;       // .options reltol (ngspice's default 1e-3 is loose for ripple)
};

// Measurements printed: out_avg, out_pp, out_max, out_min (over the measured cycles).
std::string spice_netlist(const CascadeCircuit& circuit, const DriveSettings& drive, const LoadSettings& load,
                          const SpiceRun& run);

// Every "name = value" line of ngspice's batch output whose name matches a `.meas` result
// (lower case), e.g. {"out_avg": 12.3}. Lines ngspice marks as failed are left out.
std::map<std::string, double> parse_spice_measurements(std::string_view output);

// The waveform ngspice wrote with `wrdata` (pairs of time and value per line).
struct SpiceSample {
  double time_s = 0.0;
  double volts = 0.0;
};
std::vector<SpiceSample> parse_spice_wrdata(std::string_view text);

}  // namespace zout::sim
