#pragma once
// Component values of one simulated unit: an n-stage half-wave Cockcroft–Walton cascade
// driven through the generator's output resistance, optionally followed by an output RC
// filter, loaded by the DMM's input resistance and by the electronic load.
// This struct is the contract between the bench (which builds it from a sim config, a
// unit's serial number and its faults) and the circuit solver (which simulates it).

#include <limits>
#include <string>
#include <vector>

namespace zout::sim {

// A diode by the Shockley equation I = Is·(exp(V/(N·Vt)) − 1) with a series resistance,
// and an optional parallel leakage resistance (a leaky-diode fault) across its terminals.
// Vt = kT/q at 300.15 K (27 °C, ngspice's default temperature). The defaults are a small
// silicon diode: about 0.64 V at 1 mA.
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
  // Each capacitor is ESR in series with C, with its leakage resistance across both terminals.
  std::vector<double> esr_ohms;      // 2n, or empty = all 0 (ideal)
  std::vector<double> leakage_ohms;  // 2n, or empty = all infinity (none)
  // 2n diodes. Index 2k conducts from stage k's lower output-column node into its pumping
  // node (the "charging" diode); index 2k+1 from the pumping node up the output column.
  std::vector<DiodeModel> diodes;      // 2n, or empty = all DiodeModel{}
  // Nodes: the input (behind the source resistance), pumping nodes P0..P(n−1) and output-column
  // nodes S0..S(n−1), with S(−1) = ground. C(2k) joins P(k−1) (the input for k = 0) to P(k);
  // C(2k+1) joins S(k−1) to S(k); D(2k) conducts from S(k−1) into P(k); D(2k+1) from P(k) into
  // S(k). A capacitor's voltage is its upper node (P(k) or S(k)) minus its lower one.
  double source_output_ohms = 50.0;    // bench generators: 50 Ω (common practice); > 0
  // Output RC filter between the top of the output column and the output terminal: series R,
  // then C to ground. Both 0 = none (the output terminal is the top of the column).
  double filter_series_ohms = 0.0;
  double filter_capacitance_farads = 0.0;
  double meter_input_ohms = 10e6;      // DMM input resistance on DC volts (common practice)

  // A cascade with every capacitor C, no ESR, no leakage, default diodes, no filter.
  static CascadeCircuit uniform(int stages, double capacitance_farads);

  // Throws std::invalid_argument naming the first bad field (stages outside 1..kMaxStages,
  // a vector of the wrong length, a capacitance or resistance that is not positive, …).
  void validate() const;

  static constexpr int kMaxStages = 40;
};

}  // namespace zout::sim
