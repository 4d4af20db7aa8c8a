#include "cycle_map.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <stdexcept>
#include <string>

namespace zout::sim {

namespace {

constexpr double kGamma = 1.0 - 0.5 * std::numbers::sqrt2;  // SDIRK2 (Alexander), L-stable
constexpr double kKappa = (1.0 - kGamma) / kGamma;            // stage-2 history weight
constexpr int kGround = -1;
constexpr int kMaxNewtonIterations = 50;
constexpr int kMaxSubdivisionDepth = 12;
// Newton on the node equations aims at an error below this times (1 V + the largest node
// voltage), so the map is smooth to ~1e-12 relative. It stops after an update δ with
// δ²/(2·N·Vt) below that (quadratic convergence: the error left is about δ²/(2·N·Vt) for an
// exponential junction), which saves the confirming iteration.
constexpr double kNewtonRelativeTolerance = 1e-12;
// The junction exponent is continued linearly above the value where the junction would carry
// this current: no overflow in any Newton iterate, and no change at any current a bench sees.
constexpr double kExponentLinearAboveAmps = 1e4;

struct CapacitorBranch {
  int upper = 0;
  int lower = 0;
  double farads = 0.0;
  double esr_ohms = 0.0;
  double leak_siemens = 0.0;
};

struct DiodeBranch {
  int anode = 0;
  int cathode = 0;
  double is = 0.0;
  double nvt = 0.0;  // N·Vt
  double rs = 0.0;
  double leak_siemens = 0.0;
  double x_max = 0.0;  // exponent above which exp is continued linearly
  double e_max = 0.0;  // exp(x_max)
};

double siemens_of(double ohms) { return std::isfinite(ohms) ? 1.0 / ohms : 0.0; }

using RowMatrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

// Cholesky factor L (A = L·Lᵀ) of a symmetric positive definite matrix whose nonzeros lie
// within `band` of the diagonal: O(N·band²) to factor, O(N·band) per right-hand side. L is
// kept as a compact band, row i holding L(i, i−band … i).
class BandCholesky {
 public:
  // Reads the lower band of `a`. False when `a` is not (numerically) positive definite.
  bool factor(const Eigen::MatrixXd& a, int band) {
    n_ = static_cast<int>(a.rows());
    band_ = band;
    width_ = band + 1;
    l_.assign(static_cast<std::size_t>(n_ * width_), 0.0);
    for (int i = 0; i < n_; ++i) {
      const int first = std::max(0, i - band_);
      for (int j = first; j <= i; ++j) {
        double sum = a(i, j);
        for (int k = std::max(first, j - band_); k < j; ++k) sum -= at(i, k) * at(j, k);
        if (j < i) {
          at(i, j) = sum / at(j, j);
        } else {
          if (!(sum > 0.0) || !std::isfinite(sum)) return false;
          at(i, i) = std::sqrt(sum);
        }
      }
    }
    return true;
  }
  void solve(double* x) const {
    for (int i = 0; i < n_; ++i) {
      double sum = x[i];
      for (int k = std::max(0, i - band_); k < i; ++k) sum -= at(i, k) * x[k];
      x[i] = sum / at(i, i);
    }
    for (int i = n_ - 1; i >= 0; --i) {
      double sum = x[i];
      for (int k = i + 1; k <= std::min(n_ - 1, i + band_); ++k) sum -= at(k, i) * x[k];
      x[i] = sum / at(i, i);
    }
  }
  // Every column of a row-major matrix at once (row operations are contiguous).
  void solve(RowMatrix& x) const {
    for (int i = 0; i < n_; ++i) {
      for (int k = std::max(0, i - band_); k < i; ++k) x.row(i) -= at(i, k) * x.row(k);
      x.row(i) /= at(i, i);
    }
    for (int i = n_ - 1; i >= 0; --i) {
      for (int k = i + 1; k <= std::min(n_ - 1, i + band_); ++k) x.row(i) -= at(k, i) * x.row(k);
      x.row(i) /= at(i, i);
    }
  }

 private:
  double& at(int i, int k) { return l_[static_cast<std::size_t>(i * width_ + k - i + band_)]; }
  double at(int i, int k) const { return l_[static_cast<std::size_t>(i * width_ + k - i + band_)]; }
  int n_ = 0;
  int band_ = 0;
  int width_ = 1;
  std::vector<double> l_;
};

}  // namespace

void validate_settings(const DriveSettings& drive, const LoadSettings& load) {
  auto fail = [](const std::string& what) { throw std::invalid_argument("simulation settings: " + what); };
  if (std::isnan(drive.frequency_hz) || std::isnan(drive.amplitude_volts_peak) || std::isnan(drive.offset_volts) ||
      !std::isfinite(drive.amplitude_volts_peak) || !std::isfinite(drive.offset_volts)) {
    fail("drive values must be finite numbers");
  }
  if (drive.output_on && !(drive.frequency_hz > 0.0 && std::isfinite(drive.frequency_hz))) {
    fail("drive frequency_hz must be > 0 with the output on");
  }
  if (!std::isfinite(load.current_amps) || std::isnan(load.resistance_ohms) || std::isnan(load.min_operating_volts) ||
      !std::isfinite(load.min_operating_volts)) {
    fail("load values must be numbers");
  }
  if (load.current_amps < 0.0) fail("load current_amps must be >= 0");
  if (load.mode == LoadMode::constant_resistance && !(load.resistance_ohms > 0.0)) {
    fail("load resistance_ohms must be > 0 in CR mode");
  }
}

LoadCurrent load_current(const LoadSettings& load, double volts) {
  if (!load.input_on) return {};
  if (load.mode == LoadMode::constant_resistance) {
    if (!std::isfinite(load.resistance_ohms)) return {};
    return {volts / load.resistance_ohms, 1.0 / load.resistance_ohms};
  }
  const double current = load.current_amps;
  if (current <= 0.0) return {};
  const double knee = std::max(load.min_operating_volts, 1e-3);
  const double x = volts / knee;
  const double w = kLoadKneeWidth;
  if (x <= 1.0 - w) return {current * x, current / knee};
  if (x >= 1.0 + w) return {current, 0.0};
  const double over = x - (1.0 - w);
  return {current * (x - over * over / (4.0 * w)), current / knee * (1.0 - over / (2.0 * w))};
}

struct CycleMap::Impl {
  // --- circuit ---------------------------------------------------------------------------
  int stages = 1;
  int node_count = 0;
  int state_count = 0;
  int input_node = 0;
  int top_node = 0;     // S(n−1)
  int output_node = 0;  // the output terminal (top_node or the filter's own node)
  double source_siemens = 0.0;
  double meter_siemens = 0.0;
  double filter_siemens = 0.0;  // series R of the filter when it has its own node
  std::vector<CapacitorBranch> capacitors;
  std::vector<DiodeBranch> diodes;
  DriveSettings drive;
  LoadSettings load;
  IntegrationOptions options;
  double period = 1e-3;
  double omega = 0.0;
  double scale = 1.0;

  // --- work space ------------------------------------------------------------------------
  int band = 0;  // half-bandwidth of the node equations (2 with the interleaved node order)
  double smallest_nvt = 1.0;
  Eigen::MatrixXd jacobian;
  BandCholesky cholesky;
  Eigen::VectorXd residual;
  Eigen::VectorXd delta;
  Eigen::PartialPivLU<Eigen::MatrixXd> lu;  // fallback when the band factorisation fails
  bool use_lu = false;
  // predictor: the last two stage solutions and their times (count = how many are valid)
  Eigen::VectorXd previous_nodes;
  Eigen::VectorXd earlier_nodes;
  double previous_time = 0.0;
  double earlier_time = 0.0;
  int known_solutions = 0;
  // per-step scratch (depth 0; subdivided steps allocate their own)
  Eigen::VectorXd saved_state;
  Eigen::VectorXd saved_nodes;
  std::vector<double> saved_junctions;
  Eigen::VectorXd stage_state;
  Eigen::VectorXd stage_history;
  std::vector<double> junction_volts;  // warm starts of the diode branch solves
  Eigen::VectorXd companion_siemens;   // per capacitor, for the present stage step
  Eigen::VectorXd beta;                // (γh/C)·G: weight of the node voltages in the new state
  // sensitivities
  RowMatrix dnodes;              // ∂u/∂x(0) at the last stage         (nodes × states)
  RowMatrix chained;             // ∂h₂/∂x(0): stage 2's history        (states × states)
  RowMatrix monodromy;           // P: ∂x(t)/∂x(0)
  Eigen::RowVectorXd out_gradient;  // ∂u_out(t)/∂x(0) at the last step end

  // running statistics of the cycle
  double extreme_high = 0.0;
  double extreme_low = 0.0;

  CycleMapCounters counters;

  Impl(const CascadeCircuit& circuit, const DriveSettings& drive_settings, const LoadSettings& load_settings,
       const IntegrationOptions& integration_options);

  double source_volts(double t) const {
    if (!drive.output_on) return 0.0;
    return drive.offset_volts + drive.amplitude_volts_peak * std::sin(omega * t);
  }
  // Time from the cycle start of grid position s ∈ [0, 1].
  double grid_time(double s) const {
    const double b = options.peak_clustering;
    return period * (s + b / (2.0 * std::numbers::pi) * std::sin(4.0 * std::numbers::pi * s));
  }
  // Weight of the sample at grid position s in the cycle mean (rectangle rule in s, which is
  // spectrally accurate for periodic integrands): (dt/ds)/T/N.
  double grid_weight(double s) const {
    return (1.0 + 2.0 * options.peak_clustering * std::cos(4.0 * std::numbers::pi * s)) /
           static_cast<double>(options.steps_per_cycle);
  }
  // Grid position s of a time fraction of the period (inverse of grid_time/period).
  double grid_position(double fraction) const {
    const double b = options.peak_clustering;
    double s = fraction;
    for (int i = 0; i < 60; ++i) {
      const double f = s + b / (2.0 * std::numbers::pi) * std::sin(4.0 * std::numbers::pi * s) - fraction;
      const double df = 1.0 + 2.0 * b * std::cos(4.0 * std::numbers::pi * s);
      const double step = f / df;
      s -= step;
      if (std::abs(step) < 1e-15) break;
    }
    return std::clamp(s, 0.0, 1.0);
  }

  static double node_value(const Eigen::VectorXd& u, int node) { return node == kGround ? 0.0 : u[node]; }

  // Junction current and conductance, with the exponent continued linearly above x_max.
  static void junction(const DiodeBranch& d, double vj, double& amps, double& siemens) {
    const double x = vj / d.nvt;
    if (x <= d.x_max) {
      const double e = std::exp(x);
      amps = d.is * (e - 1.0);
      siemens = d.is * e / d.nvt;
    } else {
      amps = d.is * (d.e_max * (1.0 + (x - d.x_max)) - 1.0);
      siemens = d.is * d.e_max / d.nvt;
    }
  }

  // The diode branch (junction + Rs, leakage across) at terminal voltage v: current and
  // d current / d v. With Rs the junction voltage solves vj + Rs·I(vj) = v; that function of
  // vj is increasing and convex, so Newton from any start lands at or right of the root after
  // one step and then descends monotonically; the bound vj ≤ min(v, N·Vt·ln(1 + v/(Rs·Is)))
  // cuts the descent short.
  void diode_branch(std::size_t index, double v, double& amps, double& siemens) {
    const DiodeBranch& d = diodes[index];
    double ij = 0.0;
    double gj = 0.0;
    if (d.rs == 0.0) {
      junction(d, v, ij, gj);
      amps = ij + v * d.leak_siemens;
      siemens = gj + d.leak_siemens;
      return;
    }
    double vj = v;  // reverse or zero bias: vj lies within Rs·Is of v
    double upper = v + d.rs * d.is;
    if (v > 0.0) {
      const double y = v / (d.rs * d.is) + 1.0;  // I(vj_upper) = v/Rs
      const double x = std::log(y) <= d.x_max ? std::log(y) : d.x_max + (y / d.e_max - 1.0);
      upper = std::min(v, d.nvt * x);
      vj = std::min(junction_volts[index], upper);
    }
    for (int iteration = 0; iteration < 200; ++iteration) {
      junction(d, vj, ij, gj);
      const double f = vj + d.rs * ij - v;
      const double step = f / (1.0 + d.rs * gj);
      vj = std::min(vj - step, upper);
      // The step left is below 1e-13·N·Vt: I and G of this iteration are exact to ~1e-13.
      if (std::abs(step) <= 1e-13 * d.nvt + 1e-15 * std::abs(vj)) break;
    }
    junction_volts[index] = vj;
    amps = ij + v * d.leak_siemens;
    siemens = gj / (1.0 + d.rs * gj) + d.leak_siemens;
  }

  void stamp(int a, int b, double amps, double siemens) {
    if (a != kGround) {
      residual[a] += amps;
      jacobian(a, a) += siemens;
    }
    if (b != kGround) {
      residual[b] -= amps;
      jacobian(b, b) += siemens;
    }
    if (a != kGround && b != kGround) {
      jacobian(a, b) -= siemens;
      jacobian(b, a) -= siemens;
    }
  }

  // Sets the companion conductances for implicit stages of length stage_step.
  void set_companions(double stage_step) {
    for (int j = 0; j < state_count; ++j) {
      const CapacitorBranch& c = capacitors[j];
      const double g = 1.0 / (c.esr_ohms + stage_step / c.farads);
      companion_siemens[j] = g;
      beta[j] = stage_step / c.farads * g;
    }
  }

  // Residual (sum of currents leaving each node) and its Jacobian at node voltages u, time t,
  // capacitor history h.
  void assemble(double t, const Eigen::VectorXd& history, const Eigen::VectorXd& u) {
    residual.setZero();
    jacobian.setZero();
    stamp(input_node, kGround, (u[input_node] - source_volts(t)) * source_siemens, source_siemens);
    for (int j = 0; j < state_count; ++j) {
      const CapacitorBranch& c = capacitors[j];
      const double v = node_value(u, c.upper) - node_value(u, c.lower);
      const double g = companion_siemens[j];
      stamp(c.upper, c.lower, g * (v - history[j]) + c.leak_siemens * v, g + c.leak_siemens);
    }
    for (std::size_t k = 0; k < diodes.size(); ++k) {
      const DiodeBranch& d = diodes[k];
      const double v = node_value(u, d.anode) - node_value(u, d.cathode);
      double amps = 0.0;
      double siemens = 0.0;
      diode_branch(k, v, amps, siemens);
      stamp(d.anode, d.cathode, amps, siemens);
    }
    if (output_node != top_node) {
      stamp(top_node, output_node, (u[top_node] - u[output_node]) * filter_siemens, filter_siemens);
    }
    const double out = u[output_node];
    const LoadCurrent drawn = load_current(load, out);
    stamp(output_node, kGround, out * meter_siemens + drawn.amps, meter_siemens + drawn.siemens);
  }

  // Factors the assembled Jacobian: banded Cholesky (it is symmetric positive definite:
  // every element is a two-terminal conductance ≥ 0 and every node reaches ground through
  // capacitors or resistors); dense LU should that ever fail numerically.
  void factor() {
    use_lu = !cholesky.factor(jacobian, band);
    if (use_lu) lu.compute(jacobian);
  }
  void solve_in_place(Eigen::VectorXd& rhs) {
    if (use_lu) {
      rhs = lu.solve(rhs);
    } else {
      cholesky.solve(rhs.data());
    }
  }
  void solve_in_place(RowMatrix& rhs) {
    if (use_lu) {
      rhs = lu.solve(rhs);
    } else {
      cholesky.solve(rhs);
    }
  }

  // Newton on the node equations of one implicit stage. u: start in (replaced by a linear
  // extrapolation of the last two solutions when there are two), solution out.
  bool solve_stage(double t, const Eigen::VectorXd& history, Eigen::VectorXd& u) {
    if (known_solutions >= 2 && previous_time > earlier_time) {
      const double ratio = (t - previous_time) / (previous_time - earlier_time);
      u = previous_nodes + ratio * (previous_nodes - earlier_nodes);
    }
    for (int iteration = 0; iteration < kMaxNewtonIterations; ++iteration) {
      assemble(t, history, u);
      factor();
      delta = -residual;
      solve_in_place(delta);
      ++counters.newton_iterations;
      const double largest = delta.lpNorm<Eigen::Infinity>();
      if (!std::isfinite(largest)) return false;
      u += delta;
      const double tolerance = kNewtonRelativeTolerance * (1.0 + u.lpNorm<Eigen::Infinity>());
      if (largest <= tolerance || largest * largest <= 2.0 * smallest_nvt * tolerance) {
        earlier_nodes.swap(previous_nodes);
        earlier_time = previous_time;
        previous_nodes = u;
        previous_time = t;
        ++known_solutions;
        return true;
      }
    }
    return false;
  }

  // After solve_stage: the stage's new capacitor voltages x = (1−β)·h + β·A·u.
  void stage_result(const Eigen::VectorXd& history, const Eigen::VectorXd& u, Eigen::VectorXd& x_out) {
    for (int j = 0; j < state_count; ++j) {
      const CapacitorBranch& c = capacitors[j];
      const double v = node_value(u, c.upper) - node_value(u, c.lower);
      x_out[j] = history[j] + beta[j] * (v - history[j]);
    }
  }

  // Applies the stage's sensitivity ∂x/∂h = diag(1−β) + diag(β)·A·J⁻¹·Aᵀ·diag(G) to the
  // columns of `in` (states × k), using the factorisation of the stage's last Newton
  // iteration, without forming it: a scatter, k banded solves and a gather. dnodes keeps
  // J⁻¹·Aᵀ·G·in (∂u/∂· for the same columns).
  void apply_stage_sensitivity(const RowMatrix& in, RowMatrix& out) {
    dnodes.setZero();
    for (int j = 0; j < state_count; ++j) {
      const CapacitorBranch& c = capacitors[j];
      const double g = companion_siemens[j];
      if (c.upper != kGround) dnodes.row(c.upper) += g * in.row(j);
      if (c.lower != kGround) dnodes.row(c.lower) -= g * in.row(j);
    }
    solve_in_place(dnodes);
    for (int j = 0; j < state_count; ++j) {
      const CapacitorBranch& c = capacitors[j];
      auto row = out.row(j);
      row = (1.0 - beta[j]) * in.row(j);
      if (c.upper != kGround) row += beta[j] * dnodes.row(c.upper);
      if (c.lower != kGround) row -= beta[j] * dnodes.row(c.lower);
    }
  }

  // One SDIRK2 step of length h from t0: x and u updated in place; with sensitivities the
  // monodromy P and the output gradient at the step's end are updated too. Halves the step
  // (recursively) when a stage's Newton iteration does not converge.
  bool step(double t0, double h, Eigen::VectorXd& x, Eigen::VectorXd& u, bool sensitivities, int depth) {
    Eigen::VectorXd local_state;
    Eigen::VectorXd local_nodes;
    std::vector<double> local_junctions;
    Eigen::VectorXd& x_start = depth == 0 ? saved_state : local_state;
    Eigen::VectorXd& u_start = depth == 0 ? saved_nodes : local_nodes;
    std::vector<double>& junctions_start = depth == 0 ? saved_junctions : local_junctions;
    x_start = x;
    u_start = u;
    junctions_start = junction_volts;
    set_companions(kGamma * h);
    bool ok = solve_stage(t0 + kGamma * h, x_start, u);
    if (ok) {
      note_sample(u[output_node]);
      stage_result(x_start, u, stage_state);
      // ∂h₂/∂x(0) = (1−κ)·P + κ·∂x₁/∂x·P, with stage 1's factorisation before stage 2 replaces it
      if (sensitivities) {
        apply_stage_sensitivity(monodromy, chained);
        chained *= kKappa;
        chained += (1.0 - kKappa) * monodromy;
      }
      stage_history = x_start + kKappa * (stage_state - x_start);
      ok = solve_stage(t0 + h, stage_history, u);
      if (ok) {
        stage_result(stage_history, u, x);
        if (sensitivities) {
          apply_stage_sensitivity(chained, monodromy);  // P ← ∂x₂/∂h₂ · ∂h₂/∂x(0)
          out_gradient = dnodes.row(output_node);
        }
        ++counters.steps;
        return true;
      }
    }
    if (depth >= kMaxSubdivisionDepth) return false;
    ++counters.step_subdivisions;
    x = x_start;
    u = u_start;
    junction_volts = junctions_start;
    known_solutions = 0;
    return step(t0, 0.5 * h, x, u, sensitivities, depth + 1) &&
           step(t0 + 0.5 * h, 0.5 * h, x, u, sensitivities, depth + 1);
  }

  void note_sample(double v) {
    extreme_high = std::max(extreme_high, v);
    extreme_low = std::min(extreme_low, v);
  }

  // Node voltages consistent with the capacitor voltages x at time t (exact with ideal
  // capacitors and the source's drop neglected): the starting guess of the first Newton solve.
  Eigen::VectorXd initial_nodes(const Eigen::VectorXd& x, double t) {
    known_solutions = 0;
    Eigen::VectorXd u = Eigen::VectorXd::Zero(node_count);
    u[input_node] = source_volts(t);
    for (int j = 0; j < 2 * stages; ++j) {
      const CapacitorBranch& c = capacitors[j];
      u[c.upper] = node_value(u, c.lower) + x[j];
    }
    if (output_node != top_node) {
      u[output_node] = state_count > 2 * stages ? x[2 * stages] : u[top_node];
    }
    for (std::size_t k = 0; k < diodes.size(); ++k) {
      const DiodeBranch& d = diodes[k];
      junction_volts[k] = std::min(node_value(u, d.anode) - node_value(u, d.cathode), 0.0);
    }
    return u;
  }

  void check_start(const Eigen::VectorXd& start) const {
    if (start.size() != state_count) {
      throw std::invalid_argument("cycle map: state has " + std::to_string(start.size()) + " entries, expected " +
                                  std::to_string(state_count));
    }
    if (!start.allFinite()) throw std::invalid_argument("cycle map: state is not finite");
  }

  [[noreturn]] static void diverged(double t) {
    throw std::runtime_error("cycle map: Newton did not converge at t = " + std::to_string(t) +
                             " s even with the step halved 12 times");
  }
};

CycleMap::Impl::Impl(const CascadeCircuit& circuit, const DriveSettings& drive_settings,
                     const LoadSettings& load_settings, const IntegrationOptions& integration_options)
    : drive(drive_settings), load(load_settings), options(integration_options) {
  circuit.validate();
  validate_settings(drive, load);
  if (options.steps_per_cycle < 8 || options.steps_per_cycle > 1'000'000) {
    throw std::invalid_argument("integration options: steps_per_cycle must be 8..1000000");
  }
  if (!(options.peak_clustering >= 0.0 && options.peak_clustering < 0.5)) {
    throw std::invalid_argument("integration options: peak_clustering must be in [0, 0.5)");
  }
  stages = circuit.stages;
  const int n = stages;
  input_node = 0;
  // Interleaved order in, P0, S0, P1, S1, …: every element joins nodes at most 2 apart.
  auto pumping = [](int k) { return 1 + 2 * k; };
  auto column = [](int k) { return k < 0 ? kGround : 2 + 2 * k; };
  top_node = column(n - 1);
  node_count = 1 + 2 * n;
  output_node = top_node;
  if (circuit.filter_series_ohms > 0.0) {
    output_node = node_count++;
    filter_siemens = 1.0 / circuit.filter_series_ohms;
  }
  source_siemens = 1.0 / circuit.source_output_ohms;
  meter_siemens = siemens_of(circuit.meter_input_ohms);

  const std::size_t count = static_cast<std::size_t>(2 * n);
  for (int k = 0; k < n; ++k) {
    for (int which = 0; which < 2; ++which) {
      const std::size_t j = static_cast<std::size_t>(2 * k + which);
      CapacitorBranch c;
      if (which == 0) {
        c.upper = pumping(k);
        c.lower = k == 0 ? input_node : pumping(k - 1);
      } else {
        c.upper = column(k);
        c.lower = column(k - 1);
      }
      c.farads = circuit.capacitance_farads[j];
      c.esr_ohms = circuit.esr_ohms.size() == count ? circuit.esr_ohms[j] : 0.0;
      c.leak_siemens = circuit.leakage_ohms.size() == count ? siemens_of(circuit.leakage_ohms[j]) : 0.0;
      capacitors.push_back(c);

      const DiodeModel model = circuit.diodes.size() == count ? circuit.diodes[j] : DiodeModel{};
      DiodeBranch d;
      if (which == 0) {
        d.anode = column(k - 1);
        d.cathode = pumping(k);
      } else {
        d.anode = pumping(k);
        d.cathode = column(k);
      }
      d.is = model.saturation_current_amps;
      d.nvt = model.emission_coefficient * kThermalVolts;
      d.rs = model.series_ohms;
      d.leak_siemens = siemens_of(model.leakage_ohms);
      d.x_max = std::min(std::log(kExponentLinearAboveAmps / d.is + 1.0), 600.0);
      d.e_max = std::exp(d.x_max);
      diodes.push_back(d);
    }
  }
  if (circuit.filter_capacitance_farads > 0.0) {
    CapacitorBranch c;
    c.upper = output_node;
    c.lower = kGround;
    c.farads = circuit.filter_capacitance_farads;
    capacitors.push_back(c);
  }
  state_count = static_cast<int>(capacitors.size());
  band = 1;
  for (const CapacitorBranch& c : capacitors) {
    if (c.upper != kGround && c.lower != kGround) band = std::max(band, std::abs(c.upper - c.lower));
  }
  smallest_nvt = std::numeric_limits<double>::infinity();
  for (const DiodeBranch& d : diodes) {
    if (d.anode != kGround && d.cathode != kGround) band = std::max(band, std::abs(d.anode - d.cathode));
    smallest_nvt = std::min(smallest_nvt, d.nvt);
  }

  const double frequency = drive.frequency_hz > 0.0 && std::isfinite(drive.frequency_hz) ? drive.frequency_hz : 1000.0;
  period = 1.0 / frequency;
  omega = 2.0 * std::numbers::pi * frequency;
  const double drive_volts = drive.output_on ? std::abs(drive.amplitude_volts_peak) + std::abs(drive.offset_volts) : 0.0;
  scale = std::max(1.0, 2.0 * n * drive_volts);

  jacobian.resize(node_count, node_count);
  previous_nodes.resize(node_count);
  earlier_nodes.resize(node_count);
  saved_state.resize(state_count);
  saved_nodes.resize(node_count);
  stage_state.resize(state_count);
  stage_history.resize(state_count);
  residual.resize(node_count);
  delta.resize(node_count);
  junction_volts.assign(diodes.size(), 0.0);
  companion_siemens.resize(state_count);
  beta.resize(state_count);
  dnodes.resize(node_count, state_count);
  chained.resize(state_count, state_count);
  monodromy.resize(state_count, state_count);
  out_gradient.resize(state_count);
}

CycleMap::CycleMap(const CascadeCircuit& circuit, const DriveSettings& drive, const LoadSettings& load,
                   const IntegrationOptions& options)
    : impl_(std::make_unique<Impl>(circuit, drive, load, options)) {}
CycleMap::~CycleMap() = default;
CycleMap::CycleMap(CycleMap&&) noexcept = default;
CycleMap& CycleMap::operator=(CycleMap&&) noexcept = default;

int CycleMap::state_size() const { return impl_->state_count; }
double CycleMap::period_s() const { return impl_->period; }
double CycleMap::voltage_scale() const { return impl_->scale; }
const CycleMapCounters& CycleMap::counters() const { return impl_->counters; }

double CycleMap::typical_diode_drop_volts() const {
  double sum = 0.0;
  for (const DiodeBranch& d : impl_->diodes) sum += d.nvt * std::log(1e-4 / d.is + 1.0) + 1e-4 * d.rs;
  return sum / static_cast<double>(impl_->diodes.size());
}

Eigen::VectorXd CycleMap::ideal_state(double diode_drop_volts) const {
  const Impl& m = *impl_;
  Eigen::VectorXd x = Eigen::VectorXd::Zero(m.state_count);
  if (!m.drive.output_on) return x;
  const double peak = std::abs(m.drive.amplitude_volts_peak);
  const double drop = std::clamp(diode_drop_volts, 0.0, 0.9 * peak);
  for (int k = 0; k < m.stages; ++k) {
    // C0 clamps the input's trough to −drop; every later capacitor holds two peaks less two drops.
    x[2 * k] = k == 0 ? peak - m.drive.offset_volts - drop : 2.0 * (peak - drop);
    x[2 * k + 1] = 2.0 * (peak - drop);
  }
  if (m.state_count > 2 * m.stages) x[2 * m.stages] = 2.0 * m.stages * (peak - drop);
  return x;
}

Eigen::VectorXd CycleMap::loaded_guess() const {
  const Impl& m = *impl_;
  if (!m.drive.output_on) return Eigen::VectorXd::Zero(m.state_count);
  const int n = m.stages;
  double mean_farads = 0.0;
  for (int j = 0; j < 2 * n; ++j) mean_farads += m.capacitors[j].farads;
  mean_farads /= 2.0 * n;
  const double peak = std::abs(m.drive.amplitude_volts_peak);
  const double ideal_out = 2.0 * n * std::max(peak - typical_diode_drop_volts(), 0.0);
  const double sag_per_amp = m.period / mean_farads * (2.0 * n * n * n / 3.0 + n * n / 2.0 - n / 6.0);
  // Output conductance (meter, CR load): V = V0 − Z·(V·G + I_cc)  ⇒  V = (V0 − Z·I_cc)/(1 + Z·G).
  double siemens = m.meter_siemens;
  double amps = 0.0;
  if (m.load.input_on && m.load.mode == LoadMode::constant_resistance && std::isfinite(m.load.resistance_ohms)) {
    siemens += 1.0 / m.load.resistance_ohms;
  } else if (m.load.input_on && m.load.mode == LoadMode::constant_current) {
    amps = m.load.current_amps;
  }
  const double out = std::max((ideal_out - sag_per_amp * amps) / (1.0 + sag_per_amp * siemens), 0.0);
  const double current = amps + out * siemens;
  Eigen::VectorXd x = ideal_state(typical_diode_drop_volts());
  const double q_over_c = current * m.period / mean_farads;
  const double floor = -2.0 * typical_diode_drop_volts();  // an overloaded stage: both diodes on
  for (int k = 1; k <= n; ++k) {  // k counts stages from the output end
    const double sag = q_over_c * (k + n * (n + 1.0) - k * (k + 1.0));
    const int smoothing = 2 * (n - k) + 1;
    x[smoothing] = std::max(x[smoothing] - sag, floor);
  }
  // A pumping capacitor above the first holds what the smoothing capacitor below it held at
  // the last trough of the drive.
  for (int k = 2; k <= n; ++k) x[2 * (k - 1)] = x[2 * (k - 2) + 1];
  if (m.state_count > 2 * n) {
    double top = 0.0;
    for (int k = 0; k < n; ++k) top += x[2 * k + 1];
    x[2 * n] = top;
  }
  return x;
}

CycleResult CycleMap::run(const Eigen::VectorXd& start, bool sensitivities, std::vector<WaveformSample>* waveform) {
  Impl& m = *impl_;
  m.check_start(start);
  const int steps = m.options.steps_per_cycle;
  Eigen::VectorXd x = start;
  Eigen::VectorXd u = m.initial_nodes(x, 0.0);
  if (sensitivities) m.monodromy.setIdentity();
  Eigen::RowVectorXd dc_gradient = Eigen::RowVectorXd::Zero(m.state_count);
  std::vector<double> samples(static_cast<std::size_t>(steps));
  std::vector<double> weights(static_cast<std::size_t>(steps));
  m.extreme_high = -std::numeric_limits<double>::infinity();
  m.extreme_low = std::numeric_limits<double>::infinity();
  CycleStatistics stats;
  if (waveform != nullptr) waveform->clear();
  double t0 = 0.0;
  for (int i = 0; i < steps; ++i) {
    const double s1 = static_cast<double>(i + 1) / steps;
    const double t1 = m.grid_time(s1);
    if (!m.step(t0, t1 - t0, x, u, sensitivities, 0)) Impl::diverged(t0);
    const double out = u[m.output_node];
    const double w = m.grid_weight(s1);
    const std::size_t index = static_cast<std::size_t>(i);
    samples[index] = out;
    weights[index] = w;
    m.note_sample(out);
    stats.dc_volts += w * out;
    stats.load_current_amps += w * load_current(m.load, out).amps;
    const double input = u[m.input_node];
    stats.input_power_watts += w * input * (m.source_volts(t1) - input) * m.source_siemens;
    if (sensitivities) dc_gradient += w * m.out_gradient;
    if (waveform != nullptr) waveform->push_back({t1, out, input});
    t0 = t1;
  }
  double variance = 0.0;
  for (std::size_t i = 0; i < samples.size(); ++i) {
    const double d = samples[i] - stats.dc_volts;
    variance += weights[i] * d * d;
  }
  stats.ripple_rms_volts = std::sqrt(std::max(variance, 0.0));
  stats.peak_volts = m.extreme_high;
  stats.trough_volts = m.extreme_low;
  stats.ripple_pp_volts = m.extreme_high - m.extreme_low;
  stats.load_voltage_volts = stats.dc_volts;
  ++m.counters.cycles;

  CycleResult result;
  result.end_state = x;
  result.statistics = stats;
  if (sensitivities) {
    result.monodromy = m.monodromy;
    result.dc_gradient = dc_gradient;
  }
  return result;
}

Eigen::VectorXd CycleMap::advance_within_cycle(const Eigen::VectorXd& start, double from_fraction,
                                               double to_fraction) {
  Impl& m = *impl_;
  m.check_start(start);
  from_fraction = std::clamp(from_fraction, 0.0, 1.0);
  to_fraction = std::clamp(to_fraction, from_fraction, 1.0);
  Eigen::VectorXd x = start;
  const double t_begin = from_fraction * m.period;
  const double t_end = to_fraction * m.period;
  const double shortest = 1e-9 * m.period;  // a step shorter than this is skipped
  if (t_end - t_begin <= shortest) return x;
  const double s_begin = m.grid_position(from_fraction);
  const double s_end = m.grid_position(to_fraction);
  Eigen::VectorXd u = m.initial_nodes(x, t_begin);
  const int steps = m.options.steps_per_cycle;
  double t0 = t_begin;
  for (int i = static_cast<int>(std::floor(s_begin * steps)) + 1; i <= steps + 1; ++i) {
    const double s1 = std::min(static_cast<double>(i) / steps, s_end);
    const double t1 = s1 >= s_end ? t_end : m.grid_time(s1);
    if (t1 - t0 > shortest || s1 >= s_end) {
      if (t1 > t0 && !m.step(t0, t1 - t0, x, u, false, 0)) Impl::diverged(t0);
      t0 = t1;
    }
    if (s1 >= s_end) break;
  }
  ++m.counters.cycles;
  return x;
}

}  // namespace zout::sim
