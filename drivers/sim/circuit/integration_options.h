#pragma once
// How one drive cycle is integrated. The grid is fixed in phase, so every cycle under the same
// settings is the same map and the periodic steady state is a true fixed point of it.

namespace zout::sim {

struct IntegrationOptions {
  // Implicit time steps per drive cycle (each step is two implicit stages, see cycle_map.h).
  int steps_per_cycle = 256;
  // Clusters the steps near the source's peaks, where the diodes conduct: the phase of step
  // boundary s ∈ [0, 1) is θ = 2πs + b·sin(4πs), so steps near the peaks are (1 − 2b)/(1 + 2b)
  // as long as near the zero crossings. 0 = uniform; must stay below 0.5.
  double peak_clustering = 0.25;
};

}  // namespace zout::sim
