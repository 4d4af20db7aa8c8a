// Units on the simulated panel: the serial number seeds the component spread reproducibly,
// faults change one part, and the sim config is checked with errors that name the JSON path.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>

#include <nlohmann/json.hpp>

#include "drivers/sim/bench/seeded_random.h"
#include "drivers/sim/bench/sim_config.h"
#include "drivers/sim/bench/unit_builder.h"

using namespace zout::sim;
using nlohmann::json;

namespace {

json minimal_config() {
  return json::parse(R"({
    "seed": 5,
    "dut": {"stages": 5, "capacitance_farads": 47e-9, "capacitor_tolerance": 0.1,
            "diode": {"saturation_current_amps": 2e-9, "emission_coefficient": 1.9, "series_ohms": 5},
            "filter": {"series_ohms": 100000, "capacitance_farads": 2.2e-6}},
    "source": {"output_ohms": 50},
    "meter": {"input_ohms": 1e7, "range_volts": 1000, "noise_volts": 0.001},
    "panel": [{"slot": 2, "serial": "T-0002"}, {"slot": 1, "serial": "T-0001", "fault": "leaky_diode"}]
  })");
}

std::string config_error(const json& document) {
  try {
    SimConfig::from_json(document, "bench.json");
  } catch (const SimConfigError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("FNV-1a and the seeded generator are the published algorithms, stable across runs", "[sim-bench]") {
  // FNV-1a 64-bit test values (the FNV authors' published vectors, from memory): "" is the
  // offset basis, "a" is 0xaf63dc4c8601ec8c.
  REQUIRE(fnv1a_64("") == 14695981039346656037ULL);
  REQUIRE(fnv1a_64("a") == 0xaf63dc4c8601ec8cULL);
  REQUIRE(fnv1a_64("foobar") == 0x85944171f73967e8ULL);
  // SplitMix64 from seed 0: first output 0xe220a8397b1dcdaf (reference implementation, from memory).
  SeededRandom zero(0);
  REQUIRE(zero.next_u64() == 0xe220a8397b1dcdafULL);
  // Gaussian values: mean 0, variance 1 over many draws.
  SeededRandom random(42);
  double sum = 0.0;
  double squares = 0.0;
  const int n = 20000;
  for (int i = 0; i < n; ++i) {
    const double g = random.gaussian();
    sum += g;
    squares += g * g;
  }
  REQUIRE(std::abs(sum / n) < 0.03);  // 4 standard errors of the mean
  REQUIRE(squares / n == Approx(1.0).epsilon(0.04));
}

TEST_CASE("the same serial always builds the same unit, another serial another spread", "[sim-bench]") {
  const SimConfig config = SimConfig::from_json(minimal_config(), "test");
  const CascadeCircuit a = build_unit_circuit(config, "BB5-2611-0001", UnitFault::none);
  const CascadeCircuit again = build_unit_circuit(config, "BB5-2611-0001", UnitFault::none);
  const CascadeCircuit b = build_unit_circuit(config, "BB5-2611-0002", UnitFault::none);
  REQUIRE(a.stages == 5);
  REQUIRE(a.capacitance_farads.size() == 10);
  REQUIRE(a.diodes.size() == 10);
  REQUIRE(a.capacitance_farads == again.capacitance_farads);
  REQUIRE(a.filter_capacitance_farads == again.filter_capacitance_farads);
  for (std::size_t i = 0; i < a.diodes.size(); ++i) {
    REQUIRE(a.diodes[i].saturation_current_amps == again.diodes[i].saturation_current_amps);
    REQUIRE(a.diodes[i].series_ohms == again.diodes[i].series_ohms);
  }
  REQUIRE(a.capacitance_farads != b.capacitance_farads);
  // Every capacitor within its tolerance, not all at the nominal value.
  int off_nominal = 0;
  for (double c : a.capacitance_farads) {
    REQUIRE(c >= 47e-9 * 0.9 - 1e-21);
    REQUIRE(c <= 47e-9 * 1.1 + 1e-21);
    if (std::abs(c - 47e-9) > 47e-9 * 1e-4) ++off_nominal;
  }
  REQUIRE(off_nominal >= 8);
  REQUIRE(a.filter_series_ohms == Approx(100000).epsilon(0.0101));
  REQUIRE(a.filter_capacitance_farads == Approx(2.2e-6).epsilon(0.101));
  REQUIRE(a.source_output_ohms == 50.0);
  REQUIRE(a.meter_input_ohms == 1e7);
  REQUIRE(std::isinf(a.leakage_ohms[0]));
}

TEST_CASE("a fault changes exactly one part of the unit its serial builds", "[sim-bench]") {
  const SimConfig config = SimConfig::from_json(minimal_config(), "test");
  const std::string serial = "BB5-2611-0007";
  const CascadeCircuit good = build_unit_circuit(config, serial, UnitFault::none);
  const CascadeCircuit weak = build_unit_circuit(config, serial, UnitFault::weak_capacitor);
  const CascadeCircuit leaky_diode = build_unit_circuit(config, serial, UnitFault::leaky_diode);
  const CascadeCircuit leaky_capacitor = build_unit_circuit(config, serial, UnitFault::leaky_capacitor);
  int changed = 0;
  for (std::size_t i = 0; i < good.capacitance_farads.size(); ++i) {
    if (weak.capacitance_farads[i] != good.capacitance_farads[i]) {
      ++changed;
      REQUIRE(weak.capacitance_farads[i] == Approx(0.2 * good.capacitance_farads[i]));
    }
  }
  REQUIRE(changed == 1);
  changed = 0;
  for (std::size_t i = 0; i < good.diodes.size(); ++i) {
    REQUIRE(leaky_diode.diodes[i].saturation_current_amps == good.diodes[i].saturation_current_amps);
    if (std::isfinite(leaky_diode.diodes[i].leakage_ohms)) {
      ++changed;
      REQUIRE(leaky_diode.diodes[i].leakage_ohms == 100e3);
    }
  }
  REQUIRE(changed == 1);
  changed = 0;
  for (double r : leaky_capacitor.leakage_ohms) changed += std::isfinite(r) ? 1 : 0;
  REQUIRE(changed == 1);
}

TEST_CASE("the sim config is read with defaults and sorted slots", "[sim-bench]") {
  json document = minimal_config();
  const SimConfig config = SimConfig::from_json(document, "test");
  REQUIRE(config.seed == 5);
  REQUIRE(config.dut.stages == 5);
  REQUIRE(config.dut.filter);
  REQUIRE(config.dut.filter->series_ohms == 100000);
  REQUIRE(config.meter.line_frequency_hz == 50.0);
  REQUIRE(config.panel.size() == 2);
  REQUIRE(config.panel[0].slot == 1);
  REQUIRE(config.panel[0].fault == UnitFault::leaky_diode);
  REQUIRE(config.panel[1].serial == "T-0002");
  REQUIRE(config.slot_count() == 2);
  document["dut"].erase("filter");
  document["dut"].erase("diode");
  document.erase("meter");
  const SimConfig plain = SimConfig::from_json(document, "test");
  REQUIRE_FALSE(plain.dut.filter);
  REQUIRE(plain.dut.diode.emission_coefficient == 1.8);
  REQUIRE(plain.meter.input_ohms == 10e6);
}

TEST_CASE("sim config errors name the file, the JSON path and the rule", "[sim-bench]") {
  json d = minimal_config();
  d["dut"]["filtr"] = json::object();
  REQUIRE(config_error(d) == "bench.json: dut.filtr: unknown key; allowed: stages, capacitance_farads, "
                             "capacitor_tolerance, diode, filter");
  d = minimal_config();
  d["dut"]["diode"]["series_ohms"] = -1;
  REQUIRE(config_error(d) == "bench.json: dut.diode.series_ohms: must be a number >= 0 and <= 1e+06, got -1");
  d = minimal_config();
  d["dut"]["stages"] = 2.5;
  REQUIRE(config_error(d) == "bench.json: dut.stages: must be a whole number from 1 to 40, got 2.5");
  d = minimal_config();
  d["dut"].erase("capacitance_farads");
  REQUIRE(config_error(d) == "bench.json: dut.capacitance_farads: is missing");
  d = minimal_config();
  d["panel"][1]["slot"] = 2;
  REQUIRE(config_error(d) == "bench.json: panel[1].slot: slot 2 is listed twice");
  d = minimal_config();
  d["panel"][0]["fault"] = "cracked";
  REQUIRE_THAT(config_error(d), Catch::StartsWith("bench.json: panel[0].fault: unknown fault \"cracked\"; allowed: none"));
  d = minimal_config();
  d["panel"][0]["serial"] = "A,B";
  REQUIRE_THAT(config_error(d), Catch::StartsWith("bench.json: panel[0].serial: character 0x2C not allowed"));
  d = minimal_config();
  d["meter"]["line_frequency_hz"] = 55;
  REQUIRE(config_error(d) == "bench.json: meter.line_frequency_hz: must be 50 or 60 (mains), got 55");
  d = minimal_config();
  d["panel"] = json::array();
  REQUIRE_THAT(config_error(d), Catch::StartsWith("bench.json: panel: must be a non-empty list"));
  REQUIRE_THAT(config_error(json::array()), Catch::StartsWith("bench.json: a sim config must be a JSON object"));
  d = minimal_config();
  d["extra"] = 1;
  REQUIRE_THAT(config_error(d), Catch::StartsWith("bench.json: extra: unknown key; allowed: description, dut"));

  // A file that is not JSON: the parser's line and column.
  const std::string path = "/tmp/zout-sim-bench-units-test-bad.json";
  std::ofstream(path) << "{\n  \"dut\": {\n    \"stages\": 5,,\n";
  try {
    SimConfig::load_file(path);
    FAIL("expected a SimConfigError");
  } catch (const SimConfigError& e) {
    REQUIRE_THAT(e.what(), Catch::StartsWith(path + ": not valid JSON") && Catch::Contains("line 3"));
  }
  REQUIRE_THROWS_WITH(SimConfig::load_file("/nonexistent/sim.json"),
                      Catch::StartsWith("/nonexistent/sim.json: cannot open sim config"));
}

TEST_CASE("the shipped demo panel loads: eight units, two of them faulty", "[sim-bench]") {
  const SimConfig config = SimConfig::load_file(ZOUT_SOURCE_DIR "/config/sim/demo.json");
  REQUIRE(config.slot_count() == 8);
  REQUIRE(config.panel.size() == 8);
  int faulty = 0;
  for (const auto& entry : config.panel) faulty += entry.fault == UnitFault::none ? 0 : 1;
  REQUIRE(faulty == 2);
  REQUIRE(config.dut.filter);
  // A filter time constant of a few hundred milliseconds (the board's output RC).
  const double tau_s = config.dut.filter->series_ohms * config.dut.filter->capacitance_farads;
  REQUIRE(tau_s > 0.1);
  REQUIRE(tau_s < 1.0);
}
