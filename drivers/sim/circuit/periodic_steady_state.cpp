#include "periodic_steady_state.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

namespace zout::sim {

namespace {


double norm_inf(const Eigen::VectorXd& v) { return v.size() == 0 ? 0.0 : v.lpNorm<Eigen::Infinity>(); }

// Physical box: no capacitor of the cascade can hold more than the scale voltage.
Eigen::VectorXd clamp_state(const Eigen::VectorXd& x, double bound) {
  return x.cwiseMax(-bound).cwiseMin(bound);
}

struct Evaluated {
  Eigen::VectorXd x;
  CycleResult cycle;
  Eigen::VectorXd residual;  // Φ(x) − x
  double size = 0.0;         // max |Φ(x) − x|
};

// A trial point whose cycle cannot be integrated (Newton fails even on halved steps) counts as
// an infinitely bad step; the starting point is not a trial and rethrows.
Evaluated evaluate(CycleMap& map, const Eigen::VectorXd& x, int& integrations, bool trial = true) {
  Evaluated e;
  e.x = x;
  ++integrations;
  try {
    e.cycle = map.run(x, true);
  } catch (const std::runtime_error&) {
    if (!trial) throw;
    e.size = std::numeric_limits<double>::infinity();
    return e;
  }
  e.residual = e.cycle.end_state - x;
  e.size = norm_inf(e.residual);
  if (!std::isfinite(e.size)) e.size = std::numeric_limits<double>::infinity();
  return e;
}

Eigen::VectorXd newton_step(const Evaluated& at) {
  const Eigen::Index n = at.x.size();
  const Eigen::MatrixXd a = Eigen::MatrixXd::Identity(n, n) - at.cycle.monodromy;
  return a.colPivHouseholderQr().solve(at.residual);
}

// The step within the trust radius: the Newton step when it fits; else the affine model
// iterated K cycles, x + S_K·(Φ(x) − x), with the largest K whose step fits (at least K = 1,
// which is Φ(x) itself and always allowed).
Eigen::VectorXd trusted_step(const Evaluated& at, double radius) {
  Eigen::VectorXd step = newton_step(at);
  if (step.allFinite() && norm_inf(step) <= radius) return step;
  Eigen::MatrixXd power;
  Eigen::MatrixXd sum;
  unsigned long long fits = 1;
  unsigned long long too_long = 0;  // 0: not found yet
  for (unsigned long long k = 2; k <= (1ULL << 40); k *= 2) {
    power_and_sum(at.cycle.monodromy, k, power, sum);
    if (norm_inf(sum * at.residual) > radius) {
      too_long = k;
      break;
    }
    fits = k;
  }
  if (too_long != 0) {
    while (too_long - fits > 1) {
      const unsigned long long middle = fits + (too_long - fits) / 2;
      power_and_sum(at.cycle.monodromy, middle, power, sum);
      (norm_inf(sum * at.residual) > radius ? too_long : fits) = middle;
    }
  }
  if (fits == 1) return at.residual;
  power_and_sum(at.cycle.monodromy, fits, power, sum);
  return sum * at.residual;
}

}  // namespace

void power_and_sum(const Eigen::MatrixXd& m, unsigned long long k, Eigen::MatrixXd& power, Eigen::MatrixXd& sum) {
  const Eigen::Index n = m.rows();
  power = Eigen::MatrixXd::Identity(n, n);
  sum = Eigen::MatrixXd::Zero(n, n);
  Eigen::MatrixXd base_power = m;                              // M^(2^i)
  Eigen::MatrixXd base_sum = Eigen::MatrixXd::Identity(n, n);  // S_(2^i)
  Eigen::MatrixXd scratch(n, n);
  while (k > 0) {
    if (k & 1ULL) {
      scratch.noalias() = power * base_sum;  // S_(a+b) = S_a + M^a·S_b
      sum += scratch;
      scratch.noalias() = power * base_power;
      power = scratch;
    }
    k >>= 1;
    if (k == 0) break;
    scratch.noalias() = base_power * base_sum;
    base_sum += scratch;
    scratch.noalias() = base_power * base_power;
    base_power = scratch;
  }
}

double spectral_radius(const Eigen::MatrixXd& m) {
  if (m.size() == 0) return 0.0;
  Eigen::EigenSolver<Eigen::MatrixXd> solver(m, false);
  if (solver.info() != Eigen::Success) return std::numeric_limits<double>::quiet_NaN();
  return solver.eigenvalues().cwiseAbs().maxCoeff();
}

PeriodicState find_periodic_state(CycleMap& map, const Eigen::VectorXd& guess, const PeriodicOptions& options) {
  const double tolerance = options.tolerance_volts + options.relative_tolerance * map.voltage_scale();
  const double bound = map.voltage_scale() + 1.0;
  PeriodicState out;
  int integrations = 0;
  int iterations = 0;
  Evaluated at = evaluate(map, clamp_state(guess, bound), integrations, false);
  double radius = options.initial_trust_volts > 0.0 ? options.initial_trust_volts
                                                    : std::max(0.1, 0.02 * map.voltage_scale());
  while (at.size > tolerance && integrations < options.max_cycle_integrations) {
    const Eigen::VectorXd step = trusted_step(at, radius);
    // The affine model's Φ(y) − y at the landing point y = x + step.
    const Eigen::VectorXd predicted = at.residual + at.cycle.monodromy * step - step;
    ++iterations;
    Evaluated next = evaluate(map, clamp_state(at.x + step, bound), integrations);
    const double mismatch = std::isfinite(next.size) ? norm_inf(next.residual - predicted) / at.size
                                                     : std::numeric_limits<double>::infinity();
    const double length = norm_inf(step);
    const bool one_cycle = norm_inf(step - at.residual) <= 1e-12 * (1.0 + length);  // x + F = Φ(x): exact
    // The affine model's error grows about as the square of the step: aim at a mismatch of 0.2.
    const double resize = mismatch > 0.0 ? std::sqrt(0.2 / mismatch) : 4.0;  // 0 when infinite
    if (std::isfinite(next.size) && (one_cycle || mismatch <= 0.5 || next.size < at.size)) {
      at = std::move(next);
      radius = std::max(radius, length * std::clamp(resize, 0.5, 4.0));
    } else {
      radius = length * std::clamp(resize, 0.1, 0.5);
    }
    radius = std::max(radius, 1e-9);
  }
  out.converged = at.size <= tolerance;
  out.newton_iterations = iterations;
  out.cycle_integrations = integrations;
  out.residual_volts = at.size;
  out.state = at.x;
  out.monodromy = at.cycle.monodromy;
  out.dc_gradient = at.cycle.dc_gradient;
  out.statistics = at.cycle.statistics;
  return out;
}

PeriodicSolution solve_periodic_steady_state(const CascadeCircuit& circuit, const DriveSettings& drive,
                                             const LoadSettings& load, const PeriodicOptions& options) {
  CycleMap map(circuit, drive, load, options.integration);
  Eigen::VectorXd guess;
  if (options.initial_state.empty()) {
    guess = map.loaded_guess();
  } else {
    if (static_cast<int>(options.initial_state.size()) != map.state_size()) {
      throw std::invalid_argument("periodic steady state: initial_state must have " +
                                  std::to_string(map.state_size()) + " entries");
    }
    guess = Eigen::Map<const Eigen::VectorXd>(options.initial_state.data(), map.state_size());
  }
  const PeriodicState found = find_periodic_state(map, guess, options);
  PeriodicSolution solution;
  solution.converged = found.converged;
  solution.newton_iterations = found.newton_iterations;
  solution.cycle_integrations = found.cycle_integrations;
  solution.residual_volts = found.residual_volts;
  solution.frequency_hz = 1.0 / map.period_s();
  solution.dc_volts = found.statistics.dc_volts;
  solution.ripple_pp_volts = found.statistics.ripple_pp_volts;
  solution.ripple_rms_volts = found.statistics.ripple_rms_volts;
  solution.peak_output_volts = found.statistics.peak_volts;
  solution.trough_output_volts = found.statistics.trough_volts;
  solution.load_current_amps = found.statistics.load_current_amps;
  solution.input_power_watts = found.statistics.input_power_watts;
  solution.state_volts.assign(found.state.data(), found.state.data() + found.state.size());
  const double radius = spectral_radius(found.monodromy);
  if (radius <= 0.0) {
    solution.slowest_mode_cycles = 0.0;
  } else {
    solution.slowest_mode_cycles = radius < 1.0 ? -1.0 / std::log(radius) : std::numeric_limits<double>::infinity();
  }
  return solution;
}

}  // namespace zout::sim
