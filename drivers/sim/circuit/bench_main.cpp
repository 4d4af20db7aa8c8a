// zout-sim-bench: the periodic steady state of a cascade (default: 10 stages) by the
// shooting–Newton method against ngspice's transient to the same steady state, on the same
// netlist, side by side. Run through scripts/bench-sim. Prints both times (CPU and wall), both
// DC and ripple results, their agreement and the speed ratio. Exit status: 0 when both ran
// (whether or not the target was met), 1 when ngspice failed, 2 on bad arguments.
//
// Fair to ngspice: it simulates only as long as the transient from discharged capacitors
// actually needs (our own settle time to `--settle-fraction` of the output, plus 10 cycles),
// which a user without the answer would have to overestimate.

#include <fcntl.h>
#include <spawn.h>
#include <stdlib.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "drivers/sim/circuit/cascade_circuit.h"
#include "drivers/sim/circuit/periodic_steady_state.h"
#include "drivers/sim/circuit/spice_netlist.h"
#include "drivers/sim/circuit/unit_simulation.h"

extern char** environ;

namespace {

using namespace zout::sim;

double cpu_seconds() {
  timespec now{};
  ::clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &now);
  return static_cast<double>(now.tv_sec) + 1e-9 * static_cast<double>(now.tv_nsec);
}

double children_cpu_seconds() {
  rusage usage{};
  ::getrusage(RUSAGE_CHILDREN, &usage);
  auto seconds = [](const timeval& t) { return static_cast<double>(t.tv_sec) + 1e-6 * static_cast<double>(t.tv_usec); };
  return seconds(usage.ru_utime) + seconds(usage.ru_stime);
}

double wall_seconds() {
  return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

// Runs argv with stdout and stderr into `output_path`; returns the exit status (−1 on signal).
int run(const std::vector<std::string>& argv, const std::string& output_path) {
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, 1, output_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
  posix_spawn_file_actions_adddup2(&actions, 1, 2);
  posix_spawn_file_actions_addopen(&actions, 0, "/dev/null", O_RDONLY, 0);
  std::vector<char*> args;
  for (const auto& arg : argv) args.push_back(const_cast<char*>(arg.c_str()));
  args.push_back(nullptr);
  pid_t pid = 0;
  const int spawned = ::posix_spawnp(&pid, args[0], &actions, nullptr, args.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (spawned != 0) {
    std::cerr << "zout-sim-bench: cannot start " << argv[0] << ": " << std::strerror(spawned) << "\n";
    return -1;
  }
  int status = 0;
  ::waitpid(pid, &status, 0);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

double percent(double ours, double reference) { return 100.0 * (ours - reference) / reference; }

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"zout-sim-bench: periodic steady state by shooting-Newton vs ngspice's transient"};
  int stages = 10;
  double capacitance = 1e-6;
  double frequency = 1000.0;
  double volts = 10.0;
  double load_amps = 100e-6;
  double settle_fraction = 1e-4;
  int repeats = 3;
  std::string ngspice = "ngspice";
  app.add_option("--stages", stages, "cascade stages")->check(CLI::Range(1, CascadeCircuit::kMaxStages));
  app.add_option("--capacitance", capacitance, "every capacitor, farads")->check(CLI::PositiveNumber);
  app.add_option("--frequency", frequency, "drive frequency, hertz")->check(CLI::PositiveNumber);
  app.add_option("--volts-peak", volts, "drive amplitude, volts peak")->check(CLI::PositiveNumber);
  app.add_option("--load-amps", load_amps, "constant-current load, amps (0 = off)")->check(CLI::NonNegativeNumber);
  app.add_option("--settle-fraction", settle_fraction, "ngspice runs until the output is this close (relative)")
      ->check(CLI::PositiveNumber);
  app.add_option("--repeats", repeats, "steady-state solves to time (the fastest counts)")->check(CLI::Range(1, 100));
  app.add_option("--ngspice", ngspice, "the ngspice binary");
  CLI11_PARSE(app, argc, argv);

  const CascadeCircuit circuit = CascadeCircuit::uniform(stages, capacitance);
  DriveSettings drive;
  drive.frequency_hz = frequency;
  drive.amplitude_volts_peak = volts;
  drive.output_on = true;
  LoadSettings load;
  load.current_amps = load_amps;
  load.input_on = load_amps > 0.0;

  std::printf("circuit: %d-stage Cockcroft-Walton cascade, %g F per capacitor, diodes IS=%g N=%g RS=%g, "
              "%g ohm source, %g ohm meter\n",
              stages, capacitance, circuit.diodes[0].saturation_current_amps, circuit.diodes[0].emission_coefficient,
              circuit.diodes[0].series_ohms, circuit.source_output_ohms, circuit.meter_input_ohms);
  std::printf("drive %g V peak at %g Hz, CC load %g A\n\n", volts, frequency, load_amps);

  // 1. Shooting-Newton.
  PeriodicSolution solution;
  double pss_cpu = 1e300;
  double pss_wall = 1e300;
  for (int i = 0; i < repeats; ++i) {
    const double cpu0 = cpu_seconds();
    const double wall0 = wall_seconds();
    solution = solve_periodic_steady_state(circuit, drive, load);
    pss_cpu = std::min(pss_cpu, cpu_seconds() - cpu0);
    pss_wall = std::min(pss_wall, wall_seconds() - wall0);
  }
  if (!solution.converged) {
    std::fprintf(stderr, "zout-sim-bench: the steady state did not converge (residual %g V)\n", solution.residual_volts);
    return 1;
  }

  // 2. How long the transient from discharged capacitors takes to get there (for ngspice).
  UnitSimulation simulation(circuit);
  simulation.set_load(load);
  simulation.set_drive(drive);
  const double settle = simulation.settle_time_s(settle_fraction * std::abs(solution.dc_volts));
  const double stop = settle + 10.0 / frequency;

  // 3. ngspice on the same netlist.
  char pattern[] = "/tmp/zout-sim-bench-XXXXXX";
  if (::mkdtemp(pattern) == nullptr) {
    std::perror("zout-sim-bench: mkdtemp");
    return 1;
  }
  const std::filesystem::path dir(pattern);
  SpiceRun spice;
  spice.stop_time_s = stop;
  const std::string deck = (dir / "cascade.cir").string();
  const std::string log = (dir / "ngspice.log").string();
  std::ofstream(deck) << spice_netlist(circuit, drive, load, spice);
  const double child0 = children_cpu_seconds();
  const double wall0 = wall_seconds();
  const int status = run({ngspice, "-b", deck}, log);
  const double spice_wall = wall_seconds() - wall0;
  const double spice_cpu = children_cpu_seconds() - child0;
  std::stringstream text;
  text << std::ifstream(log).rdbuf();
  const auto measured = parse_spice_measurements(text.str());
  std::error_code ignored;
  std::filesystem::remove_all(dir, ignored);
  if (status != 0 || measured.count("out_avg") == 0 || measured.count("out_pp") == 0) {
    std::fprintf(stderr, "zout-sim-bench: ngspice failed (exit %d):\n%s\n", status, text.str().c_str());
    return 1;
  }
  const double spice_dc = measured.at("out_avg");
  const double spice_pp = measured.at("out_pp");

  const double dc_diff = percent(solution.dc_volts, spice_dc);
  const double pp_diff = percent(solution.ripple_pp_volts, spice_pp);
  std::printf("%-34s %14s %14s\n", "", "shooting-Newton", "ngspice .tran");
  std::printf("%-34s %14.6f %14.6f   %+.3f %%\n", "DC output, V", solution.dc_volts, spice_dc, dc_diff);
  std::printf("%-34s %14.6f %14.6f   %+.3f %%\n", "ripple, V peak-to-peak", solution.ripple_pp_volts, spice_pp, pp_diff);
  std::printf("%-34s %14.4f %14.4f\n", "CPU time, s", pss_cpu, spice_cpu);
  std::printf("%-34s %14.4f %14.4f\n", "wall time, s", pss_wall, spice_wall);
  std::printf("%-34s %14d %14.0f\n", "drive cycles integrated", solution.cycle_integrations, stop * frequency);
  std::printf("\nngspice simulated %.4f s (%.0f cycles): the transient from discharged capacitors to within %g of\n"
              "the output (%.4f s), plus 10 cycles; .tran maximum step 1/(200 f), reltol 1e-4.\n",
              stop, stop * frequency, settle_fraction, settle);
  const double ratio = spice_cpu / pss_cpu;
  const double agreement = std::max(std::abs(dc_diff), 0.0);
  std::printf("speed ratio (CPU): %.1f x   (wall: %.1f x)   DC agreement: %.3f %%   ripple agreement: %.2f %%\n", ratio,
              spice_wall / pss_wall, agreement, std::abs(pp_diff));
  std::printf("target >= 20 x at <= 0.5 %% DC agreement: %s\n",
              ratio >= 20.0 && agreement <= 0.5 ? "met" : "NOT met");
  return 0;
}
