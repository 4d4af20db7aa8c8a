// zout-sim: the simulated bench (drivers/sim/README.md). Serves a function generator, a DMM, an
// electronic load and a slot switch over SCPI on loopback TCP (and pseudo-terminals with
// --pty), wired to a panel of simulated voltage multipliers; or, with --solve, prints one
// unit's periodic steady state and exits. See drivers/sim/README.md.

#include <signal.h>
#include <stdlib.h>
#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <iostream>
#include <optional>

#include <CLI/CLI.hpp>
#include <asio.hpp>
#include <nlohmann/json.hpp>

#include "drivers/sim/bench/sim_bench.h"
#include "drivers/sim/bench/sim_config.h"
#include "drivers/sim/bench/unit_builder.h"
#include "drivers/sim/circuit/periodic_steady_state.h"

namespace {

constexpr int exit_ok = 0;
constexpr int exit_failure = 1;
constexpr int exit_usage = 2;

int solve(const zout::sim::SimConfig& config, double frequency_hz, double amplitude_volts_peak, double load_amps,
          int slot) {
  using namespace zout::sim;
  const PanelEntry* entry = nullptr;
  for (const auto& candidate : config.panel) {
    if (candidate.slot == slot) entry = &candidate;
  }
  if (entry == nullptr) {
    std::cerr << "zout-sim: " << config.origin << ": no unit in slot " << slot << "\n";
    return exit_usage;
  }
  DriveSettings drive;
  drive.frequency_hz = frequency_hz;
  drive.amplitude_volts_peak = amplitude_volts_peak;
  drive.output_on = true;
  LoadSettings load;
  load.mode = LoadMode::constant_current;
  load.current_amps = load_amps;
  load.input_on = load_amps > 0.0;
  const PeriodicSolution solution =
      solve_periodic_steady_state(build_unit_circuit(config, entry->serial, entry->fault), drive, load);
  const nlohmann::json out = {{"slot", slot},
                              {"serial", entry->serial},
                              {"fault", to_string(entry->fault)},
                              {"frequency_hz", frequency_hz},
                              {"amplitude_volts_peak", amplitude_volts_peak},
                              {"load_amps", load_amps},
                              {"converged", solution.converged},
                              {"dc_volts", solution.dc_volts},
                              {"ripple_pp_volts", solution.ripple_pp_volts},
                              {"ripple_rms_volts", solution.ripple_rms_volts},
                              {"load_current_amps", solution.load_current_amps},
                              {"input_power_watts", solution.input_power_watts},
                              {"newton_iterations", solution.newton_iterations}};
  std::cout << out.dump() << std::endl;
  if (!solution.converged) {
    std::cerr << "zout-sim: the periodic steady state did not converge (residual " << solution.residual_volts
              << " V)\n";
    return exit_failure;
  }
  return exit_ok;
}

// A fresh directory for the pseudo-terminal links; removed again on exit.
std::string make_pty_directory() {
  const char* base = std::getenv("TMPDIR");
  std::string pattern = std::string(base != nullptr && *base != '\0' ? base : "/tmp") + "/zout-sim-XXXXXX";
  if (::mkdtemp(pattern.data()) == nullptr) throw std::runtime_error("cannot create a directory for --pty links");
  return pattern;
}

int serve(zout::sim::SimConfig config, bool pty, int port_base) {
  using namespace zout::sim;
  // A write to a client that has gone must fail with an error, not kill the process.
  ::signal(SIGPIPE, SIG_IGN);
  asio::io_context io;
  SimBenchOptions options;
  options.port_base = static_cast<std::uint16_t>(port_base);
  options.pty = pty;
  if (pty) options.pty_directory = make_pty_directory();
  int code = exit_ok;
  {
    std::optional<SimBench> bench;
    try {
      bench.emplace(io, std::move(config), options);
    } catch (const std::exception& e) {
      std::cerr << "zout-sim: cannot start: " << e.what() << "\n";
      code = exit_failure;
    }
    if (bench) {
      asio::signal_set signals(io, SIGINT, SIGTERM);
      signals.async_wait([&](const asio::error_code& ec, int) {
        if (ec) return;
        bench->stop();
        io.stop();
      });
      // The ready line: one JSON object with every address, then nothing more on stdout.
      std::cout << bench->addresses().dump() << std::endl;
      // A handler that throws is a bug, but one client's bad luck must not take the bench
      // down for the others: report it and carry on.
      for (;;) {
        try {
          io.run();
          break;
        } catch (const std::exception& e) {
          std::cerr << "zout-sim: internal error (continuing): " << e.what() << "\n";
        }
      }
    }
  }
  if (pty) {
    std::error_code ignored;
    std::filesystem::remove_all(options.pty_directory, ignored);
  }
  return code;
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"zout-sim: the simulated bench (SCPI function generator, DMM, electronic load and slot switch "
               "wired to a panel of simulated voltage multipliers)"};
  std::string config_path;
  bool pty = false;
  int port_base = 0;
  bool solve_only = false;
  double frequency_hz = 0.0;
  double amplitude_volts_peak = 0.0;
  double load_amps = 0.0;
  int slot = 1;
  app.add_option("--config", config_path, "sim config file (config/sim/*.json)")->required();
  app.add_flag("--pty", pty, "also serve each instrument on a pseudo-terminal");
  app.add_option("--port-base", port_base,
                 "TCP port of the source; meter, load, switch and control follow (0 = free ports)")
      ->check(CLI::Range(0, 65531));
  auto* solve_flag = app.add_flag("--solve", solve_only, "print one unit's periodic steady state as JSON and exit");
  auto* frequency = app.add_option("--frequency-hz", frequency_hz, "--solve: drive frequency")
                        ->check(CLI::Range(1e-3, 1e8));
  auto* amplitude = app.add_option("--amplitude-volts-peak", amplitude_volts_peak, "--solve: drive amplitude")
                        ->check(CLI::Range(0.0, 1e5));
  auto* load = app.add_option("--load-amps", load_amps, "--solve: constant load current")->check(CLI::Range(0.0, 10.0));
  auto* slot_option = app.add_option("--slot", slot, "--solve: the panel slot whose unit to solve (default 1)")
                          ->check(CLI::Range(1, 64));
  for (auto* option : {frequency, amplitude, load, slot_option}) option->needs(solve_flag);
  try {
    app.parse(argc, argv);
    if (solve_only && (frequency->count() == 0 || amplitude->count() == 0 || load->count() == 0)) {
      throw CLI::ValidationError("--solve", "needs --frequency-hz, --amplitude-volts-peak and --load-amps");
    }
    if (solve_only && (pty || app.count("--port-base") > 0)) {
      throw CLI::ExcludesError("--solve", "--pty/--port-base");
    }
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? exit_ok : exit_usage;
  }

  zout::sim::SimConfig config;
  try {
    config = zout::sim::SimConfig::load_file(config_path);
  } catch (const zout::sim::SimConfigError& e) {
    std::cerr << "zout-sim: " << e.what() << "\n";
    return exit_usage;
  }
  try {
    if (solve_only) return solve(config, frequency_hz, amplitude_volts_peak, load_amps, slot);
    return serve(std::move(config), pty, port_base);
  } catch (const std::exception& e) {
    std::cerr << "zout-sim: " << e.what() << "\n";
    return exit_failure;
  }
}
