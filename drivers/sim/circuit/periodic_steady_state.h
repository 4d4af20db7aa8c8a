#pragma once
// The periodic steady state of a driven cascade: the fixed point x* = Φ(x*) of the one-cycle
// map (cycle_map.h), found by the shooting–Newton method: Newton on F(x) = Φ(x) − x = 0 with
// the monodromy matrix M = ∂Φ/∂x from the step sensitivities, (I − M)·Δ = F(x), solved densely
// with Eigen.
//
// Globalisation: a trust region on max|Δ|. When the Newton step does not fit, the step is the
// affine model Φ(y) ≈ Φ(x) + M·(y − x) iterated K cycles, Δ = S_K·F(x) with S_K = I + M + … +
// M^(K−1), for the largest K that fits: fast modes are settled, slow ones moved along the
// physical transient, and K = 1 is one true cycle (always acceptable). A step is accepted when
// the affine model predicted F at the landing point to within half of |F(x)| (or F fell); the
// radius follows that mismatch. Start: the classical no-load state less estimated diode drops
// and each stage's share of the Cockcroft–Walton sag (CycleMap::loaded_guess).
//
// solve_periodic_steady_state is what `zout-sim --solve` prints.

#include <Eigen/Dense>

#include <vector>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/cycle_map.h"
#include "drivers/sim/circuit/integration_options.h"
#include "drivers/sim/circuit/unit_simulation.h"

namespace zout::sim {

struct PeriodicOptions {
  IntegrationOptions integration;
  // Converged when max |Φ(x) − x| ≤ tolerance_volts + relative_tolerance·(voltage scale,
  // 2n·(|Vpk| + |offset|)).
  double tolerance_volts = 1e-9;
  double relative_tolerance = 1e-10;
  int max_cycle_integrations = 400;  // gives up (converged = false) after this many
  // Largest first step (max over the capacitors of the change, volts); 0 = 2% of the scale.
  double initial_trust_volts = 0.0;
  // Starting state (capacitor voltages); empty = the ideal no-load state less typical drops.
  std::vector<double> initial_state;
};

struct PeriodicSolution {
  bool converged = false;
  int newton_iterations = 0;      // steps tried (Newton or trust-limited affine steps)
  int cycle_integrations = 0;     // one-period integrations, with sensitivities
  double residual_volts = 0.0;    // max |Φ(x) − x| at the returned state
  double frequency_hz = 0.0;
  // The output terminal over one cycle of the steady state.
  double dc_volts = 0.0;
  double ripple_pp_volts = 0.0;
  double ripple_rms_volts = 0.0;
  double peak_output_volts = 0.0;
  double trough_output_volts = 0.0;
  double load_current_amps = 0.0;
  double input_power_watts = 0.0;  // into the cascade, behind the source resistance
  // The state: capacitor voltages at phase 0 of the drive (order of capacitance_farads, then
  // the filter capacitor when there is one).
  std::vector<double> state_volts;
  // Cycles for the slowest mode of the transient to shrink by e: −1/ln|λ_max(M)|.
  double slowest_mode_cycles = 0.0;
};

// Throws std::invalid_argument for an invalid circuit or settings. A solve that does not
// converge returns converged = false with the best state found (it does not throw).
PeriodicSolution solve_periodic_steady_state(const CascadeCircuit& circuit, const DriveSettings& drive,
                                             const LoadSettings& load, const PeriodicOptions& options = {});

// The same on an existing cycle map, keeping what the transient needs.
struct PeriodicState {
  bool converged = false;
  int newton_iterations = 0;
  int cycle_integrations = 0;
  double residual_volts = 0.0;
  Eigen::VectorXd state;            // x*
  Eigen::MatrixXd monodromy;        // M at x*
  Eigen::RowVectorXd dc_gradient;   // ∂ dc / ∂x at x*
  CycleStatistics statistics;       // the steady cycle
};
PeriodicState find_periodic_state(CycleMap& map, const Eigen::VectorXd& guess, const PeriodicOptions& options = {});

// M^k and S_k = I + M + … + M^(k−1) by repeated squaring (O(log k) matrix products): the
// affine map x ↦ Mx + c iterated k times sends x to x + S_k·(Mx + c − x).
void power_and_sum(const Eigen::MatrixXd& m, unsigned long long k, Eigen::MatrixXd& power, Eigen::MatrixXd& sum);

// Spectral radius of M (largest |eigenvalue|).
double spectral_radius(const Eigen::MatrixXd& m);

}  // namespace zout::sim
