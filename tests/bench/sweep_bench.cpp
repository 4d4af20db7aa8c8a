// zout-sweep-bench: how close zoutd's sweeps come to the physics, and whether its memory stays
// flat over a long soak. Real processes throughout: zout-sim on loopback TCP and zoutd on a
// temporary database and socket. Run by scripts/bench-sweep; prints figures, asserts nothing.
//
//  1. Ground truth: the bench tool drives the simulated instruments itself, step by step through
//     the plan, and asks the simulator after each change how long the unit takes to settle within
//     the plan's tolerance (truth.settle_time_s) and its slowest time constant. The physical
//     limit of the run is the sum over steps of that settle time plus one DC meter integration.
//  2. zoutd runs the plan as written (its settling detector); wall time from `running` to the end.
//  3. zoutd runs the same plan with a fixed dwell of five of the slowest time constants per step.
//  4. Soak: a few hundred short sweeps on the same board without its output filter; the
//     daemon's RSS after the first ten sweeps against its peak RSS at the end.
// The unit is taken out and put back (discharged) before each timed run, so each starts cold.

#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <map>
#include <memory>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>
#include <unistd.h>

#include "daemon/api/control_client.h"
#include "daemon/engine/bench_connection.h"
#include "daemon/plan/bench_config.h"
#include "daemon/plan/plan.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/address.h"
#include "drivers/transport/transport_factory.h"
#include "tests/support/sim_process.h"

using namespace zout;
using namespace std::chrono_literals;
using nlohmann::json;
using Clock = std::chrono::steady_clock;

namespace {

json read_json(const std::string& path) {
  std::ifstream in(path);
  if (!in) throw std::runtime_error("cannot read " + path);
  return json::parse(in);
}

void write_json(const std::string& path, const json& value) { std::ofstream(path) << value.dump(2) << "\n"; }

double seconds(Clock::duration d) { return std::chrono::duration<double>(d).count(); }

// One zout-sim process and a line session on its control channel.
struct Simulator {
  Simulator(const std::string& config_path)
      : process({ZOUT_SIM_PATH, "--config", config_path, "--port-base", "0"}, 20s),
        addresses(json::parse(process.ready_line())),
        control(make_transport(parse_address(addresses.at("control").get<std::string>())), 10'000ms) {}

  json call(const json& request) {
    json reply = json::parse(control.query(request.dump()));
    if (reply.value("ok", false) != true) throw std::runtime_error("zout-sim control: " + reply.dump());
    return reply;
  }

  // Takes the unit out of its slot and puts it back: it is then discharged.
  void reseat(int slot, const json& unit) {
    call({{"op", "remove_unit"}, {"slot", slot}});
    json insert = {{"op", "insert_unit"}, {"slot", slot}, {"serial", unit.at("serial")}};
    if (unit.contains("fault")) insert["fault"] = unit.at("fault");
    call(insert);
  }

  test::SimProcess process;
  json addresses;
  Session control;
};

// A bench file for `sim` in `dir`, with the safety maxima of the shipped simulated bench.
std::string write_bench(const std::string& dir, const Simulator& sim) {
  json bench = read_json(std::string(ZOUT_SOURCE_DIR) + "/config/bench.sim.json");
  bench["station"] = "bench-sweep";
  bench["database"] = "zout.db";
  bench["control"]["socket"] = "zoutd.sock";
  for (const char* role : {"source", "meter", "load", "switch"}) {
    bench["instruments"][role]["address"] = sim.addresses.at(role);
    bench["instruments"][role]["dialect"] = std::string(ZOUT_SOURCE_DIR) + "/config/dialects/scpi-" + role + ".json";
  }
  const std::string path = dir + "/bench.json";
  write_json(path, bench);
  return path;
}

struct StepTruth {
  double set_amps = 0.0;
  double settle_s = 0.0;        // the unit's own time to settle within the plan's tolerance
  double time_constant_s = 0.0; // the slowest decay under this step's settings
};

// Part 1: steps the load through the plan by hand and asks the simulator for ground truth.
std::vector<StepTruth> ground_truth(Simulator& sim, const std::string& bench_path, const Plan& plan, int slot) {
  const BenchConfig config = load_bench_file(bench_path);
  BenchConnection bench(config);
  bench.connect();
  if (!bench.enter_safe_state().empty()) throw std::runtime_error("ground truth: bench not safe");
  bench.panel_switch()->close_slot(slot);
  bench.source().select_sine();
  bench.source().set_frequency_hz(plan.source.frequency_hz);
  bench.source().set_amplitude_volts_peak(plan.source.amplitude_volts_peak);
  bench.source().set_offset_volts(plan.source.offset_volts);
  bench.load().select_mode(LoadMode::constant_current);
  bench.load().set_current_amps(plan.load.steps[0]);
  bench.load().set_input(true);
  // Commands travel on other links than the truth request: *OPC? makes sure they have acted.
  const auto acted = [&](const char* role) { bench.session(role).query("*OPC?"); };
  acted("switch");
  acted("load");

  const json ask = {{"op", "truth"}, {"tolerance_volts", plan.settle.tolerance_volts}};
  std::vector<StepTruth> steps;
  for (std::size_t k = 0; k < plan.load.steps.size(); ++k) {
    if (k == 0) {
      bench.source().set_output(true);  // step 0 settles from the drive switching on
      acted("source");
    } else {
      bench.load().set_current_amps(plan.load.steps[k]);
      acted("load");
    }
    const auto changed = Clock::now();
    const json truth = sim.call(ask);
    StepTruth step;
    step.set_amps = plan.load.steps[k];
    step.settle_s = truth.at("settle_time_s").is_number() ? truth.at("settle_time_s").get<double>() : INFINITY;
    step.time_constant_s =
        truth.at("time_constant_s").is_number() ? truth.at("time_constant_s").get<double>() : INFINITY;
    steps.push_back(step);
    if (!std::isfinite(step.settle_s)) {
      throw std::runtime_error(fmt::format("step {} never settles: {}", k + 1, truth.dump()));
    }
    // Let the simulated time pass, so the next step starts where a real run would.
    std::this_thread::sleep_until(changed + std::chrono::duration_cast<Clock::duration>(
                                                std::chrono::duration<double>(step.settle_s + 0.05)));
  }
  bench.enter_safe_state();
  return steps;
}

// zoutd on a bench file, with a subscribed control client.
struct Daemon {
  Daemon(const std::string& bench_path, const std::string& dir)
      : process({ZOUTD_PATH, "--bench", bench_path}, 20s), client(dir + "/zoutd.sock") {
    client.call("events.subscribe", json::object());
  }

  long status_kib(const std::string& field) const {
    std::ifstream in("/proc/" + std::to_string(process.pid()) + "/status");
    std::string line;
    while (std::getline(in, line)) {
      if (line.rfind(field + ":", 0) == 0) return std::stol(line.substr(field.size() + 1));
    }
    return -1;
  }

  test::SimProcess process;
  ControlClient client;
};

struct TimedRun {
  std::string state;
  double wall_s = 0.0;                 // from `running` to the final state
  std::vector<double> step_s;          // from one point to the next (the first: from `running`)
  std::vector<double> settle_s;        // the detector's own settle time per point
  std::vector<double> dc_volts;        // each point's DC value
};

// Runs `plan` on one unit and follows it to the end. `on_sweep` sees each sweep.result.
TimedRun timed_run(Daemon& daemon, const json& plan, const json& unit, int slot, std::chrono::seconds limit,
                   const std::function<void(const json&)>& on_sweep = {}) {
  const json params = {{"plan", plan}, {"units", json::array({{{"serial", unit.at("serial")}, {"slot", slot}}})},
                       {"operator", "bench-sweep"}};
  const auto run_id = daemon.client.call("run.start", params).at("run_ids").at(0).get<std::int64_t>();
  TimedRun run;
  Clock::time_point running{};
  Clock::time_point last{};
  const auto deadline = Clock::now() + limit;
  while (Clock::now() < deadline) {
    const auto message = daemon.client.next_notification(500ms);
    if (!message) continue;
    const auto now = Clock::now();
    const std::string method = message->at("method");
    const json& p = message->at("params");
    if (p.value("run_id", std::int64_t{-1}) != run_id) continue;
    if (method == "run.state") {
      const std::string state = p.at("state");
      if (state == "running") running = last = now;
      if (state != "queued" && state != "running") {
        run.state = state;
        run.wall_s = seconds(now - running);
        return run;
      }
    } else if (method == "point") {
      run.step_s.push_back(seconds(now - last));
      run.settle_s.push_back(p.at("settle_s").get<double>());
      run.dc_volts.push_back(p.at("dc_volts").get<double>());
      last = now;
    } else if (method == "sweep.result" && on_sweep) {
      on_sweep(p);
    }
  }
  throw std::runtime_error(fmt::format("run {} did not end within {} s", run_id, limit.count()));
}

std::string make_temp_dir() {
  const auto dir = std::filesystem::temp_directory_path() / ("zout-bench-sweep-" + std::to_string(::getpid()));
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir.string();
}

}  // namespace

int main(int argc, char** argv) {
  CLI::App app{"zout-sweep-bench: zoutd's sweep time against the physical limit, and its RSS over a soak"};
  std::string sim_config = std::string(ZOUT_SOURCE_DIR) + "/config/sim/demo.json";
  std::string plan_path = std::string(ZOUT_SOURCE_DIR) + "/config/plans/bias-board-production.json";
  int slot = 1;
  int soak_sweeps = 250;
  bool skip_fixed = false;
  bool keep = false;
  app.add_option("--sim-config", sim_config, "simulated bench")->check(CLI::ExistingFile);
  app.add_option("--plan", plan_path, "plan to time")->check(CLI::ExistingFile);
  app.add_option("--slot", slot, "panel slot of the unit")->check(CLI::Range(1, 64));
  app.add_option("--soak-sweeps", soak_sweeps, "short sweeps of the RSS soak (0: skip it)")->check(CLI::Range(0, 100000));
  app.add_flag("--skip-fixed", skip_fixed, "skip the fixed-dwell comparison run");
  app.add_flag("--keep", keep, "keep the temporary directory (databases, bench files) and print its path");
  CLI11_PARSE(app, argc, argv);

  try {
    const std::string dir = make_temp_dir();
    const json sim_json = read_json(sim_config);
    json unit;
    for (const auto& u : sim_json.at("panel")) {
      if (u.at("slot") == slot) unit = u;
    }
    if (unit.is_null()) throw std::runtime_error(fmt::format("{} has no unit in slot {}", sim_config, slot));
    const Plan plan = load_plan_file(plan_path);
    const json plan_json = read_json(plan_path);
    const double line_hz = sim_json.value("/meter/line_frequency_hz"_json_pointer, 50.0);
    const double integration_s = plan.measure.dc_nplc / line_hz;

    fmt::print("bench-sweep: plan {} ({} steps), unit {} in slot {} of {}\n", plan.name, plan.load.steps.size(),
               unit.at("serial").get<std::string>(), slot, sim_config);

    Simulator sim(sim_config);
    const std::string bench_path = write_bench(dir, sim);

    // 1. Ground truth.
    sim.reseat(slot, unit);
    const auto truth = ground_truth(sim, bench_path, plan, slot);
    double limit_s = 0.0;
    double slowest_tau_s = 0.0;
    for (const auto& step : truth) {
      limit_s += step.settle_s + integration_s;
      slowest_tau_s = std::max(slowest_tau_s, step.time_constant_s);
    }

    // 2. The plan as written; 3. a fixed dwell of five time constants.
    Daemon daemon(bench_path, dir);
    const double step_count = static_cast<double>(plan.load.steps.size());
    const auto run_limit = std::chrono::seconds(static_cast<long>(60.0 + 3.0 * step_count * plan.settle.max_s));
    sim.reseat(slot, unit);
    const TimedRun detected = timed_run(daemon, plan_json, unit, slot, run_limit);
    TimedRun fixed;
    const double dwell_s = 5.0 * slowest_tau_s;
    if (!skip_fixed) {
      json fixed_plan = plan_json;
      fixed_plan["name"] = plan.name + "-fixed-dwell";
      fixed_plan["settle"] = {{"method", "fixed"}, {"dwell_s", dwell_s},
                              {"tolerance_volts", plan.settle.tolerance_volts}, {"max_s", dwell_s + 1.0}};
      sim.reseat(slot, unit);
      fixed = timed_run(daemon, fixed_plan, unit, slot, run_limit + std::chrono::seconds(static_cast<long>(
                                                                         12.0 * dwell_s * step_count)));
    }

    // Seconds per column; "fixed - settled" is how far the fixed-dwell point's DC value lies from
    // the settled one (the same unit, reseated between the runs; meter noise about 1 mV).
    fmt::print("\n{:>4} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>15}\n", "step", "load A", "truth", "tau",
               "zoutd", "settled", "fixed", "fixed-settled");
    fmt::print("{:>4} {:>8} {:>8} {:>8} {:>8} {:>8} {:>8} {:>15}\n", "", "", "settle s", "s", "step s",
               "after s", "step s", "V");
    double worst_fixed_error_volts = 0.0;
    for (std::size_t k = 0; k < truth.size(); ++k) {
      const auto at = [&](const std::vector<double>& v) { return k < v.size() ? fmt::format("{:.3f}", v[k]) : "-"; };
      std::string error = "-";
      if (k < fixed.dc_volts.size() && k < detected.dc_volts.size()) {
        const double difference = fixed.dc_volts[k] - detected.dc_volts[k];
        worst_fixed_error_volts = std::max(worst_fixed_error_volts, std::abs(difference));
        error = fmt::format("{:+.3f}", difference);
      }
      fmt::print("{:>4} {:>8.3g} {:>8.3f} {:>8.4f} {:>8} {:>8} {:>8} {:>15}\n", k + 1, truth[k].set_amps,
                 truth[k].settle_s, truth[k].time_constant_s, at(detected.step_s), at(detected.settle_s),
                 at(fixed.step_s), error);
    }
    fmt::print("\nDC integration {:.3f} s per reading ({} NPLC at {} Hz); plan tolerance {} V\n", integration_s,
               plan.measure.dc_nplc, line_hz, plan.settle.tolerance_volts);
    fmt::print("physical limit (sum of truth settle + one integration): {:8.2f} s\n", limit_s);
    fmt::print("zoutd, settle method {:<10} ({}):           {:8.2f} s   ratio {:.2f}  (target <= 1.5)\n",
               plan_json.at("settle").at("method").get<std::string>(), detected.state, detected.wall_s,
               detected.wall_s / limit_s);
    if (!skip_fixed) {
      fmt::print("zoutd, fixed dwell 5 tau = {:.3f} s ({}):      {:8.2f} s   ratio {:.2f}\n", dwell_s, fixed.state,
                 fixed.wall_s, fixed.wall_s / limit_s);
      double slowest_settle_s = 0.0;
      for (const auto& step : truth) slowest_settle_s = std::max(slowest_settle_s, step.settle_s);
      fmt::print("  the fixed dwell leaves points up to {:.3f} V from settled (plan tolerance {} V); a dwell covering "
                 "every step\n  ({:.3f} s, the slowest truth settle) would take about {:.1f} s, ratio {:.2f}\n",
                 worst_fixed_error_volts, plan.settle.tolerance_volts, slowest_settle_s,
                 fixed.wall_s + step_count * (slowest_settle_s - dwell_s),
                 (fixed.wall_s + step_count * (slowest_settle_s - dwell_s)) / limit_s);
    }
    std::cout << std::flush;

    // 4. RSS over a soak of short sweeps, on the board without its slow output filter.
    if (soak_sweeps > 0) {
      json fast_sim = sim_json;
      if (fast_sim.contains("dut")) fast_sim["dut"].erase("filter");
      write_json(dir + "/fast-sim.json", fast_sim);
      const std::string soak_dir = dir + "/soak";
      std::filesystem::create_directories(soak_dir);
      Simulator soak_sim(dir + "/fast-sim.json");
      const std::string soak_bench = write_bench(soak_dir, soak_sim);
      Daemon soak_daemon(soak_bench, soak_dir);
      json soak_plan = plan_json;
      soak_plan["name"] = "bench-sweep-rss-soak";
      soak_plan["load"]["steps_amps"] = {0, 2e-5, 1e-4, 2e-4};
      soak_plan["load"]["rated_amps"] = 2e-4;
      soak_plan["impedance"]["fit_max_amps"] = 1e-4;
      soak_plan["settle"] = {{"method", "window"}, {"tolerance_volts", 0.1}, {"max_s", 5}, {"window_readings", 2}};
      soak_plan["measure"]["dc"]["nplc"] = 0.2;
      soak_plan["measure"]["dc"]["samples"] = 2;
      soak_plan["measure"]["ripple"]["at"] = "rated_step";
      soak_plan["limits"] = json::object();
      soak_plan["repeat"] = {{"count", soak_sweeps}, {"interval_s", 0}, {"baseline_sweeps", 5}};
      long rss_after_ten_kib = -1;
      std::vector<std::pair<int, long>> rss_trail;  // (sweep, VmRSS KiB) at 10, 20, 40, 80, ...
      const auto started = Clock::now();
      const TimedRun soak = timed_run(soak_daemon, soak_plan, unit, slot, std::chrono::seconds(60 + 10 * soak_sweeps),
                                      [&](const json& result) {
                                        const int sweep = result.at("sweep").get<int>();
                                        if (sweep == 10) rss_after_ten_kib = soak_daemon.status_kib("VmRSS");
                                        const int tens = sweep / 10;
                                        if (sweep % 10 == 0 && tens > 0 && (tens & (tens - 1)) == 0) {
                                          rss_trail.emplace_back(sweep, soak_daemon.status_kib("VmRSS"));
                                        }
                                      });
      const long peak_kib = soak_daemon.status_kib("VmHWM");
      const long rss_end_kib = soak_daemon.status_kib("VmRSS");
      fmt::print("\nsoak: {} sweeps of {} steps in {:.1f} s ({})\n", soak_sweeps, 4, seconds(Clock::now() - started),
                 soak.state);
      fmt::print("zoutd RSS after 10 sweeps {} KiB; peak RSS after {} sweeps {} KiB (now {} KiB); growth {:+.1f}% "
                 "(target < 10%)\n",
                 rss_after_ten_kib, soak_sweeps, peak_kib, rss_end_kib,
                 100.0 * (static_cast<double>(peak_kib) - static_cast<double>(rss_after_ten_kib)) /
                     static_cast<double>(rss_after_ten_kib));
      std::string trail;
      for (const auto& [sweep, kib] : rss_trail) trail += fmt::format("  {}:{}", sweep, kib);
      fmt::print("RSS KiB by sweep:{}\n", trail);
    }
    if (keep) {
      fmt::print("kept {}\n", dir);
    } else {
      std::filesystem::remove_all(dir);
    }
    return 0;
  } catch (const std::exception& e) {
    std::cerr << "zout-sweep-bench: " << e.what() << "\n";
    return 1;
  }
}
