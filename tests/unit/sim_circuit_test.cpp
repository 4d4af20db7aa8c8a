// The circuit physics of the simulated bench (drivers/sim/circuit): the one-cycle map, its
// periodic steady state, and the transient a UnitSimulation follows. Checks here are against
// the model's own definitions, hand analysis and facts of the trade; ngspice and the handbook
// formulas are in tests/reference/sim_ngspice_test.cpp.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/cycle_map.h"
#include "drivers/sim/circuit/periodic_steady_state.h"
#include "drivers/sim/circuit/spice_netlist.h"
#include "drivers/sim/circuit/unit_simulation.h"

using namespace zout::sim;

namespace {

DriveSettings drive(double volts_peak, double hz = 1000.0) {
  DriveSettings d;
  d.frequency_hz = hz;
  d.amplitude_volts_peak = volts_peak;
  d.output_on = true;
  return d;
}

LoadSettings cc_load(double amps) {
  LoadSettings l;
  l.mode = LoadMode::constant_current;
  l.current_amps = amps;
  l.input_on = amps > 0.0;
  return l;
}

Eigen::VectorXd as_vector(const std::vector<double>& v) {
  return Eigen::Map<const Eigen::VectorXd>(v.data(), static_cast<Eigen::Index>(v.size()));
}

// The cycle-mean output of cycles 0..count−1 by iterating the true cycle map from x.
std::vector<double> brute_force_dc(CycleMap& map, Eigen::VectorXd x, int count) {
  std::vector<double> dc;
  for (int k = 0; k < count; ++k) {
    CycleResult r = map.run(x, false);
    dc.push_back(r.statistics.dc_volts);
    x = r.end_state;
  }
  return dc;
}

// First K after which every |dc_k − final| < tol.
int settled_after(const std::vector<double>& dc, double final_dc, double tol) {
  int last = -1;
  for (int k = 0; k < static_cast<int>(dc.size()); ++k) {
    if (std::abs(dc[static_cast<std::size_t>(k)] - final_dc) >= tol) last = k;
  }
  return last + 1;
}

}  // namespace

TEST_CASE("sim circuit: the periodic steady state is a fixed point of the cycle map", "[sim-circuit]") {
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  const PeriodicSolution s = solve_periodic_steady_state(circuit, drive(10.0), cc_load(100e-6));
  REQUIRE(s.converged);
  CHECK(s.residual_volts < 1e-8);
  CHECK(s.cycle_integrations < 30);

  // Integrating on from the solution, cycle after cycle, stays on it.
  CycleMap map(circuit, drive(10.0), cc_load(100e-6));
  Eigen::VectorXd x = as_vector(s.state_volts);
  for (int k = 0; k < 50; ++k) {
    const CycleResult r = map.run(x, false);
    REQUIRE((r.end_state - x).lpNorm<Eigen::Infinity>() < 1e-7);
    REQUIRE(r.statistics.dc_volts == Approx(s.dc_volts).margin(1e-7));
    x = r.end_state;
  }
  // The CC load draws exactly its current well above its minimum operating voltage.
  CHECK(s.load_current_amps == Approx(100e-6).epsilon(1e-12));
  // Power in covers power out: the load's 100 µA at ~53 V is most of what goes in.
  CHECK(s.input_power_watts > s.dc_volts * 100e-6);
  CHECK(s.input_power_watts < 1.2 * s.dc_volts * 100e-6 + s.dc_volts * s.dc_volts / 10e6);
}

TEST_CASE("sim circuit: the monodromy matrix matches finite differences of the cycle map", "[sim-circuit]") {
  // ESR, leakage, a filter with its own node and a CR load exercise every stamp.
  CascadeCircuit circuit = CascadeCircuit::uniform(2, 1e-6);
  circuit.esr_ohms = {0.5, 0.0, 1.0, 0.2};
  circuit.leakage_ohms = {1e8, std::numeric_limits<double>::infinity(), 5e7, 1e9};
  circuit.diodes[1].leakage_ohms = 1e6;
  circuit.diodes[2].series_ohms = 0.0;
  circuit.filter_series_ohms = 1e3;
  circuit.filter_capacitance_farads = 100e-9;
  LoadSettings load;
  load.mode = LoadMode::constant_resistance;
  load.resistance_ohms = 200e3;
  load.input_on = true;
  CycleMap map(circuit, drive(5.0), load);
  REQUIRE(map.state_size() == 5);
  const Eigen::VectorXd x = 0.8 * map.ideal_state(0.5);  // off the steady state: diodes conduct
  const CycleResult r = map.run(x, true);
  const double h = 1e-5;
  for (int j = 0; j < map.state_size(); ++j) {
    Eigen::VectorXd up = x;
    Eigen::VectorXd down = x;
    up[j] += h;
    down[j] -= h;
    const CycleResult a = map.run(up, false);
    const CycleResult b = map.run(down, false);
    const Eigen::VectorXd column = (a.end_state - b.end_state) / (2 * h);
    INFO("column " << j);
    CHECK((column - r.monodromy.col(j)).lpNorm<Eigen::Infinity>() < 1e-5 * (1.0 + column.lpNorm<Eigen::Infinity>()));
    const double dc = (a.statistics.dc_volts - b.statistics.dc_volts) / (2 * h);
    CHECK(r.dc_gradient[j] == Approx(dc).margin(1e-5));
  }
}

TEST_CASE("sim circuit: no-load output is 2n·Vpk less the diode drops", "[sim-circuit]") {
  // Common practice: a silicon diode drops about 0.6–0.7 V at milliamps and less at lower
  // currents, and an n-stage cascade's open-circuit output is 2n·Vpk less one drop per diode.
  // (Open circuit: no meter either, whose 10 MΩ would already sag a 6-stage cascade by ~1.8 V.)
  for (int n : {1, 3, 6}) {
    CascadeCircuit circuit = CascadeCircuit::uniform(n, 1e-6);
    circuit.meter_input_ohms = std::numeric_limits<double>::infinity();
    LoadSettings off;
    const PeriodicSolution open = solve_periodic_steady_state(circuit, drive(10.0), off);
    const PeriodicSolution loaded = solve_periodic_steady_state(circuit, drive(10.0), cc_load(1e-3 / n));
    REQUIRE(open.converged);
    REQUIRE(loaded.converged);
    const double ideal = 2.0 * n * 10.0;
    const double drop_per_diode = (ideal - open.dc_volts) / (2.0 * n);
    INFO("n = " << n << ", open-circuit dc = " << open.dc_volts);
    CHECK(drop_per_diode > 0.1);
    CHECK(drop_per_diode < 0.7);
    CHECK(open.ripple_pp_volts < 1e-3);
    // Under load each diode conducts milliamp pulses: its drop is larger (and the sag adds).
    CHECK((ideal - loaded.dc_volts) / (2.0 * n) > drop_per_diode + 0.1);
  }
  // Common practice: a 3-stage cascade at 2.5 V peak, 1 kHz, 1 µF, light load gives roughly
  // 11–13 V with millivolt-level ripple at microamp loads.
  const PeriodicSolution light =
      solve_periodic_steady_state(CascadeCircuit::uniform(3, 1e-6), drive(2.5), cc_load(1e-6));
  CHECK(light.dc_volts > 11.0);
  CHECK(light.dc_volts < 13.0);
  CHECK(light.ripple_pp_volts > 1e-3);
  CHECK(light.ripple_pp_volts < 20e-3);
}

TEST_CASE("sim circuit: the output falls and the ripple grows with load", "[sim-circuit]") {
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  double previous_dc = std::numeric_limits<double>::infinity();
  double previous_ripple = -1.0;
  for (double amps : {0.0, 1e-6, 10e-6, 100e-6, 1e-3}) {
    const PeriodicSolution s = solve_periodic_steady_state(circuit, drive(10.0), cc_load(amps));
    REQUIRE(s.converged);
    INFO("load " << amps << " A: dc " << s.dc_volts << " V, ripple " << s.ripple_pp_volts << " V");
    CHECK(s.dc_volts < previous_dc);
    CHECK(s.ripple_pp_volts > previous_ripple);
    previous_dc = s.dc_volts;
    previous_ripple = s.ripple_pp_volts;
  }
  // The same in CR mode: a smaller resistance takes more current and the output falls.
  LoadSettings cr;
  cr.mode = LoadMode::constant_resistance;
  cr.input_on = true;
  cr.resistance_ohms = 1e6;
  const PeriodicSolution high = solve_periodic_steady_state(circuit, drive(10.0), cr);
  cr.resistance_ohms = 100e3;
  const PeriodicSolution low = solve_periodic_steady_state(circuit, drive(10.0), cr);
  CHECK(low.dc_volts < high.dc_volts);
  CHECK(low.load_current_amps == Approx(low.dc_volts / 100e3).epsilon(1e-9));
}

TEST_CASE("sim circuit: a weak capacitor or a leaky diode lowers the output", "[sim-circuit]") {
  const CascadeCircuit good = CascadeCircuit::uniform(3, 1e-6);
  CascadeCircuit weak = good;
  weak.capacitance_farads[3] *= 0.2;  // stage 1's smoothing capacitor lost 80 %
  CascadeCircuit leaky = good;
  leaky.diodes[2].leakage_ohms = 200e3;
  const double nominal = solve_periodic_steady_state(good, drive(10.0), cc_load(50e-6)).dc_volts;
  const PeriodicSolution weak_s = solve_periodic_steady_state(weak, drive(10.0), cc_load(50e-6));
  const PeriodicSolution leaky_s = solve_periodic_steady_state(leaky, drive(10.0), cc_load(50e-6));
  REQUIRE(weak_s.converged);
  REQUIRE(leaky_s.converged);
  CHECK(weak_s.dc_volts < nominal - 0.1);
  CHECK(leaky_s.dc_volts < nominal - 0.1);
  // A leaky capacitor too, and a lossy filter's series resistance.
  CascadeCircuit lossy = good;
  lossy.leakage_ohms.assign(6, std::numeric_limits<double>::infinity());
  lossy.leakage_ohms[5] = 1e6;
  CHECK(solve_periodic_steady_state(lossy, drive(10.0), cc_load(50e-6)).dc_volts < nominal - 0.1);
}

TEST_CASE("sim circuit: an output RC filter cuts the ripple and keeps the mean", "[sim-circuit]") {
  CascadeCircuit plain = CascadeCircuit::uniform(3, 1e-6);
  CascadeCircuit filtered = plain;
  filtered.filter_series_ohms = 10e3;
  filtered.filter_capacitance_farads = 1e-6;  // corner 16 Hz against 1 kHz ripple
  const PeriodicSolution a = solve_periodic_steady_state(plain, drive(10.0), cc_load(100e-6));
  const PeriodicSolution b = solve_periodic_steady_state(filtered, drive(10.0), cc_load(100e-6));
  REQUIRE(b.converged);
  REQUIRE(b.state_volts.size() == 7);
  CHECK(b.ripple_pp_volts < 0.05 * a.ripple_pp_volts);
  // The mean falls by the load's and the meter's current times the series resistance (and a
  // little more sag: the filter draws a smoother current from the cascade).
  CHECK(b.dc_volts == Approx(a.dc_volts - (100e-6 + b.dc_volts / 10e6) * 10e3).margin(0.06));
}

TEST_CASE("sim circuit: a CC load below its minimum operating voltage is a resistance", "[sim-circuit]") {
  // unit_simulation.h: below min_operating_volts a CC load behaves as the resistance
  // min_operating_volts / current_amps; a quadratic knee of ±5 % joins the two smoothly.
  LoadSettings load = cc_load(10e-3);
  load.min_operating_volts = 2.0;
  CHECK(load_current(load, 5.0).amps == 10e-3);
  CHECK(load_current(load, 2.2).siemens == 0.0);
  CHECK(load_current(load, 1.0).amps == Approx(1.0 * 10e-3 / 2.0));
  CHECK(load_current(load, 1.0).siemens == Approx(10e-3 / 2.0));
  CHECK(load_current(load, -0.5).amps == Approx(-0.5 * 10e-3 / 2.0));
  double previous = -1.0;
  for (double v = 1.8; v <= 2.2; v += 0.001) {  // continuous, monotone, slope continuous
    const LoadCurrent now = load_current(load, v);
    CHECK(now.amps >= previous);
    CHECK(std::abs(now.amps - load_current(load, v - 1e-7).amps) < 1e-7 * now.siemens + 1e-12);
    previous = now.amps;
  }
  LoadSettings off = load;
  off.input_on = false;
  CHECK(load_current(off, 5.0).amps == 0.0);

  // A doubler at 1 V peak cannot hold 10 mA: its output settles below the knee, where the load
  // draws output / (2 V / 10 mA).
  const PeriodicSolution s = solve_periodic_steady_state(CascadeCircuit::uniform(1, 1e-6), drive(1.0), load);
  REQUIRE(s.converged);
  CHECK(s.peak_output_volts < 2.0 * 0.95);
  CHECK(s.load_current_amps < 10e-3);
  CHECK(s.load_current_amps == Approx(s.dc_volts / 200.0).epsilon(1e-9));
}

TEST_CASE("sim circuit: advance_to reaches the steady state that steady_state() reports", "[sim-circuit]") {
  UnitSimulation sim(CascadeCircuit::uniform(3, 1e-6));
  CHECK(sim.output().dc_volts == 0.0);
  sim.set_load(cc_load(100e-6));
  sim.set_drive(drive(10.0));
  const OutputState target = sim.steady_state();
  sim.advance_to(0.005);
  CHECK(sim.output().dc_volts < 0.8 * target.dc_volts);  // still charging
  sim.advance_to(10.0);
  const OutputState now = sim.output();
  CHECK(now.dc_volts == Approx(target.dc_volts).margin(1e-6));
  CHECK(now.ripple_pp_volts == Approx(target.ripple_pp_volts).margin(1e-6));
  CHECK(now.ripple_rms_volts == Approx(target.ripple_rms_volts).margin(1e-6));
  CHECK(now.load_current_amps == Approx(100e-6).epsilon(1e-9));
  CHECK(now.load_voltage_volts == Approx(now.dc_volts));
  CHECK(sim.time_s() == 10.0);
  const PeriodicSolution direct = solve_periodic_steady_state(CascadeCircuit::uniform(3, 1e-6), drive(10.0), cc_load(100e-6));
  CHECK(target.dc_volts == Approx(direct.dc_volts).margin(1e-7));
}

TEST_CASE("sim circuit: the transient follows the cycle map cycle by cycle", "[sim-circuit]") {
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  CycleMap map(circuit, drive(10.0), cc_load(100e-6));
  const std::vector<double> truth = brute_force_dc(map, Eigen::VectorXd::Zero(6), 200);
  for (int k : {0, 1, 2, 7, 20, 60, 150, 199}) {
    UnitSimulation sim(circuit);
    sim.set_load(cc_load(100e-6));
    sim.set_drive(drive(10.0));
    sim.advance_to((k + 0.5) / 1000.0);
    INFO("cycle " << k);
    CHECK(sim.output().dc_volts == Approx(truth[static_cast<std::size_t>(k)]).margin(0.01));
  }
}

TEST_CASE("sim circuit: settle time after a load step is the cycle map's own", "[sim-circuit]") {
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  UnitSimulation sim(circuit);
  sim.set_load(cc_load(100e-6));
  sim.set_drive(drive(10.0));
  sim.advance_to(2.0);
  sim.set_load(cc_load(1e-3));
  const double tol = 0.02;
  const double settle = sim.settle_time_s(tol);
  const double final_dc = sim.steady_state().dc_volts;

  CycleMap map(circuit, drive(10.0), cc_load(1e-3));
  const PeriodicSolution before = solve_periodic_steady_state(circuit, drive(10.0), cc_load(100e-6));
  const std::vector<double> truth = brute_force_dc(map, as_vector(before.state_volts), 600);
  const int cycles = settled_after(truth, final_dc, tol);
  REQUIRE(cycles > 20);
  REQUIRE(cycles < 500);
  CHECK(settle == Approx(cycles / 1000.0).epsilon(0.10));
  // Reading the output just before and after the settle time agrees with the definition.
  sim.advance_to(2.0 + settle + 0.0005);
  CHECK(std::abs(sim.output().dc_volts - final_dc) < tol);
}

TEST_CASE("sim circuit: the slowest time constant is the decay rate of the settling tail", "[sim-circuit]") {
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  UnitSimulation sim(circuit);
  sim.set_load(cc_load(100e-6));
  sim.set_drive(drive(10.0));
  sim.advance_to(2.0);
  sim.set_load(cc_load(1e-3));
  const double tau = sim.slowest_time_constant_s();
  const double final_dc = sim.steady_state().dc_volts;

  // Brute force: the late tail of |dc_k − dc_final| shrinks by exp(−Δk·T/τ).
  CycleMap map(circuit, drive(10.0), cc_load(1e-3));
  const PeriodicSolution before = solve_periodic_steady_state(circuit, drive(10.0), cc_load(100e-6));
  const std::vector<double> dc = brute_force_dc(map, as_vector(before.state_volts), 400);
  const double early = std::abs(dc[150] - final_dc);
  const double late = std::abs(dc[250] - final_dc);
  REQUIRE(late > 1e-9);
  const double tail_tau = (100.0 / 1000.0) / std::log(early / late);
  CHECK(tau == Approx(tail_tau).epsilon(0.05));
  CHECK(tau > 0.005);
}

TEST_CASE("sim circuit: a long advance costs O(log cycles)", "[sim-circuit]") {
  UnitSimulation sim(CascadeCircuit::uniform(3, 10e-9));
  sim.set_load(cc_load(20e-6));
  sim.set_drive(drive(10.0, 50e3));
  // One jump over a whole power-up and an hour of soak: 180 million cycles.
  sim.advance_to(3600.0);
  const SimulationCounters after_jump = sim.counters();
  CHECK(after_jump.cycle_integrations < 200);
  CHECK(sim.output().dc_volts == Approx(sim.steady_state().dc_volts).margin(1e-6));
  // Another hour, in steps of a minute: one cycle integration per reading at most.
  for (int minute = 1; minute <= 60; ++minute) {
    sim.advance_to(3600.0 + 60.0 * minute);
    (void)sim.output();
  }
  const SimulationCounters after_soak = sim.counters();
  CHECK(after_soak.cycle_integrations - after_jump.cycle_integrations <= 61);
  CHECK(after_soak.time_steps - after_jump.time_steps <= 61 * 256);
  CHECK(after_soak.steady_state_solves == after_jump.steady_state_solves);
}

TEST_CASE("sim circuit: with the drive off the output decays through the meter", "[sim-circuit]") {
  // A doubler charged to ~19 V, load off: with the drive off only the 10 MΩ meter discharges
  // the output capacitor (τ = 10 MΩ · 1 µF = 10 s) until it falls to the pumping capacitor's
  // voltage (~Vpk, after τ·ln 2); then both discharge together.
  const CascadeCircuit circuit = CascadeCircuit::uniform(1, 1e-6);
  UnitSimulation sim(circuit);
  sim.set_drive(drive(10.0));
  sim.advance_to(5.0);
  const double charged = sim.output().dc_volts;
  REQUIRE(charged > 18.0);
  DriveSettings off = drive(10.0);
  off.output_on = false;
  sim.set_drive(off);
  CHECK(sim.steady_state().dc_volts == Approx(0.0).margin(1e-9));
  double previous = charged;
  for (double t : {5.5, 6.0, 7.0}) {
    sim.advance_to(t);
    const double now = sim.output().dc_volts;
    CHECK(now < previous);
    CHECK(now == Approx(charged * std::exp(-(t - 5.0) / 10.0)).epsilon(0.01));
    previous = now;
  }
  sim.advance_to(600.0);
  CHECK(sim.output().dc_volts < 0.01 * charged);
  CHECK(sim.output().dc_volts >= 0.0);
  CHECK(sim.settle_time_s(0.1) > 30.0);
}

TEST_CASE("sim circuit: a change in mid-cycle keeps the generator's phase", "[sim-circuit]") {
  // Setting the same load again in the middle of a cycle changes nothing: the state at that
  // instant carries on, and the generator does not restart its sine.
  const CascadeCircuit circuit = CascadeCircuit::uniform(3, 1e-6);
  UnitSimulation a(circuit);
  UnitSimulation b(circuit);
  for (UnitSimulation* sim : {&a, &b}) {
    sim->set_load(cc_load(100e-6));
    sim->set_drive(drive(10.0));
  }
  a.advance_to(0.0503);
  a.set_load(cc_load(100e-6));
  a.advance_to(0.0607);
  a.set_drive(drive(10.0));
  for (double t : {0.0612, 0.2, 0.5}) {
    a.advance_to(t);
    b.advance_to(t);
    CHECK(a.output().dc_volts == Approx(b.output().dc_volts).margin(2e-3));
  }
}

TEST_CASE("sim circuit: invalid circuits, settings and times are refused", "[sim-circuit]") {
  CascadeCircuit bad = CascadeCircuit::uniform(3, 1e-6);
  bad.capacitance_farads.pop_back();
  CHECK_THROWS_AS(bad.validate(), std::invalid_argument);
  CHECK_THROWS_AS(UnitSimulation(bad), std::invalid_argument);
  CascadeCircuit zero = CascadeCircuit::uniform(0, 1e-6);
  CHECK_THROWS_AS(zero.validate(), std::invalid_argument);
  CascadeCircuit negative = CascadeCircuit::uniform(2, 1e-6);
  negative.diodes[1].saturation_current_amps = -1.0;
  CHECK_THROWS_AS(negative.validate(), std::invalid_argument);
  CascadeCircuit sparse = CascadeCircuit::uniform(2, 1e-6);
  sparse.esr_ohms.clear();
  sparse.leakage_ohms.clear();
  sparse.diodes.clear();
  CHECK_NOTHROW(sparse.validate());

  UnitSimulation sim(CascadeCircuit::uniform(2, 1e-6));
  DriveSettings no_frequency = drive(10.0, 0.0);
  CHECK_THROWS_AS(sim.set_drive(no_frequency), std::invalid_argument);
  LoadSettings cr;
  cr.mode = LoadMode::constant_resistance;
  cr.resistance_ohms = 0.0;
  CHECK_THROWS_AS(sim.set_load(cr), std::invalid_argument);
  sim.advance_to(1.0);
  CHECK_THROWS_AS(sim.advance_to(0.5), std::invalid_argument);
  CHECK_THROWS_AS(sim.settle_time_s(0.0), std::invalid_argument);
}

TEST_CASE("sim circuit: the SPICE netlist and ngspice's measurement lines", "[sim-circuit]") {
  CascadeCircuit circuit = CascadeCircuit::uniform(2, 1e-6);
  circuit.esr_ohms[1] = 0.5;
  circuit.diodes[3].leakage_ohms = 1e6;
  circuit.filter_series_ohms = 1e3;
  circuit.filter_capacitance_farads = 1e-7;
  SpiceRun run;
  run.stop_time_s = 0.2;
  run.initial_state_volts = {1, 2, 3, 4, 5};
  const std::string net = spice_netlist(circuit, drive(10.0), cc_load(1e-4), run);
  for (const char* line : {"Vsrc src 0 DC 0 SIN(0 10 1000 0 0 0)", "Rsrc src in 50", "C0 p0 in 1e-06 IC=1",
                           "D0 0 p0 DM0", ".model DM0 D(IS=1e-09 N=1.8 RS=1)", "C1 s0 c1esr 1e-06 IC=2",
                           "RC1esr c1esr 0 0.5", "D3 p1 s1 DM3", "RD3leak p1 s1 1000000", "Rfilter s1 out 1000",
                           "Cfilter out 0 1e-07 IC=5", "Rmeter out 0 10000000", "Iload out 0 DC 0.0001",
                           ".tran 5e-06 0.2 0 5e-06 uic", ".meas tran out_avg AVG v(out) FROM=0.195 TO=0.2"}) {
    INFO(line);
    CHECK(net.find(line) != std::string::npos);
  }
  const auto values = parse_spice_measurements(
      "Measurements for Transient Analysis\n\n"
      "out_avg             =  5.340076e+01 from=  4.950000e-01 to=  5.000000e-01\n"
      "out_pp              =  5.950722e-01 from=  4.950000e-01 to=  5.000000e-01\n"
      "out_max             =  5.369412e+01 at=  4.972788e-01\n"
      "Total analysis time (seconds) = 0.773\n");
  REQUIRE(values.size() == 3);
  CHECK(values.at("out_avg") == Approx(53.40076));
  CHECK(values.at("out_pp") == Approx(0.5950722));
  const auto samples = parse_spice_wrdata(" 0.000000e+00  1.000000e+00\n 1.0e-03  2.5e+00\n");
  REQUIRE(samples.size() == 2);
  CHECK(samples[1].volts == 2.5);
}
