// The `zout` client's verbs against a real zoutd and zout-sim: output and exit status of each
// (README "Exit status"), run as a separate process like an operator or a script would.
#include <catch2/catch.hpp>

#include <cmath>
#include <regex>
#include <sstream>

#include <fmt/format.h>
#include <thread>

#include "daemon/analysis/cascade_model.h"
#include "tests/integration/daemon_bench.h"

using namespace zout;
using namespace zout::test;
using Catch::Contains;

namespace {

// Runs `zout VERB ARGS...` with the bench's socket or database as the verb needs.
ChildResult zout_cli(const std::vector<std::string>& args, std::chrono::seconds timeout = 60s) {
  std::vector<std::string> argv = {ZOUT_CLI_PATH};
  argv.insert(argv.end(), args.begin(), args.end());
  return run_child(argv, timeout);
}

std::vector<std::int64_t> queued_ids(const std::string& out) {
  std::vector<std::int64_t> ids;
  const std::regex queued(R"(queued run (\d+) for)");
  for (auto it = std::sregex_iterator(out.begin(), out.end(), queued); it != std::sregex_iterator(); ++it) {
    ids.push_back(std::stoll((*it)[1].str()));
  }
  return ids;
}

}  // namespace

TEST_CASE("zout status describes the daemon, the bench and the queue, without zoutd it says how to start it",
          "[cli][daemon-cli]") {
  Bench bench;
  const std::string socket = bench.dir + "/zoutd.sock";
  const auto status = zout_cli({"status", "--socket", socket});
  INFO(status.err);
  REQUIRE(status.exit_code == 0);
  CHECK_THAT(status.out, Contains("zoutd     running, control socket " + socket));
  CHECK_THAT(status.out, Contains("station   test-bench"));
  CHECK_THAT(status.out, Contains("bench     connected"));
  CHECK_THAT(status.out, Contains("meter"));
  CHECK_THAT(status.out, Contains("safety    output ≤ 450 V, load ≤ 1.00 mA, drive ≤ 45.0 V peak"));
  CHECK_THAT(status.out, Contains("running   nothing"));
  CHECK_THAT(status.out, Contains("queue     empty"));

  const auto as_json = zout_cli({"status", "--socket", socket, "--json"});
  REQUIRE(as_json.exit_code == 0);
  const json parsed = json::parse(as_json.out);
  CHECK(parsed.at("bench").at("station") == "test-bench");
  CHECK(parsed.at("bench").at("instruments").size() == 4);
  CHECK(parsed.at("queued").empty());

  REQUIRE(bench.daemon->terminate(SIGTERM, 10s) == 0);
  const auto down = zout_cli({"status", "--socket", socket});
  CHECK(down.exit_code == 8);
  CHECK_THAT(down.err, Contains("cannot reach zoutd at " + socket) && Contains("zoutd --bench"));
}

TEST_CASE("zout start queues units, zout watch follows them to the verdict with progress", "[cli][daemon-cli]") {
  Bench bench;
  const std::string socket = bench.dir + "/zoutd.sock";
  const auto started = zout_cli({"start", bench.dir + "/plan.json", "--unit", "IT-0001@1", "--unit", "IT-0002@2",
                                 "--operator", "cli-test", "--socket", socket});
  INFO(started.err);
  REQUIRE(started.exit_code == 0);
  const auto ids = queued_ids(started.out);
  REQUIRE(ids.size() == 2);
  CHECK_THAT(started.out, Contains("for IT-0002 in slot 2"));

  const auto watched = zout_cli({"watch", std::to_string(ids[0]), std::to_string(ids[1]), "--socket", socket}, 120s);
  INFO(watched.out);
  // IT-0002 has a weak capacitor: the batch has a failed unit (exit 9).
  CHECK(watched.exit_code == 9);
  CHECK_THAT(watched.out, Contains(fmt::format("run {} IT-0001: passed", ids[0])));
  CHECK_THAT(watched.out, Contains(fmt::format("run {} IT-0002: failed", ids[1])));
  CHECK_THAT(watched.out, Contains("reason: effective C ") && Contains(" nF < 40 nF min"));
  // One line per point (7 steps each, unless a run had already gone by when watch subscribed),
  // with the progress that a pipe gets instead of a redrawn bar.
  CHECK_THAT(watched.out, Contains("sweep 1/1 step  7/7"));
  CHECK_THAT(watched.out, Contains("100%  elapsed"));
  CHECK_THAT(watched.out, Contains("V_oc 38"));

  // Both runs are in the store with those states.
  CHECK(bench.db_value("SELECT state FROM run WHERE run_id = " + std::to_string(ids[0])) == "passed");
  CHECK(bench.db_value("SELECT state FROM run WHERE run_id = " + std::to_string(ids[1])) == "failed");
  CHECK(bench.db_value("SELECT operator FROM run WHERE run_id = " + std::to_string(ids[0])) == "cli-test");

  // zout runs reads them back from the database, newest first.
  const auto runs = zout_cli({"runs", "--db", bench.dir + "/zout.db"});
  REQUIRE(runs.exit_code == 0);
  CHECK(runs.out.find("IT-0002") < runs.out.find("IT-0001"));
  const auto failed = zout_cli({"runs", "--db", bench.dir + "/zout.db", "--state", "failed", "--json"});
  REQUIRE(failed.exit_code == 0);
  const json rows = json::parse(failed.out);
  REQUIRE(rows.size() == 1);
  CHECK(rows[0].at("serial") == "IT-0002");
  CHECK(rows[0].at("verdict") == "fail");
  CHECK(rows[0].at("v_oc_volts").get<double>() == Approx(bench.db_value(
      "SELECT v_oc_volts FROM run_summary WHERE run_id = " + std::to_string(ids[1])).get<double>()));
}

TEST_CASE("zout start --panel --watch --json streams notifications and exits by the verdicts", "[cli][daemon-cli]") {
  Bench bench;
  write_json(bench.dir + "/panel.json", {{"panel", {{{"slot", 3}, {"serial", "IT-0003"}}, {{"slot", 1}, {"serial", "IT-0001"}}}}});
  const auto r = zout_cli({"start", bench.dir + "/plan.json", "--panel", bench.dir + "/panel.json", "--watch", "--json",
                           "--socket", bench.dir + "/zoutd.sock"},
                          120s);
  INFO(r.err);
  CHECK(r.exit_code == 9);  // IT-0003 has a leaky diode
  int points = 0;
  std::map<std::string, std::string> final_states;  // serial by slot order → state
  std::vector<std::int64_t> run_order;
  std::istringstream lines(r.out);
  for (std::string line; std::getline(lines, line);) {
    const json message = json::parse(line);  // every line is one JSON object
    if (message.at("method") == "point") ++points;
    if (message.at("method") == "run.state") {
      const auto& p = message.at("params");
      const std::string state = p.at("state");
      if (state == "running") run_order.push_back(p.at("run_id").get<std::int64_t>());
      if (state == "passed" || state == "failed") final_states[std::to_string(p.at("run_id").get<std::int64_t>())] = state;
    }
  }
  CHECK(points == 14);
  REQUIRE(run_order.size() == 2);
  // Slot order: slot 1 (IT-0001) runs first.
  CHECK(bench.db_value("SELECT serial FROM run_summary WHERE run_id = " + std::to_string(run_order[0])) == "IT-0001");
  CHECK(final_states[std::to_string(run_order[0])] == "passed");
  CHECK(final_states[std::to_string(run_order[1])] == "failed");
}

TEST_CASE("zout abort ends a running soak in safe state, refused plans and bad arguments exit clearly",
          "[cli][daemon-cli]") {
  Bench bench;
  const std::string socket = bench.dir + "/zoutd.sock";
  write_json(bench.dir + "/soak.json", test_plan(50));
  const auto started = zout_cli({"start", bench.dir + "/soak.json", "--unit", "IT-0001@1", "--socket", socket});
  REQUIRE(started.exit_code == 0);
  const auto id = queued_ids(started.out).at(0);
  const auto until = std::chrono::steady_clock::now() + 30s;
  while (bench.db_value("SELECT count(*) FROM point").get<std::int64_t>() < 2 && std::chrono::steady_clock::now() < until) {
    std::this_thread::sleep_for(100ms);
  }
  const auto aborted = zout_cli({"abort", std::to_string(id), "--socket", socket});
  INFO(aborted.err);
  REQUIRE(aborted.exit_code == 0);
  CHECK_THAT(aborted.out, Contains(fmt::format("run {} aborted; bench left in safe state", id)));
  CHECK_FALSE(bench.instrument_state_on("load", "INP?"));
  CHECK_FALSE(bench.instrument_state_on("source", "OUTP?"));
  CHECK(bench.db_value("SELECT state FROM run WHERE run_id = " + std::to_string(id)) == "aborted");

  const auto again = zout_cli({"abort", std::to_string(id), "--socket", socket});
  CHECK(again.exit_code == 1);
  CHECK_THAT(again.err, Contains("neither queued nor running"));

  // A plan over the bench's maxima (450 V output: 5 stages at 50 V peak could reach 500 V).
  json unsafe = test_plan();
  unsafe["source"]["amplitude_volts_peak"] = 50;
  write_json(bench.dir + "/unsafe.json", unsafe);
  const auto refused = zout_cli({"start", bench.dir + "/unsafe.json", "--unit", "IT-0001", "--socket", socket});
  CHECK(refused.exit_code == 7);
  CHECK_THAT(refused.err, Contains("unsafe.json") && Contains("max_source_volts_peak"));

  const auto no_units = zout_cli({"start", bench.dir + "/plan.json", "--socket", socket});
  CHECK(no_units.exit_code == 2);
  CHECK_THAT(no_units.err, Contains("--unit SERIAL[@SLOT]"));
  const auto bad_slot = zout_cli({"start", bench.dir + "/plan.json", "--unit", "IT-0001@zero", "--socket", socket});
  CHECK(bad_slot.exit_code == 2);
  CHECK_THAT(bad_slot.err, Contains("slot \"zero\" is not a whole number"));
  write_json(bench.dir + "/panel.json", {{"panel", {{{"slot", 1}, {"serial", "A"}}, {{"slot", 1}, {"serial", "B"}}}}});
  const auto dup = zout_cli({"start", bench.dir + "/plan.json", "--panel", bench.dir + "/panel.json", "--socket", socket});
  CHECK(dup.exit_code == 7);
  CHECK_THAT(dup.err, Contains("panel.json") && Contains("panel[1].slot") && Contains("slot 1 appears twice"));
  // Nothing of those was queued: only the soak run exists.
  CHECK(bench.db_value("SELECT count(*) FROM run").get<std::int64_t>() == 1);
}

TEST_CASE("zout bench identifies each instrument directly and names the one that does not answer", "[cli][daemon-cli]") {
  Bench bench;
  const auto ok = zout_cli({"bench", "--bench", bench.bench_path, "--json"});
  INFO(ok.err);
  REQUIRE(ok.exit_code == 0);
  const json described = json::parse(ok.out);
  REQUIRE(described.at("instruments").size() == 4);
  for (const auto& instrument : described.at("instruments")) {
    CHECK(instrument.at("status") == "answered");
    CHECK_FALSE(instrument.at("manufacturer").get<std::string>().empty());
  }
  // The meter's address now points at a port nobody listens on.
  json file = json::parse(std::ifstream(bench.bench_path));
  file["instruments"]["meter"]["address"] = "tcp://127.0.0.1:9";
  write_json(bench.dir + "/broken.json", file);
  const auto broken = zout_cli({"bench", "--bench", bench.dir + "/broken.json"});
  CHECK(broken.exit_code == 4);
  CHECK_THAT(broken.out, Contains("tcp://127.0.0.1:9"));
  CHECK_THAT(broken.out, Contains("source") && Contains("answered"));
}

TEST_CASE("zout check prints the Cockcroft-Walton predictions and flags a plan over the safety maxima",
          "[cli][daemon-cli]") {
  Bench bench;
  const auto ok = zout_cli({"check", bench.dir + "/plan.json", "--bench", bench.bench_path, "--json"});
  INFO(ok.err);
  REQUIRE(ok.exit_code == 0);
  const json checked = json::parse(ok.out);
  CHECK(checked.at("safe") == true);
  // Kuffel, Zaengl & Kuffel, High Voltage Engineering §2.2: V = 2n·V_pk − (I/fC)(2n³/3 + n²/2 − n/6),
  // δV = (I/fC)·n(n+1)/2; here n = 5, V_pk = 40 V, f = 20 kHz, C = 47 nF, computed independently.
  const double n = 5, f = 20e3, c = 47e-9;
  const auto& steps = checked.at("predictions");
  REQUIRE(steps.size() == 7);
  for (const auto& step : steps) {
    const double i = step.at("set_amps").get<double>();
    CHECK(step.at("output_volts").get<double>() ==
          Approx(2 * n * 40.0 - i / (f * c) * (2 * n * n * n / 3 + n * n / 2 - n / 6)).epsilon(1e-12));
    CHECK(step.at("ripple_pp_volts").get<double>() == Approx(i / (f * c) * n * (n + 1) / 2).epsilon(1e-12));
  }
  CHECK(checked.at("ideal_open_circuit_volts").get<double>() == Approx(400.0));

  const auto text = zout_cli({"check", bench.dir + "/plan.json", "--bench", bench.bench_path});
  REQUIRE(text.exit_code == 0);
  CHECK_THAT(text.out, Contains("ideal no-load output 2n·V_pk = 400.0 V"));
  CHECK_THAT(text.out, Contains("High voltage"));
  CHECK_THAT(text.out, Contains("local codes"));

  json unsafe = test_plan();
  unsafe["load"]["steps_amps"] = {0, 1e-5, 2e-3};
  write_json(bench.dir + "/unsafe.json", unsafe);
  const auto refused = zout_cli({"check", bench.dir + "/unsafe.json", "--bench", bench.bench_path});
  CHECK(refused.exit_code == 7);
  CHECK_THAT(refused.out, Contains("safety: REFUSED") && Contains("max_load_amps"));

  json malformed = test_plan();
  malformed["settle"]["tolerance_volts"] = "tight";
  write_json(bench.dir + "/malformed.json", malformed);
  const auto bad = zout_cli({"check", bench.dir + "/malformed.json", "--bench", bench.bench_path});
  CHECK(bad.exit_code == 7);
  CHECK_THAT(bad.err, Contains("malformed.json: plan.settle.tolerance_volts: must be a number"));
}

TEST_CASE("every zout verb has --help", "[cli][daemon-cli]") {
  for (const char* verb : {"status", "start", "watch", "abort", "runs", "report", "export", "bench", "check", "query", "scpi", "ports"}) {
    const auto help = zout_cli({verb, "--help"}, 10s);
    INFO(verb);
    CHECK(help.exit_code == 0);
    CHECK_THAT(help.out, Contains("Usage") || Contains("usage") || Contains("USAGE"));
  }
}
