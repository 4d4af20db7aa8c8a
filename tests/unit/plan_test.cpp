// Bench and plan files: what loads, and that every refusal names the file, the JSON path
// and the rule (DEVELOPERS.md, "Files a user writes").
#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>

#include <nlohmann/json.hpp>

#include "daemon/plan/bench_config.h"
#include "daemon/plan/config_error.h"
#include "daemon/plan/plan.h"
#include "daemon/plan/safety_check.h"

using namespace zout;
using Catch::Contains;
using nlohmann::json;

namespace {

json good_plan() {
  return json::parse(R"({
    "name": "test-plan",
    "dut": { "model": "three-stage test board", "stages": 3, "capacitance_farads": 1e-6 },
    "source": { "waveform": "sine", "frequency_hz": 1000, "amplitude_volts_peak": 2.5 },
    "load": { "mode": "current", "steps_amps": [0, 1e-5, 2e-5, 5e-5, 1e-4] },
    "settle": { "method": "window", "tolerance_volts": 0.01, "max_s": 5, "window_readings": 4 },
    "measure": { "dc": { "nplc": 1, "samples": 2, "range_volts": 100 }, "ripple": { "method": "ac_rms", "range_volts": 1 } },
    "impedance": { "fit_max_amps": 5e-5 },
    "limits": { "v_oc_min_volts": 11, "v_oc_max_volts": 14, "z_out_max_ohms": 30000 },
    "repeat": { "count": 1 }
  })");
}

std::string temp_dir() {
  const auto dir = std::filesystem::temp_directory_path() / ("zout-plan-test-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  return dir.string();
}

std::string write_file(const std::string& name, const std::string& text) {
  const std::string path = temp_dir() + "/" + name;
  std::ofstream(path) << text;
  return path;
}

json good_bench() {
  const std::string dialects = std::string(ZOUT_SOURCE_DIR) + "/config/dialects/";
  return json{
      {"station", "test-station"},
      {"database", "zout.db"},
      {"control", {{"socket", "zoutd.sock"}}},
      {"instruments",
       {{"source", {{"address", "tcp://127.0.0.1:5601"}, {"dialect", dialects + "scpi-source.json"}}},
        {"meter", {{"address", "tcp://127.0.0.1:5602"}, {"dialect", dialects + "scpi-meter.json"}, {"timeout_ms", 3000}}},
        {"load", {{"address", "serial:///dev/ttyUSB0?baud=115200"}, {"dialect", dialects + "scpi-load.json"}}}}},
      {"safety", {{"max_output_volts", 20}, {"max_load_amps", 0.001}, {"max_source_volts_peak", 5}}}};
}

}  // namespace

TEST_CASE("a good plan loads with every field", "[plan]") {
  const Plan plan = parse_plan(good_plan(), "p.json");
  REQUIRE(plan.name == "test-plan");
  REQUIRE(plan.dut.stages == 3);
  REQUIRE(plan.dut.capacitance_farads == 1e-6);
  REQUIRE(plan.source.frequency_hz == 1000);
  REQUIRE(plan.load.steps == std::vector<double>{0, 1e-5, 2e-5, 5e-5, 1e-4});
  REQUIRE(plan.settle.method == SettleMethod::window);
  REQUIRE(plan.settle.window_readings == 4);
  REQUIRE(plan.measure.dc_samples == 2);
  REQUIRE(plan.impedance.fit_max_amps == 5e-5);
  REQUIRE(plan.limits.z_out_max_ohms == 30000);
  REQUIRE_FALSE(plan.limits.ripple_pp_max_volts.has_value());
  REQUIRE_FALSE(plan.is_soak());
  REQUIRE(json::parse(plan.canonical_json) == good_plan());
}

TEST_CASE("plan refusals name the file, the JSON path and the rule", "[plan]") {
  auto refused = [](const std::function<void(json&)>& edit) {
    json plan = good_plan();
    edit(plan);
    try {
      parse_plan(plan, "config/plans/p.json");
    } catch (const ConfigError& e) {
      return std::string(e.what());
    }
    return std::string("(accepted)");
  };
  REQUIRE(refused([](json& p) { p["load"]["steps_amps"][3] = -2e-05; }) ==
          "config/plans/p.json: plan.load.steps_amps[3]: -2e-05 is negative; steps must be >= 0");
  REQUIRE_THAT(refused([](json& p) { p["load"]["step_amps"] = json::array({0}); }),
               Contains("plan.load.step_amps: unknown key"));
  REQUIRE_THAT(refused([](json& p) { p["dut"].erase("stages"); }), Contains("plan.dut: \"stages\" is required"));
  REQUIRE_THAT(refused([](json& p) { p["dut"]["stages"] = 2.5; }), Contains("plan.dut.stages: must be a whole number"));
  REQUIRE_THAT(refused([](json& p) { p["source"]["frequency_hz"] = "1k"; }),
               Contains("plan.source.frequency_hz: must be a number, not a string"));
  REQUIRE_THAT(refused([](json& p) { p["source"]["waveform"] = "square"; }),
               Contains("plan.source.waveform: \"square\" is not allowed; allowed: sine"));
  REQUIRE_THAT(refused([](json& p) { p["settle"]["method"] = "guess"; }),
               Contains("allowed: fixed, window, predictive"));
  REQUIRE_THAT(refused([](json& p) { p["settle"]["dwell_s"] = 1; }),
               Contains("plan.settle.dwell_s: applies only to method \"fixed\""));
  REQUIRE_THAT(refused([](json& p) { p["load"]["steps_amps"] = json::array({1e-5, 2e-5}); }),
               Contains("needs a 0 A step"));
  REQUIRE_THAT(refused([](json& p) { p["limits"]["v_oc_min_volts"] = 20; }),
               Contains("plan.limits.v_oc_min_volts: 20 is above v_oc_max_volts 14"));
  REQUIRE_THAT(refused([](json& p) { p["repeat"] = {{"count", 3}, {"baseline_sweeps", 5}}; }),
               Contains("plan.repeat.baseline_sweeps: 5 is more than repeat.count 3"));
  REQUIRE_THAT(refused([](json& p) { p["source"]["amplitude_volts_peak"] = 1e300 * 10; }),
               Contains("plan.source.amplitude_volts_peak"));
  REQUIRE_THAT(refused([](json& p) { p["extra"] = 1; }), Contains("plan.extra: unknown key"));
}

TEST_CASE("ripple is read at every step, or only at the rated step when the plan says so", "[plan]") {
  json document = good_plan();
  const Plan every = parse_plan(document, "p.json");
  REQUIRE(every.measure.ripple_at == RippleSteps::every_step);
  for (std::size_t i = 0; i < every.load.steps.size(); ++i) REQUIRE(every.reads_ripple_at(i));

  // rated_amps absent: the rated step is the largest (index 4).
  document["measure"]["ripple"]["at"] = "rated_step";
  const Plan largest = parse_plan(document, "p.json");
  REQUIRE(largest.rated_step_index() == std::optional<std::size_t>(4));
  REQUIRE(largest.reads_ripple_at(4));
  REQUIRE_FALSE(largest.reads_ripple_at(0));
  REQUIRE_FALSE(largest.reads_ripple_at(3));

  // Within 5% of rated_amps counts as the rated step (the analysis's own rule).
  document["load"]["rated_amps"] = 2.08e-5;
  const Plan near = parse_plan(document, "p.json");
  REQUIRE(near.rated_step_index() == std::optional<std::size_t>(2));
  REQUIRE(near.reads_ripple_at(2));
  REQUIRE_FALSE(near.reads_ripple_at(4));

  document["load"]["rated_amps"] = 3e-5;
  REQUIRE_THROWS_WITH(parse_plan(document, "p.json"),
                      Contains("p.json: plan.measure.ripple.at: \"rated_step\" needs load.mode \"current\" and a step "
                               "within 5% of the rated load"));
  document["load"].erase("rated_amps");
  document["measure"]["ripple"]["method"] = "none";
  const Plan none = parse_plan(document, "p.json");
  REQUIRE_FALSE(none.reads_ripple_at(4));
  document["measure"]["ripple"]["at"] = "sometimes";
  REQUIRE_THROWS_WITH(parse_plan(document, "p.json"), Contains("allowed: every_step, rated_step"));
}

TEST_CASE("a plan file that is not JSON names the file and the position", "[plan]") {
  const std::string path = write_file("broken.json", "{ \"name\": \"x\", }");
  REQUIRE_THROWS_WITH(load_plan_file(path), Contains(path) && Contains("not valid JSON") && Contains("column"));
  REQUIRE_THROWS_WITH(load_plan_file(temp_dir() + "/absent.json"), Contains("absent.json: cannot open file"));
}

TEST_CASE("a good bench loads with paths resolved beside the file", "[plan][bench]") {
  const std::string path = write_file("bench.json", good_bench().dump());
  const BenchConfig bench = load_bench_file(path);
  REQUIRE(bench.station == "test-station");
  REQUIRE(bench.database_path == temp_dir() + "/zout.db");
  REQUIRE(bench.control_socket_path == temp_dir() + "/zoutd.sock");
  REQUIRE(bench.meter.timeout == std::chrono::milliseconds(3000));
  REQUIRE(bench.source.timeout == std::chrono::milliseconds(2000));
  REQUIRE(bench.load.address == "serial:///dev/ttyUSB0?baud=115200");
  REQUIRE_FALSE(bench.panel_switch.has_value());
  REQUIRE(bench.safety.max_load_amps == 0.001);
}

TEST_CASE("bench refusals name the JSON path and the rule", "[plan][bench]") {
  auto refused = [](const std::function<void(json&)>& edit) {
    json bench = good_bench();
    edit(bench);
    const std::string path = write_file("bench-edit.json", bench.dump());
    try {
      load_bench_file(path);
    } catch (const ConfigError& e) {
      return std::string(e.what());
    }
    return std::string("(accepted)");
  };
  REQUIRE_THAT(refused([](json& b) { b["instruments"]["meter"]["address"] = "serial:///dev/ttyUSB0?baud=fast"; }),
               Contains("bench.instruments.meter.address") && Contains("baud=fast is not a whole number"));
  REQUIRE_THAT(refused([](json& b) { b["instruments"]["meter"]["dialect"] = b["instruments"]["load"]["dialect"]; }),
               Contains("bench.instruments.meter.dialect") && Contains("dialect for role load, not meter"));
  REQUIRE_THAT(refused([](json& b) { b["instruments"]["source"]["dialect"] = "/nonexistent/d.json"; }),
               Contains("bench.instruments.source.dialect") && Contains("/nonexistent/d.json"));
  REQUIRE_THAT(refused([](json& b) { b["safety"].erase("max_load_amps"); }),
               Contains("bench.safety: \"max_load_amps\" is required"));
  REQUIRE_THAT(refused([](json& b) { b["instruments"]["dmm"] = b["instruments"]["meter"]; }),
               Contains("bench.instruments.dmm: unknown key"));
  REQUIRE_THAT(refused([](json& b) { b["instruments"]["load"]["timeout_ms"] = 0; }),
               Contains("bench.instruments.load.timeout_ms: 0 is out of range"));
}

TEST_CASE("a plan over the bench's safety maxima is refused with every reason", "[plan][safety]") {
  SafetyLimits safety{20.0, 1e-4, 5.0};
  Plan plan = parse_plan(good_plan(), "p.json");
  REQUIRE(safety_violations(plan, safety).empty());  // 2·3·2.5 = 15 V ideal, under 20 V

  plan.source.amplitude_volts_peak = 4.0;  // 2·3·4 = 24 V ideal output
  plan.load.steps.push_back(2e-4);
  const auto found = safety_violations(plan, safety);
  REQUIRE(found.size() == 2);
  REQUIRE(found[0] == "plan.source.amplitude_volts_peak: the ideal no-load output 2·3·4 = 24 V exceeds the bench's "
                      "safety.max_output_volts 20 V");
  REQUIRE(found[1] == "plan.load.steps_amps[5]: 0.0002 A exceeds the bench's safety.max_load_amps 0.0001 A");
  REQUIRE_THROWS_WITH(require_safe(plan, safety, "p.json"),
                      Contains("p.json: refused") && Contains("steps_amps[5]") && Contains("24 V"));

  plan = parse_plan(good_plan(), "p.json");
  plan.source.offset_volts = -3.0;  // 2.5 + 3 = 5.5 V peak drive
  REQUIRE_THAT(safety_violations(plan, safety).at(0), Contains("drive 5.5 V peak") && Contains("max_source_volts_peak 5 V"));
}

TEST_CASE("the shipped bench and plans load and the plans are safe on the simulated bench", "[plan]") {
  const std::string config = std::string(ZOUT_SOURCE_DIR) + "/config/";
  const BenchConfig bench = load_bench_file(config + "bench.sim.json");
  REQUIRE(bench.panel_switch.has_value());
  REQUIRE(bench.meter.address == "tcp://127.0.0.1:5602");
  const Plan production = load_plan_file(config + "plans/bias-board-production.json");
  REQUIRE(production.load.steps.size() == 11);
  REQUIRE_FALSE(production.is_soak());
  REQUIRE_NOTHROW(require_safe(production, bench.safety, "production"));
  const Plan soak = load_plan_file(config + "plans/bias-board-soak.json");
  REQUIRE(soak.is_soak());
  REQUIRE_NOTHROW(require_safe(soak, bench.safety, "soak"));
}
