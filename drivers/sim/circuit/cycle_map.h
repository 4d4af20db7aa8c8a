#pragma once
// The one-cycle map x ↦ Φ(x) of a driven cascade: integrates the circuit over one drive period
// from the capacitor voltages x at phase 0 and returns the capacitor voltages one period later,
// the statistics of the output over that period and, on request, the monodromy matrix ∂Φ/∂x
// and the gradient of the cycle-mean output with respect to x.
//
// Node equations: modified nodal analysis over the nodes listed in cascade_circuit.h (plus
// the filter's output node when it has a series resistance), with every capacitor replaced by
// its implicit companion model and every diode branch (Shockley junction in series with Rs,
// leakage across the terminals) solved implicitly for its current. The equations are solved by
// Newton's method at every implicit stage.
//
// Integration: the two-stage, L-stable, stiffly accurate SDIRK method of order 2 (Alexander,
// γ = 1 − 1/√2). Each stage is a backward-Euler-like solve of step γh, so the method needs no
// capacitor currents from the previous step: the state of the map is exactly the capacitor
// voltages. Trapezoidal rule would ring (it is not L-stable) when a diode switches; backward
// Euler is only first order; BDF2 and TR-BDF2 carry extra history.
//
// Not thread-safe: a CycleMap owns its work space. Use one per thread.

#include <Eigen/Dense>

#include <cstdint>
#include <memory>
#include <vector>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/integration_options.h"
#include "drivers/sim/circuit/unit_simulation.h"

namespace zout::sim {

// The output terminal over one drive cycle.
struct CycleStatistics {
  double dc_volts = 0.0;            // time mean
  double ripple_pp_volts = 0.0;     // largest minus smallest sample (step ends and stage points)
  double ripple_rms_volts = 0.0;    // RMS of (output − mean)
  double peak_volts = 0.0;          // largest sample
  double trough_volts = 0.0;        // smallest sample
  double load_current_amps = 0.0;   // mean current into the electronic load (0 when off)
  double load_voltage_volts = 0.0;  // mean voltage at the load's terminals (= dc_volts)
  double input_power_watts = 0.0;   // mean power into the cascade's input, behind the source resistance
};

struct CycleResult {
  Eigen::VectorXd end_state;        // capacitor voltages one period later: Φ(x)
  CycleStatistics statistics;
  Eigen::MatrixXd monodromy;        // ∂Φ/∂x, when sensitivities were asked for (else empty)
  Eigen::RowVectorXd dc_gradient;   // ∂ dc_volts / ∂x, when sensitivities were asked for
};

struct WaveformSample {
  double time_s = 0.0;              // from the start of the cycle
  double output_volts = 0.0;
  double input_volts = 0.0;         // the cascade's input node, behind the source resistance
};

// Work done so far by one CycleMap (for tests and benchmarks: counts, never wall time).
struct CycleMapCounters {
  std::uint64_t cycles = 0;             // full or partial cycles integrated
  std::uint64_t steps = 0;              // implicit time steps (two stages each)
  std::uint64_t newton_iterations = 0;  // Newton iterations of the node equations
  std::uint64_t step_subdivisions = 0;  // steps halved because Newton did not converge
};

class CycleMap {
 public:
  // Throws std::invalid_argument for an invalid circuit or settings (see validate_settings).
  CycleMap(const CascadeCircuit& circuit, const DriveSettings& drive, const LoadSettings& load,
           const IntegrationOptions& options = {});
  ~CycleMap();
  CycleMap(CycleMap&&) noexcept;
  CycleMap& operator=(CycleMap&&) noexcept;

  // Number of state variables: 2n capacitor voltages, plus the filter capacitor's voltage
  // (last) when the circuit has one. Order as in CascadeCircuit::capacitance_farads.
  int state_size() const;
  // Seconds per drive cycle. With the drive off the cycle is still 1/frequency_hz (1 ms when
  // frequency_hz is not positive): it is the bookkeeping period of the transient.
  double period_s() const;
  // A voltage that sets the scale of every state variable: 2n·(|Vpk| + |offset|), at least 1 V.
  double voltage_scale() const;
  // The classical no-load state with ideal diodes less an estimated drop of `diode_drop_volts`
  // per diode (the starting guess of the shooting method); all 0 with the drive off.
  Eigen::VectorXd ideal_state(double diode_drop_volts) const;
  // A diode drop estimate for ideal_state: the mean diode's drop at 100 µA.
  double typical_diode_drop_volts() const;
  // The starting guess of the shooting method: ideal_state less each stage's share of the
  // classical Cockcroft–Walton sag under the present load (Kuffel, Zaengl & Kuffel, High
  // Voltage Engineering: Fundamentals, §2.2: stage k counted from the output end loses
  // (I/fC)·(k + n(n+1) − k(k+1)); the shares sum to (I/fC)(2n³/3 + n²/2 − n/6)).
  Eigen::VectorXd loaded_guess() const;

  // Integrates one full cycle from `start`. `waveform`, when given, receives the output and
  // input at every step end.
  CycleResult run(const Eigen::VectorXd& start, bool sensitivities,
                  std::vector<WaveformSample>* waveform = nullptr);
  // Integrates part of a cycle: from `start` at phase `from_fraction` of the cycle to phase
  // `to_fraction` (0 ≤ from ≤ to ≤ 1; fractions of the period in time). Uses the cycle's grid,
  // with the first and last steps shortened to land exactly on the two phases.
  Eigen::VectorXd advance_within_cycle(const Eigen::VectorXd& start, double from_fraction, double to_fraction);

  const CycleMapCounters& counters() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

// Throws std::invalid_argument when the drive or load settings cannot be simulated (with the
// drive on: frequency not positive; any NaN; a CR load with resistance not positive …).
void validate_settings(const DriveSettings& drive, const LoadSettings& load);

// The electronic load's current at terminal voltage v and its derivative. A CC load holds its
// current from min_operating_volts·(1 + w) upwards; below min_operating_volts·(1 − w) it is the
// resistance min_operating_volts/current_amps; in between a quadratic joins the two with a
// continuous slope (w = kLoadKneeWidth). Off: 0.
struct LoadCurrent {
  double amps = 0.0;
  double siemens = 0.0;  // d amps / d volts
};
LoadCurrent load_current(const LoadSettings& load, double volts);
inline constexpr double kLoadKneeWidth = 0.05;

// Thermal voltage kT/q at ngspice's default 27 °C, with ngspice's constants.
inline constexpr double kThermalVolts = 1.38064852e-23 * 300.15 / 1.6021766208e-19;

}  // namespace zout::sim
