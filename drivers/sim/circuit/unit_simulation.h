#pragma once
// One unit on the simulated bench, evolving in simulated time. The bench changes the
// drive and the load at the present time and advances time as the wall clock moves; the
// output follows the circuit's own cycle map, so settling after a step is physical.

#include <cstdint>
#include <memory>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/integration_options.h"

namespace zout::sim {

struct DriveSettings {
  double frequency_hz = 1000.0;
  double amplitude_volts_peak = 0.0;
  double offset_volts = 0.0;
  bool output_on = false;  // off: the generator output is 0 V behind its output resistance
};

enum class LoadMode { constant_current, constant_resistance };

struct LoadSettings {
  LoadMode mode = LoadMode::constant_current;
  double current_amps = 0.0;
  double resistance_ohms = 1e9;
  bool input_on = false;
  // Below this voltage a CC load cannot hold its current; it then behaves as the resistance
  // min_operating_volts / current_amps (so the current falls towards zero with the voltage).
  // Exactly: the current is held from 1.05·min_operating_volts up, the resistance applies below
  // 0.95·min_operating_volts, and a quadratic with a continuous slope joins them (load_current()
  // in cycle_map.h), so the circuit's Newton iterations stay well-posed.
  double min_operating_volts = 2.0;
};

// Work done by a UnitSimulation so far: counts, never wall time (for tests and benchmarks).
struct SimulationCounters {
  std::uint64_t cycle_integrations = 0;  // one-period (or partial-period) integrations
  std::uint64_t time_steps = 0;          // implicit time steps inside those
  std::uint64_t newton_iterations = 0;   // Newton iterations of the node equations
  std::uint64_t steady_state_solves = 0; // periodic steady states computed (not taken from cache)
  std::uint64_t transient_waypoints = 0; // states of the transient computed by integrating a cycle
};

struct OutputState {
  double dc_volts = 0.0;            // mean of the output over one drive cycle
  double ripple_pp_volts = 0.0;     // peak-to-peak of the output over that cycle
  double ripple_rms_volts = 0.0;    // RMS of (output − mean) over that cycle
  double load_current_amps = 0.0;   // what the electronic load sinks (cycle mean)
  double load_voltage_volts = 0.0;  // at the load's terminals (cycle mean)
};

// Every public function takes an internal lock, so one object may be used from several
// threads; copies share one state. Throws std::invalid_argument for an invalid circuit,
// invalid settings, or a time before time_s(). How it works: drivers/sim/circuit/README.md.
class UnitSimulation {
 public:
  // Starts at time 0 with every capacitor discharged, drive off, load off.
  explicit UnitSimulation(CascadeCircuit circuit);
  UnitSimulation(CascadeCircuit circuit, const IntegrationOptions& options);

  // New settings take effect at time_s(); the output then moves towards the new
  // periodic steady state along the cycle map.
  void set_drive(const DriveSettings& drive);
  void set_load(const LoadSettings& load);

  // Advances simulated time to `time_s` (>= time_s()). Long waits (hours of a soak at tens
  // of kHz) must cost O(log cycles), not one integration per cycle.
  void advance_to(double time_s);
  double time_s() const;

  // The output during the cycle in progress.
  OutputState output() const;
  // The periodic steady state the output is heading for under the present settings.
  OutputState steady_state() const;
  // Ground truth for tests: seconds from the last set_drive/set_load until the cycle-mean
  // output stays within tolerance_volts of its final value. Cycle k (counted from the change)
  // has mean dc_k; the answer is K/f for the first K after which every |dc_k − dc_final| <
  // tolerance_volts (0 when already within), infinity when the output never settles.
  double settle_time_s(double tolerance_volts) const;
  // Ground truth for benchmarks: the slowest time constant of the output's approach to the
  // present steady state, −T / ln ρ(M*), with ρ(M*) the spectral radius of the one-cycle
  // map's Jacobian at the steady state and T the drive period; infinity when ρ ≥ 1.
  double slowest_time_constant_s() const;

  const CascadeCircuit& circuit() const;
  SimulationCounters counters() const;

 private:
  struct State;
  std::shared_ptr<State> state_;
};

}  // namespace zout::sim
