#include "unit_simulation.h"

#include <Eigen/Dense>

#include <algorithm>
#include <cmath>
#include <limits>
#include <mutex>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "drivers/sim/circuit/cycle_map.h"
#include "drivers/sim/circuit/periodic_steady_state.h"

namespace zout::sim {

namespace {

// An envelope step of K cycles is accepted when the affine model's position error, estimated
// as (K/2)·|F(y) − M^K·F(x)|∞ with F = Φ − identity, is within this fraction of the step.
constexpr double kEnvelopeRelative = 0.01;
// The linearisation about the steady state takes over once it predicts the next cycle's
// change of the state, F(x) ≈ (M* − I)(x − x*), to within this fraction.
constexpr double kLinearRelative = 0.02;
constexpr double kFloorRelative = 1e-9;  // absolute floor of both tests, × the voltage scale
constexpr long long kMaxSpan = 1LL << 50;
constexpr std::size_t kMaxWaypoints = 20000;
constexpr std::size_t kSteadyCacheSize = 8;
constexpr long long kScanPoints = 4096;  // samples per level of the settle-time scan

double norm_inf(const Eigen::VectorXd& v) { return v.size() == 0 ? 0.0 : v.lpNorm<Eigen::Infinity>(); }

bool same(const DriveSettings& a, const DriveSettings& b) {
  return a.frequency_hz == b.frequency_hz && a.amplitude_volts_peak == b.amplitude_volts_peak &&
         a.offset_volts == b.offset_volts && a.output_on == b.output_on;
}

bool same(const LoadSettings& a, const LoadSettings& b) {
  return a.mode == b.mode && a.current_amps == b.current_amps && a.resistance_ohms == b.resistance_ohms &&
         a.input_on == b.input_on && a.min_operating_volts == b.min_operating_volts;
}

OutputState to_output(const CycleStatistics& s) {
  OutputState out;
  out.dc_volts = s.dc_volts;
  out.ripple_pp_volts = s.ripple_pp_volts;
  out.ripple_rms_volts = s.ripple_rms_volts;
  out.load_current_amps = s.load_current_amps;
  out.load_voltage_volts = s.load_voltage_volts;
  return out;
}

// The periodic steady state of one set of settings and its linearisation.
struct SteadyState {
  DriveSettings drive;
  LoadSettings load;
  bool converged = false;
  Eigen::VectorXd x;
  Eigen::MatrixXd m;
  Eigen::RowVectorXd g;  // ∂ dc / ∂x
  CycleStatistics stats;
  mutable std::vector<Eigen::MatrixXd> powers;  // M^(2^i), grown on demand

  const Eigen::MatrixXd& power_of_two(std::size_t i) const {
    if (powers.empty()) powers.push_back(m);
    while (powers.size() <= i) powers.push_back(powers.back() * powers.back());
    return powers[i];
  }
  // M^j·v with O(log j) matrix–vector products.
  Eigen::VectorXd apply_power(unsigned long long j, Eigen::VectorXd v) const {
    for (std::size_t bit = 0; j != 0; ++bit, j >>= 1) {
      if (j & 1ULL) v = power_of_two(bit) * v;
    }
    return v;
  }
};

// A state of the transient at the start of cycle `cycle` (counted from the last change).
struct Waypoint {
  long long cycle = 0;
  Eigen::VectorXd x;
  bool evaluated = false;     // the cycle from x has been integrated (with sensitivities)
  Eigen::VectorXd residual;   // F(x) = Φ(x) − x
  Eigen::MatrixXd m;          // ∂Φ/∂x at x
  Eigen::RowVectorXd g;       // ∂ dc / ∂x at x
  CycleStatistics stats;      // of the cycle from x (exact)
  long long span = 0;         // cycles up to the next waypoint (affine model of this one)
};

// Everything since the last set_drive/set_load. The generator's phase runs on across every
// change: cycle k of the epoch is [origin_s + k·T, origin_s + (k+1)·T), and the change at
// start_s falls inside cycle 0 (at phase start_fraction). The path starts at the first cycle
// boundary at or after the change: cycle 0 when the change is on a boundary, else cycle 1.
struct Epoch {
  double origin_s = 0.0;
  double start_s = 0.0;
  double start_fraction = 0.0;
  Eigen::VectorXd change_state;  // the state at start_s
  DriveSettings drive;
  LoadSettings load;
  std::unique_ptr<CycleMap> map;
  std::shared_ptr<const SteadyState> steady;
  std::vector<Waypoint> path;  // path[0]: the first cycle boundary at or after the change
  bool linear = false;         // from path.back() on: x* + M*^j·(x − x*)
  long long next_span = 1;
  long long cached_cycle = -1;
  CycleStatistics cached_stats;
};

}  // namespace

struct UnitSimulation::State {
  mutable std::mutex mutex;
  CascadeCircuit circuit;
  IntegrationOptions options;
  double now_s = 0.0;
  Epoch epoch;
  std::vector<std::shared_ptr<const SteadyState>> steady_cache;
  CycleMapCounters retired;  // cycle maps of past epochs
  std::uint64_t steady_solves = 0;
  std::uint64_t waypoints = 0;

  State(CascadeCircuit c, const IntegrationOptions& o) : circuit(std::move(c)), options(o) {
    circuit.validate();
    DriveSettings drive;
    LoadSettings load;
    start_epoch(drive, load, std::nullopt);
  }

  double scale() const { return epoch.map->voltage_scale(); }
  double period() const { return epoch.map->period_s(); }

  // A new epoch at now_s from state x0 (all zero for the first): the phase of the generator
  // at now_s is kept, so cycle boundaries stay where the generator crosses phase 0.
  void start_epoch(const DriveSettings& drive, const LoadSettings& load, std::optional<Eigen::VectorXd> x0) {
    Epoch next;
    next.drive = drive;
    next.load = load;
    next.map = std::make_unique<CycleMap>(circuit, drive, load, options);
    next.start_s = now_s;
    double phase = 0.0;  // fraction of a cycle the generator is into at now_s
    if (epoch.map) {
      const double cycles = (now_s - epoch.origin_s) / period();
      phase = cycles - std::floor(cycles + 1e-9);
      if (phase < 1e-9 || phase > 1.0 - 1e-9) phase = 0.0;
    }
    next.start_fraction = phase;
    next.origin_s = now_s - phase * next.map->period_s();
    next.change_state = x0 ? std::move(*x0) : Eigen::VectorXd::Zero(next.map->state_size());
    Waypoint first;
    if (phase > 0.0) {
      first.cycle = 1;
      first.x = next.map->advance_within_cycle(next.change_state, phase, 1.0);
    } else {
      first.x = next.change_state;
    }
    next.path.push_back(std::move(first));
    if (epoch.map) {
      const CycleMapCounters& c = epoch.map->counters();
      retired.cycles += c.cycles;
      retired.steps += c.steps;
      retired.newton_iterations += c.newton_iterations;
      retired.step_subdivisions += c.step_subdivisions;
    }
    epoch = std::move(next);
  }

  // The cycle in progress at time t and how far into it t is (0..1).
  long long cycle_at(double t) const {
    const double cycles = (t - epoch.origin_s) / period();
    return std::max(0LL, static_cast<long long>(std::floor(cycles + 1e-9)));
  }
  double fraction_at(double t, long long cycle) const {
    return std::clamp((t - epoch.origin_s) / period() - static_cast<double>(cycle), 0.0, 1.0);
  }
  long long first_cycle() const { return epoch.path.front().cycle; }

  void evaluate(Waypoint& w) {
    if (w.evaluated) return;
    CycleResult r = epoch.map->run(w.x, true);
    w.residual = r.end_state - w.x;
    w.m = std::move(r.monodromy);
    w.g = std::move(r.dc_gradient);
    w.stats = r.statistics;
    w.evaluated = true;
    ++waypoints;
  }

  const SteadyState& steady() {
    if (epoch.steady) return *epoch.steady;
    for (const auto& cached : steady_cache) {
      if (same(cached->drive, epoch.drive) && same(cached->load, epoch.load)) {
        epoch.steady = cached;
        return *cached;
      }
    }
    PeriodicOptions o;
    o.integration = options;
    PeriodicState found = find_periodic_state(*epoch.map, epoch.map->loaded_guess(), o);
    if (!found.converged) {  // second chance: start from the state at the change
      PeriodicState again = find_periodic_state(*epoch.map, epoch.path.front().x, o);
      if (again.residual_volts < found.residual_volts) found = std::move(again);
    }
    ++steady_solves;
    auto s = std::make_shared<SteadyState>();
    s->drive = epoch.drive;
    s->load = epoch.load;
    s->converged = found.converged;
    s->x = std::move(found.state);
    s->m = std::move(found.monodromy);
    s->g = std::move(found.dc_gradient);
    s->stats = found.statistics;
    if (steady_cache.size() >= kSteadyCacheSize) steady_cache.erase(steady_cache.begin());
    steady_cache.push_back(s);
    epoch.steady = s;
    return *s;
  }

  // The criterion for the linear regime: the linearisation about x* predicts the next cycle's
  // change of the state to within kLinearRelative (or the state is at x* to the floor).
  bool in_linear_regime(const Waypoint& w, const SteadyState& s) const {
    if (!s.converged) return false;
    const double floor = kFloorRelative * scale();
    const Eigen::VectorXd d = w.x - s.x;
    if (norm_inf(d) <= floor) return true;
    const Eigen::VectorXd predicted = s.m * d - d;
    return norm_inf(w.residual - predicted) <= kLinearRelative * norm_inf(w.residual) + floor;
  }

  // Adds the next waypoint: K = 1 is one true cycle (exact); larger K iterate the affine model
  // of the last waypoint K times and are kept only when the model's error is small.
  void extend() {
    if (epoch.path.size() >= kMaxWaypoints) {
      throw std::runtime_error("unit simulation: transient needs more than " + std::to_string(kMaxWaypoints) +
                               " waypoints");
    }
    evaluate(epoch.path.back());
    const SteadyState& s = steady();
    if (in_linear_regime(epoch.path.back(), s)) {
      epoch.linear = true;
      return;
    }
    const Waypoint& w = epoch.path.back();
    const double floor = kFloorRelative * scale();
    long long k = std::clamp(epoch.next_span, 1LL, kMaxSpan);
    Eigen::MatrixXd power;
    Eigen::MatrixXd sum;
    for (;;) {
      Waypoint next;
      next.cycle = w.cycle + k;
      Eigen::VectorXd predicted;  // the affine model's F at the landing point
      if (k == 1) {
        next.x = w.x + w.residual;
        predicted = w.m * w.residual;
      } else {
        power_and_sum(w.m, static_cast<unsigned long long>(k), power, sum);
        next.x = w.x + sum * w.residual;
        predicted = power * w.residual;
      }
      double error = std::numeric_limits<double>::infinity();
      if (next.x.allFinite()) {
        try {
          evaluate(next);
          error = 0.5 * static_cast<double>(k) * norm_inf(next.residual - predicted);
        } catch (const std::runtime_error&) {
          if (k == 1) throw;  // the true map itself failed
        }
      }
      const double allowed = kEnvelopeRelative * norm_inf(next.x - w.x) + floor;
      const double resize = error > 0.0 ? 0.9 * std::sqrt(allowed / error) : 4.0;
      if (k == 1 || error <= allowed) {
        epoch.path.back().span = k;
        epoch.next_span = std::clamp(static_cast<long long>(static_cast<double>(k) * std::clamp(resize, 0.5, 4.0)),
                                     1LL, kMaxSpan);
        epoch.path.push_back(std::move(next));
        return;
      }
      k = std::max(1LL, static_cast<long long>(static_cast<double>(k) * std::clamp(resize, 0.1, 0.5)));
    }
  }

  void ensure_covers(long long cycle) {
    while (!epoch.linear && epoch.path.back().cycle < cycle) extend();
  }

  // The last waypoint at or before `cycle` (the path must cover it).
  std::size_t waypoint_index(long long cycle) const {
    const auto it = std::upper_bound(epoch.path.begin(), epoch.path.end(), cycle,
                                     [](long long c, const Waypoint& w) { return c < w.cycle; });
    return static_cast<std::size_t>(it - epoch.path.begin()) - 1;
  }

  Eigen::VectorXd state_at_cycle(long long cycle) {
    ensure_covers(cycle);
    const Waypoint& last = epoch.path.back();
    if (epoch.linear && cycle >= last.cycle) {
      const SteadyState& s = steady();
      return s.x + s.apply_power(static_cast<unsigned long long>(cycle - last.cycle), last.x - s.x);
    }
    const Waypoint& w = epoch.path[waypoint_index(cycle)];
    const long long j = cycle - w.cycle;
    if (j == 0) return w.x;
    if (j == 1) return w.x + w.residual;
    Eigen::MatrixXd power;
    Eigen::MatrixXd sum;
    power_and_sum(w.m, static_cast<unsigned long long>(j), power, sum);
    return w.x + sum * w.residual;
  }

  // Statistics of cycle `cycle`. The partial cycle in which the settings changed reports the
  // first full cycle after the change (it anticipates the new settings by under one cycle).
  CycleStatistics statistics_of(long long cycle) {
    cycle = std::max(cycle, first_cycle());
    ensure_covers(cycle);
    Waypoint& w = epoch.path[waypoint_index(cycle)];
    if (w.cycle == cycle) {
      evaluate(w);
      return w.stats;
    }
    if (epoch.cached_cycle != cycle) {
      epoch.cached_stats = epoch.map->run(state_at_cycle(cycle), false).statistics;
      epoch.cached_cycle = cycle;
    }
    return epoch.cached_stats;
  }

  Eigen::VectorXd state_at_time(double t) {
    const long long cycle = cycle_at(t);
    const double fraction = fraction_at(t, cycle);
    if (cycle < first_cycle()) {  // still in the cycle of the change
      return epoch.map->advance_within_cycle(epoch.change_state, epoch.start_fraction, fraction);
    }
    Eigen::VectorXd x = state_at_cycle(cycle);
    if (fraction > 1e-12) x = epoch.map->advance_within_cycle(x, 0.0, fraction);
    return x;
  }

  void change(const DriveSettings& drive, const LoadSettings& load) {
    validate_settings(drive, load);
    Eigen::VectorXd x = state_at_time(now_s);
    start_epoch(drive, load, std::move(x));
  }

  // Last j in [first, end) with |c0 + g·(z_j or s_j)| ≥ tol along z_(j+1) = M·z_j,
  // s_(j+1) = s_j + z_j (z, s given at `first`); −1 when none. Samples kScanPoints points per
  // level and refines the last interval that held a violation.
  static long long last_violation(const Eigen::MatrixXd& m, const Eigen::RowVectorXd& g, double c0, bool use_sum,
                                  double tol, long long first, long long end, Eigen::VectorXd z, Eigen::VectorXd s) {
    if (end <= first) return -1;
    const long long stride = std::max(1LL, (end - first + kScanPoints - 1) / kScanPoints);
    Eigen::MatrixXd power;
    Eigen::MatrixXd sum;
    power_and_sum(m, static_cast<unsigned long long>(stride), power, sum);
    long long found = -1;
    Eigen::VectorXd found_z;
    Eigen::VectorXd found_s;
    for (long long j = first; j < end; j += stride) {
      const double f = c0 + g.dot(use_sum ? s : z);
      if (std::abs(f) >= tol) {
        found = j;
        found_z = z;
        found_s = s;
      }
      s += sum * z;
      z = power * z;
    }
    if (found < 0 || stride == 1) return found;
    const long long refined =
        last_violation(m, g, c0, use_sum, tol, found, std::min(found + stride, end), found_z, found_s);
    return std::max(found, refined);
  }

  double settle_time(double tol) {
    const SteadyState& s = steady();
    while (!epoch.linear) {
      if (epoch.path.size() >= kMaxWaypoints) return std::numeric_limits<double>::infinity();
      extend();
    }
    const double final_dc = s.stats.dc_volts;
    Waypoint& last = epoch.path.back();
    evaluate(last);
    // The linear tail: dc_j − dc* ≈ g*·M*^j·d for j ≥ 1 (cycle 0 of the tail is exact).
    const Eigen::VectorXd d = last.x - s.x;
    std::size_t bits = 0;
    const double g_norm = s.g.lpNorm<1>();
    for (;; ++bits) {
      if (bits > 62) return std::numeric_limits<double>::infinity();
      const Eigen::MatrixXd& p = s.power_of_two(bits);
      if (g_norm * norm_inf(p * d) < 0.25 * tol && p.lpNorm<Eigen::Infinity>() <= 0.5) break;
    }
    const long long tail_end = 1LL << bits;
    long long found = last_violation(s.m, s.g, 0.0, false, tol, 1, tail_end, s.m * d, Eigen::VectorXd::Zero(d.size()));
    if (found < 0 && std::abs(last.stats.dc_volts - final_dc) >= tol) found = 0;
    if (found >= 0) return seconds_until_cycle(last.cycle + found + 1);
    // The path before it, latest first: dc_j ≈ dc_w + g_w·S_j·F_w inside a waypoint's span.
    for (std::size_t i = epoch.path.size() - 1; i-- > 0;) {
      const Waypoint& w = epoch.path[i];
      found = last_violation(w.m, w.g, w.stats.dc_volts - final_dc, true, tol, 1, w.span, w.m * w.residual,
                             w.residual);
      if (found < 0 && std::abs(w.stats.dc_volts - final_dc) >= tol) found = 0;
      if (found >= 0) return seconds_until_cycle(w.cycle + found + 1);
    }
    return 0.0;
  }

  // Seconds from the change to the start of cycle `cycle`.
  double seconds_until_cycle(long long cycle) const {
    return epoch.origin_s + static_cast<double>(cycle) * period() - epoch.start_s;
  }

  SimulationCounters counters() const {
    const CycleMapCounters& c = epoch.map->counters();
    SimulationCounters out;
    out.cycle_integrations = retired.cycles + c.cycles;
    out.time_steps = retired.steps + c.steps;
    out.newton_iterations = retired.newton_iterations + c.newton_iterations;
    out.steady_state_solves = steady_solves;
    out.transient_waypoints = waypoints;
    return out;
  }
};

UnitSimulation::UnitSimulation(CascadeCircuit circuit) : UnitSimulation(std::move(circuit), IntegrationOptions{}) {}

UnitSimulation::UnitSimulation(CascadeCircuit circuit, const IntegrationOptions& options)
    : state_(std::make_shared<State>(std::move(circuit), options)) {}

void UnitSimulation::set_drive(const DriveSettings& drive) {
  std::lock_guard lock(state_->mutex);
  state_->change(drive, state_->epoch.load);
}

void UnitSimulation::set_load(const LoadSettings& load) {
  std::lock_guard lock(state_->mutex);
  state_->change(state_->epoch.drive, load);
}

void UnitSimulation::advance_to(double time_s) {
  std::lock_guard lock(state_->mutex);
  if (!(time_s >= state_->now_s) || !std::isfinite(time_s)) {
    throw std::invalid_argument("unit simulation: cannot advance to " + std::to_string(time_s) +
                                " s from " + std::to_string(state_->now_s) + " s");
  }
  state_->now_s = time_s;
  state_->ensure_covers(state_->cycle_at(time_s));
}

double UnitSimulation::time_s() const {
  std::lock_guard lock(state_->mutex);
  return state_->now_s;
}

OutputState UnitSimulation::output() const {
  std::lock_guard lock(state_->mutex);
  return to_output(state_->statistics_of(state_->cycle_at(state_->now_s)));
}

OutputState UnitSimulation::steady_state() const {
  std::lock_guard lock(state_->mutex);
  return to_output(state_->steady().stats);
}

double UnitSimulation::settle_time_s(double tolerance_volts) const {
  if (!(tolerance_volts > 0.0)) throw std::invalid_argument("unit simulation: settle tolerance must be > 0");
  std::lock_guard lock(state_->mutex);
  return state_->settle_time(tolerance_volts);
}

double UnitSimulation::slowest_time_constant_s() const {
  std::lock_guard lock(state_->mutex);
  const auto& steady = state_->steady();
  if (steady.m.size() == 0) return 0.0;
  const double radius = Eigen::EigenSolver<Eigen::MatrixXd>(steady.m, false).eigenvalues().cwiseAbs().maxCoeff();
  if (!(radius < 1.0)) return std::numeric_limits<double>::infinity();
  if (radius <= 0.0) return 0.0;
  return -state_->period() / std::log(radius);
}

const CascadeCircuit& UnitSimulation::circuit() const { return state_->circuit; }

SimulationCounters UnitSimulation::counters() const {
  std::lock_guard lock(state_->mutex);
  return state_->counters();
}

}  // namespace zout::sim
