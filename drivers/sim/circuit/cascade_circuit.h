#pragma once
// Component values of one simulated unit: an n-stage half-wave Cockcroft–Walton cascade
// driven through the generator's output resistance, optionally followed by an output RC
// filter, loaded by the DMM's input resistance and by the electronic load.
// This struct is the contract between the bench (which builds it from a sim config, a
// unit's serial number and its faults) and the circuit solver (which simulates it).

#include <limits>
#include <vector>

namespace zout::sim {

// A diode by the Shockley equation I = Is·(exp(V/(N·Vt)) − 1) with a series resistance,
// and an optional parallel leakage resistance (a leaky-diode fault).
struct DiodeModel {
  double saturation_current_amps = 1e-9;
  double emission_coefficient = 1.8;
  double series_ohms = 1.0;
  double leakage_ohms = std::numeric_limits<double>::infinity();  // infinity = no leakage
};

struct CascadeCircuit {
  int stages = 1;  // n: 2n capacitors and 2n diodes
  // 2n capacitors. Index 2k is stage k's series ("pumping") capacitor, fed from the input
  // side; index 2k+1 is stage k's smoothing capacitor on the grounded output column.
  std::vector<double> capacitance_farads;
  std::vector<double> esr_ohms;      // 2n; 0 = ideal
  std::vector<double> leakage_ohms;  // 2n; infinity = none
  // 2n diodes. Index 2k conducts from stage k's lower output-column node into its pumping
  // node (the "charging" diode); index 2k+1 from the pumping node up the output column.
  std::vector<DiodeModel> diodes;
  double source_output_ohms = 50.0;    // bench generators: 50 Ω (common practice)
  double filter_series_ohms = 0.0;     // output RC filter; 0 with filter_capacitance 0 = none
  double filter_capacitance_farads = 0.0;
  double meter_input_ohms = 10e6;      // DMM input resistance on DC volts (common practice)

  // A cascade with every capacitor C, ideal-ish defaults elsewhere.
  static CascadeCircuit uniform(int stages, double capacitance_farads);
};

}  // namespace zout::sim
