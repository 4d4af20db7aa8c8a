#pragma once
// A simulated bench for integration tests: zout-sim (fast demo-like board, with pseudo-terminal
// side links) and zoutd on a temporary directory, driven over the control socket like the
// client does. Shared by the daemon and CLI tests.
#include <catch2/catch.hpp>

#include <signal.h>
#include <sqlite3.h>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <memory>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "daemon/api/control_client.h"
#include "drivers/scpi/response.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/transport_factory.h"
#include "tests/support/child_process.h"
#include "tests/support/sim_process.h"

namespace zout::test {

using namespace std::chrono_literals;
using zout::ControlClient;
using zout::Session;
using nlohmann::json;


// The demo board's cascade without its slow output filter, so steps settle in tens of
// milliseconds; one good unit and the two fault kinds.
inline json sim_config() {
  return json::parse(R"({
    "seed": 11,
    "dut": {"stages": 5, "capacitance_farads": 47e-9, "capacitor_tolerance": 0.05,
            "diode": {"saturation_current_amps": 2e-9, "emission_coefficient": 1.9, "series_ohms": 5}},
    "meter": {"range_volts": 1000, "noise_volts": 0.001},
    "panel": [{"slot": 1, "serial": "IT-0001"}, {"slot": 2, "serial": "IT-0002", "fault": "weak_capacitor"},
              {"slot": 3, "serial": "IT-0003", "fault": "leaky_diode"}]
  })");
}

// Limits set from `zout-sim --solve` of this config: the good unit gives V_oc 388.8 V,
// R 105 kΩ (C_eff 45 nF) and AC RMS 1.49 V at 200 µA; the weak capacitor R 132 kΩ (36 nF),
// RMS 2.71 V; the leaky diode V_oc 383.1 V, RMS 2.01 V.
inline json test_plan(int sweeps = 1) {
  json plan = json::parse(R"({
    "name": "daemon-test",
    "dut": {"model": "test board", "stages": 5, "capacitance_farads": 47e-9},
    "source": {"frequency_hz": 20000, "amplitude_volts_peak": 40},
    "load": {"mode": "current", "steps_amps": [0, 1e-5, 2e-5, 5e-5, 1e-4, 1.5e-4, 2e-4], "rated_amps": 2e-4},
    "settle": {"method": "window", "tolerance_volts": 0.05, "max_s": 5, "window_readings": 3},
    "measure": {"dc": {"nplc": 1, "samples": 3, "range_volts": 1000}, "ripple": {"method": "ac_rms", "range_volts": 10}},
    "impedance": {"fit_max_amps": 5e-5},
    "limits": {"v_oc_min_volts": 386, "v_oc_max_volts": 400, "effective_capacitance_min_farads": 40e-9,
               "ripple_pp_max_volts": 6.0}
  })");
  plan["repeat"] = {{"count", sweeps}, {"interval_s", 0}, {"baseline_sweeps", 2}};
  return plan;
}

inline std::string fresh_dir() {
  static std::atomic<int> counter{0};
  const auto dir = std::filesystem::temp_directory_path() /
                   ("zout-daemon-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir.string();
}

inline void write_json(const std::string& path, const json& value) { std::ofstream(path) << value.dump(2); }

// One simulated bench (with pseudo-terminals for side checks) and one daemon on it.
struct Bench {
  Bench()
      : dir(fresh_dir()),
        sim_config_path((write_json(dir + "/sim.json", sim_config()), dir + "/sim.json")),
        sim({ZOUT_SIM_PATH, "--config", sim_config_path, "--port-base", "0", "--pty"}, 10s),
        ready(json::parse(sim.ready_line())),
        control(make_transport(parse_address(ready.at("control").get<std::string>())), 5000ms) {
    const std::string dialects = std::string(ZOUT_SOURCE_DIR) + "/config/dialects/";
    json bench = {{"station", "test-bench"},
                  {"database", "zout.db"},
                  {"control", {{"socket", "zoutd.sock"}}},
                  {"instruments", json::object()},
                  {"safety", {{"max_output_volts", 450}, {"max_load_amps", 0.001}, {"max_source_volts_peak", 45}}}};
    for (const char* role : {"source", "meter", "load", "switch"}) {
      bench["instruments"][role] = {{"address", ready.at(role)},
                                    {"dialect", dialects + "scpi-" + role + ".json"},
                                    {"timeout_ms", 1000}};
    }
    bench_path = dir + "/bench.json";
    write_json(bench_path, bench);
    write_json(dir + "/plan.json", test_plan());
    start_daemon();
  }

  void start_daemon() {
    daemon = std::make_unique<SimProcess>(std::vector<std::string>{ZOUTD_PATH, "--bench", bench_path}, 15s);
    client = std::make_unique<ControlClient>(dir + "/zoutd.sock");
  }

  // A control request to the simulator; the reply must be ok.
  json sim_call(const json& request) {
    json reply = json::parse(control.query(request.dump()));
    INFO(reply.dump());
    REQUIRE(reply.at("ok") == true);
    return reply;
  }

  // Queues runs and returns their ids.
  std::vector<std::int64_t> start(const json& units, const json& plan = nullptr) {
    json params = {{"units", units}, {"operator", "test"}};
    if (plan.is_null()) {
      params["plan_path"] = dir + "/plan.json";
    } else {
      params["plan"] = plan;
    }
    return client->call("run.start", params).at("run_ids").get<std::vector<std::int64_t>>();
  }

  // Waits for the run's final state from notifications (the client must have subscribed).
  std::string wait_final(std::int64_t run_id, std::chrono::seconds timeout, std::vector<json>* seen = nullptr) {
    const auto deadline = std::chrono::steady_clock::now() + timeout;
    while (std::chrono::steady_clock::now() < deadline) {
      auto message = client->next_notification(500ms);
      if (!message) continue;
      if (seen) seen->push_back(*message);
      const auto& params = message->at("params");
      if (message->at("method") == "run.state" && params.at("run_id") == run_id) {
        const std::string state = params.at("state");
        if (state != "queued" && state != "running") return state;
      }
    }
    return "(timeout)";
  }

  // The state a pseudo-terminal side check reads from an instrument.
  bool instrument_state_on(const std::string& role, const std::string& query) {
    Session session(make_transport(parse_address(ready.at("pty").at(role).get<std::string>())), 2000ms);
    return parse_boolean(session.query(query));
  }

  // One value from the database, read with SQLite directly.
  json db_value(const std::string& sql) {
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open_v2((dir + "/zout.db").c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK);
    sqlite3_stmt* stmt = nullptr;
    REQUIRE(sqlite3_prepare_v2(db, sql.c_str(), -1, &stmt, nullptr) == SQLITE_OK);
    json value;
    if (sqlite3_step(stmt) == SQLITE_ROW) {
      switch (sqlite3_column_type(stmt, 0)) {
        case SQLITE_INTEGER: value = sqlite3_column_int64(stmt, 0); break;
        case SQLITE_FLOAT: value = sqlite3_column_double(stmt, 0); break;
        case SQLITE_NULL: break;
        default: value = std::string(reinterpret_cast<const char*>(sqlite3_column_text(stmt, 0)));
      }
    }
    sqlite3_finalize(stmt);
    sqlite3_close(db);
    return value;
  }

  std::string dir;
  std::string sim_config_path;
  SimProcess sim;
  json ready;
  Session control;
  std::string bench_path;
  std::unique_ptr<SimProcess> daemon;
  std::unique_ptr<ControlClient> client;
};

inline json solve(const Bench& bench, int slot, double load_amps) {
  const auto r = run_child({ZOUT_SIM_PATH, "--solve", "--config", bench.sim_config_path, "--frequency-hz",
                                  "20000", "--amplitude-volts-peak", "40", "--load-amps", std::to_string(load_amps),
                                  "--slot", std::to_string(slot)},
                                 30s);
  REQUIRE(r.exit_code == 0);
  return json::parse(r.out);
}


}  // namespace zout::test
