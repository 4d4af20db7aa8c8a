// zoutd end to end: real zout-sim and zoutd processes on loopback, driven over the control
// socket like the client would, with the database read back afterwards (DEVELOPERS.md: "Run lifecycle", "Control protocol").
#include <catch2/catch.hpp>

#include <set>
#include <thread>

#include "tests/integration/daemon_bench.h"

using namespace zout;
using namespace zout::test;

TEST_CASE("a panel batch runs unattended, faulty units fail for their reason, sqlite3 reads the results",
          "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}},
                                            {{"serial", "IT-0002"}, {"slot", 2}},
                                            {{"serial", "IT-0003"}, {"slot", 3}}}));
  REQUIRE(ids.size() == 3);
  std::vector<json> seen;
  REQUIRE(bench.wait_final(ids[2], 120s, &seen) == "failed");

  const auto state = [&](std::int64_t id) {
    return bench.db_value("SELECT state FROM run WHERE run_id = " + std::to_string(id)).get<std::string>();
  };
  REQUIRE(state(ids[0]) == "passed");
  REQUIRE(state(ids[1]) == "failed");
  const std::string weak = bench.db_value("SELECT verdict_reasons_json FROM run_summary WHERE run_id = " +
                                          std::to_string(ids[1]));
  REQUIRE_THAT(weak, Catch::Contains("effective C ") && Catch::Contains(" nF < 40 nF min"));
  const std::string leaky = bench.db_value("SELECT verdict_reasons_json FROM run_summary WHERE run_id = " +
                                           std::to_string(ids[2]));
  REQUIRE_THAT(leaky, Catch::Contains("V_oc ") && Catch::Contains(" V < 386 V min"));

  // Every point and its readings are in the store: 7 steps per unit, each with readings.
  REQUIRE(bench.db_value("SELECT count(*) FROM point").get<int>() == 21);
  REQUIRE(bench.db_value("SELECT count(*) FROM point p WHERE NOT EXISTS (SELECT 1 FROM reading r WHERE "
                         "r.point_id = p.point_id)")
              .get<int>() == 0);
  REQUIRE(bench.db_value("SELECT count(*) FROM sweep_result").get<int>() == 3);
  int point_notifications = 0;
  for (const auto& m : seen) point_notifications += m.at("method") == "point" ? 1 : 0;
  REQUIRE(point_notifications == 21);

  // The sqlite3 shell (Debian's reference client) reads the views of the file zoutd wrote.
  const auto shell = test::run_child(
      {"/usr/bin/sqlite3", "-readonly", bench.dir + "/zout.db",
       "SELECT serial || '|' || state || '|' || verdict FROM run_summary ORDER BY run_id;"},
      10s);
  REQUIRE(shell.exit_code == 0);
  REQUIRE(shell.out == "IT-0001|passed|pass\nIT-0002|failed|fail\nIT-0003|failed|fail\n");

  // The bench is in safe state after the batch.
  REQUIRE_FALSE(bench.instrument_state_on("load", "INPut:STATe?"));
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
}

TEST_CASE("V_oc and the cascade resistance through the whole chain agree with zout-sim --solve within 2%",
          "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
  REQUIRE(bench.wait_final(ids[0], 60s) == "passed");
  const double v_oc = bench.db_value("SELECT v_oc_volts FROM sweep_result").get<double>();
  const double r_fit = bench.db_value("SELECT cascade_r_ohms FROM sweep_result").get<double>();
  // The simulator's own periodic steady state of the same unit.
  const double v0 = solve(bench, 1, 0.0).at("dc_volts");
  const double v1 = solve(bench, 1, 1e-4).at("dc_volts");
  const double v2 = solve(bench, 1, 2e-4).at("dc_volts");
  const double r_solve = (v1 - v2) / 1e-4;
  INFO("v_oc " << v_oc << " vs " << v0 << "; R " << r_fit << " vs " << r_solve);
  REQUIRE(v_oc == Approx(v0).epsilon(0.02));
  REQUIRE(r_fit == Approx(r_solve).epsilon(0.02));
}

TEST_CASE("a short soak yields drift figures", "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}), test_plan(3));
  REQUIRE(bench.wait_final(ids[0], 90s) == "passed");
  REQUIRE(bench.db_value("SELECT kind FROM run").get<std::string>() == "soak");
  REQUIRE(bench.db_value("SELECT count(*) FROM sweep_result").get<int>() == 3);
  const json slope = bench.db_value(
      "SELECT v_oc_drift_volts_per_hour FROM sweep_result r JOIN sweep s ON s.sweep_id = r.sweep_id "
      "WHERE s.sweep_index = 2");
  REQUIRE(slope.is_number());
  REQUIRE(std::isfinite(slope.get<double>()));
  REQUIRE(bench.db_value("SELECT count(*) FROM soak_trend").get<int>() == 3);
}

TEST_CASE("abort mid-sweep: safe state within one second, run aborted, committed points intact", "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}), test_plan(20));
  int points = 0;
  const auto deadline = std::chrono::steady_clock::now() + 60s;
  while (points < 3 && std::chrono::steady_clock::now() < deadline) {
    auto m = bench.client->next_notification(500ms);
    if (m && m->at("method") == "point") ++points;
  }
  REQUIRE(points == 3);
  const auto asked = std::chrono::steady_clock::now();
  bench.client->call("run.abort", {{"run_id", ids[0]}});
  std::vector<json> seen;
  REQUIRE(bench.wait_final(ids[0], 10s, &seen) == "aborted");
  const auto took = std::chrono::steady_clock::now() - asked;
  REQUIRE(took < 1s);
  for (const auto& m : seen) points += m.at("method") == "point" ? 1 : 0;
  REQUIRE_FALSE(bench.instrument_state_on("load", "INPut:STATe?"));
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
  REQUIRE(bench.db_value("SELECT state FROM run").get<std::string>() == "aborted");
  REQUIRE(bench.db_value("SELECT count(*) FROM point").get<int>() == points);
}

TEST_CASE("SIGKILL mid-run, restart: run interrupted, file intact, every point seen is stored, bench safe",
          "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  const auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}), test_plan(20));
  std::set<std::int64_t> seen_points;
  const auto deadline = std::chrono::steady_clock::now() + 60s;
  while (seen_points.size() < 5 && std::chrono::steady_clock::now() < deadline) {
    auto m = bench.client->next_notification(500ms);
    if (m && m->at("method") == "point") seen_points.insert(m->at("params").at("point_id").get<std::int64_t>());
  }
  REQUIRE(seen_points.size() == 5);
  bench.client.reset();
  REQUIRE(bench.daemon->terminate(SIGKILL, 5s) == -1);
  // Killed with the drive on; the restarted daemon must make the bench safe first.
  REQUIRE(bench.instrument_state_on("source", "OUTPut:STATe?"));
  bench.start_daemon();
  REQUIRE_FALSE(bench.instrument_state_on("load", "INPut:STATe?"));
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
  REQUIRE(bench.db_value("SELECT state FROM run WHERE run_id = " + std::to_string(ids[0])).get<std::string>() ==
          "interrupted");
  REQUIRE(bench.db_value("PRAGMA integrity_check").get<std::string>() == "ok");
  for (const auto id : seen_points) {
    REQUIRE(bench.db_value("SELECT count(*) FROM reading WHERE point_id = " + std::to_string(id)).get<int>() > 0);
  }
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'startup.interrupted'").get<int>() == 1);
}

TEST_CASE("injected instrument faults: no crash, an event, recovery or interrupted, no garbage stored",
          "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  struct Case {
    const char* instrument;
    const char* fault;
    int count;
    const char* expected_state;
  };
  // Finite faults are recovered by reconnecting and repeating the step; a permanent stall
  // exhausts the retry budget.
  const std::vector<Case> cases = {{"meter", "drop", 1, "passed"},    {"meter", "stall", 1, "passed"},
                                   {"meter", "garbage", 1, "passed"}, {"meter", "split", 3, "passed"},
                                   {"load", "drop", 1, "passed"},     {"source", "drop", 1, "passed"},
                                   {"load", "garbage", 1, "passed"}};
  for (const auto& c : cases) {
    INFO(c.instrument << " " << c.fault);
    auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
    // Let the run reach its steps, then break the instrument.
    std::this_thread::sleep_for(300ms);
    bench.sim_call({{"op", "inject_fault"}, {"instrument", c.instrument}, {"fault", c.fault}, {"count", c.count}});
    REQUIRE(bench.wait_final(ids[0], 90s) == c.expected_state);
    bench.sim_call({{"op", "clear_fault"}, {"instrument", c.instrument}});
  }
  // Every stored DC value is a plausible voltage: no garbage, no overload sentinel.
  REQUIRE(bench.db_value("SELECT count(*) FROM reading WHERE abs(value) > 1e6").get<int>() == 0);
  REQUIRE(bench.db_value("SELECT count(*) FROM point WHERE dc_volts < 300 OR dc_volts > 450").get<int>() == 0);
  // One event per recovered fault: drop and stall as io.disconnected / io.timeout, garbage as
  // io.protocol_error (split replies arrive whole and need no recovery).
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'io.protocol_error'").get<int>() == 2);
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'io.timeout'").get<int>() >= 1);
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'io.disconnected'").get<int>() >= 2);

  // A meter that stays silent: past the retry budget the run ends interrupted, bench safe.
  auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
  std::this_thread::sleep_for(300ms);
  bench.sim_call({{"op", "inject_fault"}, {"instrument", "meter"}, {"fault", "stall"}});
  REQUIRE(bench.wait_final(ids[0], 120s) == "interrupted");
  bench.sim_call({{"op", "clear_fault"}, {"instrument", "meter"}});
  REQUIRE_FALSE(bench.instrument_state_on("load", "INPut:STATe?"));
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
  REQUIRE(bench.daemon->pid() > 0);
  REQUIRE(bench.client->call("bench.describe", json::object()).at("station") == "test-bench");
}

TEST_CASE("an overload reading trips safe state and ends the run with a safety event", "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
  std::this_thread::sleep_for(300ms);
  bench.sim_call({{"op", "inject_fault"}, {"instrument", "meter"}, {"fault", "overload"}});
  REQUIRE(bench.wait_final(ids[0], 30s) == "error");
  REQUIRE_FALSE(bench.instrument_state_on("load", "INPut:STATe?"));
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'safety.trip'").get<int>() == 1);
  REQUIRE(bench.db_value("SELECT count(*) FROM reading WHERE value > 1e30").get<int>() == 0);
}

TEST_CASE("error-queue entries are events, after configuring they end the run in error", "[daemon]") {
  Bench bench;
  bench.client->call("events.subscribe", json::object());
  // Entries left in a queue are logged when the daemon connects before the next run.
  bench.sim_call({{"op", "inject_fault"}, {"instrument", "load"}, {"fault", "errors"}, {"codes", {-113}}});
  auto ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}));
  REQUIRE(bench.wait_final(ids[0], 60s) == "passed");
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'error_queue.stale' AND message LIKE '-113,%'")
              .get<int>() == 1);
  // A setting the DMM refuses (NPLC 200 is outside its 0.02 to 100) leaves -222 after
  // configuring: an event, and the run ends in error with the bench safe.
  json plan = test_plan();
  plan["measure"]["dc"]["nplc"] = 200;
  ids = bench.start(json::array({{{"serial", "IT-0001"}, {"slot", 1}}}), plan);
  REQUIRE(bench.wait_final(ids[0], 30s) == "error");
  REQUIRE(bench.db_value("SELECT count(*) FROM event WHERE code = 'configure.instrument_error' AND message LIKE "
                         "'%-222%'")
              .get<int>() == 1);
  REQUIRE(bench.db_value("SELECT count(*) FROM point p JOIN sweep s ON s.sweep_id = p.sweep_id WHERE s.run_id = " +
                         std::to_string(ids[0]))
              .get<int>() == 0);
  REQUIRE_FALSE(bench.instrument_state_on("source", "OUTPut:STATe?"));
}

TEST_CASE("unsafe plans, malformed plans and malformed requests are refused, no run is created", "[daemon]") {
  Bench bench;
  json unsafe = test_plan();
  unsafe["source"]["amplitude_volts_peak"] = 44;  // 2·5·44 = 440 V ideal, bench allows 450 V: fine
  unsafe["load"]["steps_amps"].push_back(0.002);  // over max_load_amps 1 mA
  try {
    bench.start(json::array({{{"serial", "IT-0001"}}}), unsafe);
    FAIL("unsafe plan accepted");
  } catch (const ControlCallError& e) {
    REQUIRE(e.code() == -32001);
    REQUIRE_THAT(e.what(), Catch::Contains("plan.load.steps_amps[7]") && Catch::Contains("max_load_amps"));
  }
  json malformed = test_plan();
  malformed["settle"]["method"] = "guess";
  try {
    bench.start(json::array({{{"serial", "IT-0001"}}}), malformed);
    FAIL("malformed plan accepted");
  } catch (const ControlCallError& e) {
    REQUIRE(e.code() == -32001);
    REQUIRE_THAT(e.what(), Catch::Contains("plan.settle.method"));
  }
  try {
    bench.client->call("run.start", {{"plan_path", bench.dir + "/plan.json"}, {"units", {{{"serail", "X"}}}}});
    FAIL("bad params accepted");
  } catch (const ControlCallError& e) {
    REQUIRE(e.code() == -32602);
    REQUIRE_THAT(e.what(), Catch::Contains("params.units[0]"));
  }
  REQUIRE(bench.client->call_raw("{not json").at("error").at("code") == -32700);
  REQUIRE(bench.client->call_raw(R"({"jsonrpc":"2.0","id":7,"method":"run.explode"})").at("error").at("code") ==
          -32601);
  REQUIRE(bench.client->call_raw(R"({"jsonrpc":"1.0","id":8,"method":"run.list"})").at("error").at("code") ==
          -32600);
  // A request over 1 MiB is refused and the connection closed; the daemon keeps serving.
  const std::string huge = R"({"jsonrpc":"2.0","id":9,"method":"run.list","params":{"serial":")" +
                           std::string(1100 * 1024, 'x') + "\"}}";
  REQUIRE(bench.client->call_raw(huge).at("error").at("code") == -32600);
  ControlClient fresh(bench.dir + "/zoutd.sock");
  REQUIRE(fresh.call("run.list", json::object()).at("runs").empty());
  REQUIRE(bench.db_value("SELECT count(*) FROM run").get<int>() == 0);
}
