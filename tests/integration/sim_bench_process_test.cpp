// The real zout-sim process on loopback TCP and pseudo-terminals, driven by zout's own Session
// and by the dialect-driven instruments loading config/dialects/*.json, as the daemon would.
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/stat.h>

#include <atomic>
#include <chrono>
#include <cmath>
#include <fstream>
#include <thread>

#include <nlohmann/json.hpp>

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/scpi_load.h"
#include "drivers/instruments/scpi_meter.h"
#include "drivers/instruments/scpi_source.h"
#include "drivers/instruments/scpi_switch.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport_factory.h"
#include "tests/support/child_process.h"
#include "tests/support/sim_process.h"

using namespace zout;
using namespace std::chrono_literals;
using nlohmann::json;

namespace {

// A bench for tests: the demo board's cascade without its slow output filter (so a load step
// settles in tens of milliseconds), 1 mV of meter noise, four slots (slot 3 faulty, slot 4 empty).
json test_config() {
  return json::parse(R"({
    "seed": 11,
    "dut": {"stages": 5, "capacitance_farads": 47e-9, "capacitor_tolerance": 0.05,
            "diode": {"saturation_current_amps": 2e-9, "emission_coefficient": 1.9, "series_ohms": 5}},
    "meter": {"range_volts": 1000, "noise_volts": 0.001},
    "panel": [{"slot": 1, "serial": "IT-0001"}, {"slot": 2, "serial": "IT-0002"},
              {"slot": 3, "serial": "IT-0003", "fault": "weak_capacitor"}, {"slot": 4, "serial": "IT-0004"}]
  })");
}

// Writes `config` to a file of its own, removed again on destruction.
class ConfigFile {
 public:
  explicit ConfigFile(const json& config) {
    static std::atomic<int> counter{0};
    path_ = "/tmp/zout-sim-test-" + std::to_string(::getpid()) + "-" + std::to_string(counter++) + ".json";
    std::ofstream(path_) << config.dump(2);
  }
  ~ConfigFile() { std::remove(path_.c_str()); }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
};

// One zout-sim process with its addresses.
struct Sim {
  explicit Sim(const json& config = test_config(), bool pty = false)
      : file(config),
        process(pty ? std::vector<std::string>{ZOUT_SIM_PATH, "--config", file.path(), "--port-base", "0", "--pty"}
                    : std::vector<std::string>{ZOUT_SIM_PATH, "--config", file.path(), "--port-base", "0"},
                10s),
        ready(json::parse(process.ready_line())),
        control(make_transport(parse_address(ready.at("control").get<std::string>())), 5000ms) {}

  // The address of `role` on `link` ("tcp" or "pty").
  std::string address(const std::string& role, const std::string& link = "tcp") const {
    return link == "tcp" ? ready.at(role).get<std::string>() : ready.at("pty").at(role).get<std::string>();
  }
  Session session(const std::string& role, const std::string& link = "tcp", std::chrono::milliseconds timeout = 2000ms) {
    return Session(make_transport(parse_address(address(role, link))), timeout);
  }
  // One control request; the reply must be ok.
  json call(const json& request) {
    json reply = json::parse(control.query(request.dump()));
    INFO(reply.dump());
    REQUIRE(reply.at("ok") == true);
    return reply;
  }

  ConfigFile file;
  test::SimProcess process;
  json ready;
  Session control;
};

Dialect dialect(const std::string& name) {
  return Dialect::load_file(std::string(ZOUT_SOURCE_DIR) + "/config/dialects/" + name);
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace

TEST_CASE("zout-sim prints every address once ready and answers *IDN? on TCP and pseudo-terminals", "[sim-bench]") {
  Sim sim(test_config(), true);
  for (const char* role : {"source", "meter", "load", "switch", "control"}) {
    REQUIRE_THAT(sim.ready.at(role).get<std::string>(), Catch::StartsWith("tcp://127.0.0.1:"));
  }
  const std::string link = GENERATE("tcp", "pty");
  INFO(link);
  const std::vector<std::pair<std::string, std::string>> models = {
      {"source", "SIM-GEN-1"}, {"meter", "SIM-DMM-1"}, {"load", "SIM-LOAD-1"}, {"switch", "SIM-MUX-1"}};
  for (const auto& [role, model] : models) {
    INFO(role);
    if (link == "pty") {
      REQUIRE_THAT(sim.address(role, link), Catch::StartsWith("serial:///") && Catch::EndsWith("?baud=115200"));
      REQUIRE_THAT(sim.ready.at("pty_devices").at(role).get<std::string>(), Catch::StartsWith("/dev/pts/"));
    }
    Session session = sim.session(role, link);
    const Identity id = session.identify();
    REQUIRE(id.manufacturer == "zout-sim");
    REQUIRE(id.model == model);
    REQUIRE_THAT(id.serial_number, Catch::StartsWith("ZS-"));
    REQUIRE(id.firmware == "sim-0.1.0");
    session.clear_status();
    REQUIRE(session.drain_errors().empty());
    session.wait_complete(1000ms);
    // Long form, short form, any case and a ';' chain, over the real link.
    REQUIRE(session.query("*ESR?;SYSTem:ERRor:NEXT?;:syst:vers?") == "0;0,\"No error\";1999.0");
  }
}

TEST_CASE("the dialect-driven instruments drive the simulated bench, more load gives lower DC as the model says",
          "[sim-bench]") {
  Sim sim(test_config(), true);
  const std::string link = GENERATE("tcp", "pty");
  INFO(link);
  Session source_session = sim.session("source", link);
  Session meter_session = sim.session("meter", link);
  Session load_session = sim.session("load", link);
  ScpiSource source(source_session, dialect("scpi-source.json"));
  ScpiMeter meter(meter_session, dialect("scpi-meter.json"), 50.0);
  ScpiLoad load(load_session, dialect("scpi-load.json"));

  const double frequency_hz = 20000.0;
  const double amplitude_volts_peak = 40.0;
  source.select_sine();
  source.set_frequency_hz(frequency_hz);
  source.set_amplitude_volts_peak(amplitude_volts_peak);
  source.set_offset_volts(0.0);
  source.set_output(true);
  REQUIRE(source.read_frequency_hz() == frequency_hz);
  REQUIRE(source.read_amplitude_volts_peak() == amplitude_volts_peak);
  REQUIRE(source.read_offset_volts() == 0.0);
  REQUIRE(source.read_output());
  load.select_mode(LoadMode::constant_current);
  load.set_current_amps(0.0);
  load.set_input(true);
  meter.configure_dc_volts(1000.0, 1.0);

  // Each step: wait until the simulation says it has settled, then compare the meter's
  // reading with the ground truth (1 mV noise at 1 NPLC: within 5 mV).
  std::vector<double> dc_volts;
  const std::vector<double> loads_amps = {0.0, 100e-6, 300e-6};
  for (double amps : loads_amps) {
    load.set_current_amps(amps);
    std::this_thread::sleep_for(150ms);  // tens of milliseconds to settle without a filter
    const json truth = sim.call({{"op", "truth"}, {"tolerance_volts", 0.001}});
    REQUIRE(truth.at("settle_time_s").get<double>() < 0.15);
    const ScpiNumber reading = meter.read_one();
    REQUIRE(reading.is_number());
    const double steady = truth.at("steady_state").at("dc_volts").get<double>();
    REQUIRE(std::abs(reading.value - steady) < 0.005);
    REQUIRE(load.measure_current_amps() == Approx(amps).margin(1e-9));
    REQUIRE(load.measure_voltage_volts() == Approx(steady).epsilon(1e-4));
    dc_volts.push_back(reading.value);
  }
  // The no-load output is 2n·Vpk less the diode drops (a few volts for 10 diodes).
  REQUIRE(dc_volts[0] < 2 * 5 * amplitude_volts_peak);
  REQUIRE(dc_volts[0] > 2 * 5 * amplitude_volts_peak - 20.0);
  REQUIRE(dc_volts[1] < dc_volts[0]);
  REQUIRE(dc_volts[2] < dc_volts[1]);
  // Output impedance against the textbook cascade (Kuffel, Zaengl & Kuffel, High Voltage
  // Engineering, §2.2): ΔV = (I/fC)(2n³/3 + n²/2 − n/6). The simulation adds the source and
  // diode resistances and the ±5 % capacitor spread, so agree within 15 %.
  const double n = 5.0;
  const double z_model_ohms = (2 * n * n * n / 3 + n * n / 2 - n / 6) / (frequency_hz * 47e-9);
  const double z_measured_ohms = (dc_volts[0] - dc_volts[2]) / 300e-6;
  REQUIRE(z_measured_ohms == Approx(z_model_ohms).epsilon(0.15));

  // AC volts: the true RMS of the ripple, which grows with load; read on the 10 V range.
  meter.configure_ac_volts(10.0);
  const auto ac = meter.read_many(3);
  const double ripple_rms = sim.call({{"op", "truth"}}).at("steady_state").at("ripple_rms_volts").get<double>();
  REQUIRE(ripple_rms > 0.5);
  for (const auto& reading : ac) REQUIRE(reading.value == Approx(ripple_rms).margin(0.001));

  // Back to DC: several readings back to back, each near the same settled value.
  meter.configure_dc_volts(1000.0, 0.2);
  const auto dc = meter.read_many(5);
  REQUIRE(dc.size() == 5);
  for (const auto& reading : dc) REQUIRE(reading.value == Approx(dc_volts[2]).margin(0.02));
  REQUIRE(source_session.drain_errors().empty());
  REQUIRE(meter_session.drain_errors().empty());
  REQUIRE(load_session.drain_errors().empty());
  load.set_input(false);
  source.set_output(false);
}

TEST_CASE("a reading takes its integration time and does not hold up the other instruments", "[sim-bench]") {
  Sim sim;
  Session meter = sim.session("meter", "tcp", 3000ms);
  Session source = sim.session("source");
  meter.write("CONF:VOLT:DC 1000;:VOLT:NPLC 10;:SAMP:COUN 5");
  REQUIRE(meter.query("*OPC?") == "1");
  // Five readings of 10 power-line cycles at 50 Hz: 1 s, plus a few ms per command.
  std::string reply;
  double meter_seconds = 0.0;
  std::thread reader([&] {
    const auto start = std::chrono::steady_clock::now();
    reply = meter.query("READ?");
    meter_seconds = seconds_since(start);
  });
  std::this_thread::sleep_for(200ms);
  const auto start = std::chrono::steady_clock::now();
  REQUIRE(source.query("*IDN?") == "zout-sim,SIM-GEN-1,ZS-GEN-0001,sim-0.1.0");
  const double source_seconds = seconds_since(start);
  reader.join();
  REQUIRE(source_seconds < 0.1);
  REQUIRE(meter_seconds >= 1.0);
  REQUIRE(meter_seconds < 1.4);
  REQUIRE(std::count(reply.begin(), reply.end(), ',') == 4);

  // Switching DC to AC costs its relay and filter time (80 ms) before *OPC? can answer.
  auto switch_start = std::chrono::steady_clock::now();
  meter.write("CONF:VOLT:AC");
  REQUIRE(meter.query("*OPC?") == "1");
  REQUIRE(seconds_since(switch_start) >= 0.08);
  switch_start = std::chrono::steady_clock::now();
  meter.write("CONF:VOLT:AC");  // already AC: no switch
  REQUIRE(meter.query("*OPC?") == "1");
  REQUIRE(seconds_since(switch_start) < 0.08);
}

TEST_CASE("the meter returns overload above its range and on an injected overload", "[sim-bench]") {
  Sim sim;
  Session source_session = sim.session("source");
  Session meter_session = sim.session("meter");
  Session load_session = sim.session("load");
  ScpiSource source(source_session, dialect("scpi-source.json"));
  ScpiMeter meter(meter_session, dialect("scpi-meter.json"));
  ScpiLoad load(load_session, dialect("scpi-load.json"));
  source.set_frequency_hz(20000.0);
  source.set_amplitude_volts_peak(40.0);
  source.set_output(true);
  std::this_thread::sleep_for(100ms);
  meter.configure_dc_volts(10.0, 1.0);  // some 390 V on the 10 V range
  REQUIRE(meter.read_one().kind == ScpiNumber::Kind::not_a_number);
  meter.configure_dc_volts(1000.0, 1.0);
  const ScpiNumber fine = meter.read_one();
  REQUIRE(fine.is_number());
  REQUIRE(fine.value > 350.0);

  sim.call({{"op", "inject_fault"}, {"instrument", "meter"}, {"fault", "overload"}, {"count", 2}});
  const auto readings = meter.read_many(3);  // one reply: all three overloaded
  for (const auto& reading : readings) REQUIRE(reading.kind == ScpiNumber::Kind::not_a_number);
  REQUIRE(meter.read_one().kind == ScpiNumber::Kind::not_a_number);
  REQUIRE(meter.read_one().is_number());  // the count is used up

  // The load's own overload is an error for the driver, never a value.
  sim.call({{"op", "inject_fault"}, {"instrument", "load"}, {"fault", "overload"}});
  REQUIRE_THROWS_AS(load.measure_voltage_volts(), IoError);
  sim.call({{"op", "clear_fault"}, {"instrument", "load"}});
  REQUIRE(load.measure_voltage_volts() > 350.0);
}

TEST_CASE("the switch selects a slot, each serial measures as itself, an open output reads 0 V", "[sim-bench]") {
  Sim sim;
  Session switch_session = sim.session("switch");
  Session source_session = sim.session("source");
  Session meter_session = sim.session("meter");
  Session load_session = sim.session("load");
  ScpiSwitch panel_switch(switch_session, dialect("scpi-switch.json"));
  ScpiSource source(source_session, dialect("scpi-source.json"));
  ScpiMeter meter(meter_session, dialect("scpi-meter.json"));
  ScpiLoad load(load_session, dialect("scpi-load.json"));

  // Power-on: slot 1 connected, so a bench without a switch measures slot 1.
  REQUIRE(panel_switch.is_closed(1));
  REQUIRE_FALSE(panel_switch.is_closed(2));
  source.set_frequency_hz(20000.0);
  source.set_amplitude_volts_peak(40.0);
  source.set_output(true);
  load.set_current_amps(300e-6);
  load.set_input(true);
  meter.configure_dc_volts(1000.0, 1.0);

  const auto settled_reading = [&](int slot) {
    panel_switch.close_slot(slot);
    REQUIRE(panel_switch.is_closed(slot));
    std::this_thread::sleep_for(150ms);
    const json truth = sim.call({{"op", "truth"}});
    REQUIRE(truth.at("closed_slot") == slot);
    const ScpiNumber reading = meter.read_one();
    REQUIRE(reading.is_number());
    return std::pair{reading.value, truth};
  };
  const auto [slot1, truth1] = settled_reading(1);
  REQUIRE(truth1.at("serial") == "IT-0001");
  const auto [slot2, truth2] = settled_reading(2);
  REQUIRE(truth2.at("serial") == "IT-0002");
  REQUIRE_FALSE(panel_switch.is_closed(1));
  // The weak capacitor raises the output impedance: at 300 µA it sags volts below good units.
  const auto [slot3, truth3] = settled_reading(3);
  REQUIRE(slot3 < std::min(slot1, slot2) - 3.0);
  // Two good units differ by their spread, but far less than the fault.
  REQUIRE(std::abs(slot1 - slot2) < 3.0);

  // The same serial in another slot is the same unit: the same steady state.
  sim.call({{"op", "insert_unit"}, {"slot", 4}, {"serial", "IT-0001"}});
  const auto [slot4, truth4] = settled_reading(4);
  REQUIRE(truth4.at("steady_state").at("dc_volts").get<double>() ==
          Approx(truth1.at("steady_state").at("dc_volts").get<double>()).epsilon(1e-9));
  REQUIRE(slot4 == Approx(slot1).margin(0.005));

  // Nothing connected: an open output, 0 V and the noise (1 mV at 1 NPLC on the top range).
  panel_switch.open_all();
  REQUIRE_FALSE(panel_switch.is_closed(4));
  REQUIRE(sim.call({{"op", "truth"}}).at("closed_slot").is_null());
  const ScpiNumber open = meter.read_one();
  REQUIRE(open.is_number());
  REQUIRE(std::abs(open.value) < 0.005);
  // An empty slot is open too.
  sim.call({{"op", "remove_unit"}, {"slot", 2}});
  panel_switch.close_slot(2);
  REQUIRE(std::abs(meter.read_one().value) < 0.005);
  // Slots beyond the panel are refused by the instrument.
  switch_session.write("ROUT:CLOS (@5)");
  const auto errors = switch_session.drain_errors();
  REQUIRE(errors.size() == 1);
  REQUIRE(errors[0].code == -222);
}

TEST_CASE("zout-sim stops cleanly with exit 0 on SIGTERM and SIGINT and removes its pty links", "[sim-bench]") {
  const int signal_number = GENERATE(SIGTERM, SIGINT);
  Sim sim(test_config(), true);
  const std::string link = sim.address("meter", "pty");
  const std::string path = link.substr(std::string("serial://").size(), link.find('?') - std::string("serial://").size());
  struct stat info {};
  REQUIRE(::stat(path.c_str(), &info) == 0);
  Session meter = sim.session("meter");
  REQUIRE(meter.query("*OPC?") == "1");
  REQUIRE(sim.process.terminate(signal_number, 5000ms) == 0);
  REQUIRE(::lstat(path.c_str(), &info) != 0);
}

TEST_CASE("zout-sim refuses a bad config with exit 2, naming the file and the JSON path", "[sim-bench]") {
  json config = test_config();
  config["dut"]["diode"]["series_ohm"] = 5;
  ConfigFile file(config);
  const auto result = test::run_child({ZOUT_SIM_PATH, "--config", file.path(), "--port-base", "0"}, 10s);
  REQUIRE(result.exit_code == 2);
  REQUIRE(result.out.empty());
  REQUIRE_THAT(result.err, Catch::Contains(file.path() + ": dut.diode.series_ohm: unknown key"));
  const auto missing = test::run_child({ZOUT_SIM_PATH, "--port-base", "0"}, 10s);
  REQUIRE(missing.exit_code == 2);
  REQUIRE_THAT(missing.err, Catch::Contains("--config"));
}

TEST_CASE("zout-sim --solve prints the steady state the running bench heads for", "[sim-bench]") {
  ConfigFile file(test_config());
  const auto result = test::run_child({ZOUT_SIM_PATH, "--solve", "--config", file.path(), "--frequency-hz", "20000",
                                       "--amplitude-volts-peak", "40", "--load-amps", "0.0002", "--slot", "2"},
                                      20s);
  INFO(result.err);
  REQUIRE(result.exit_code == 0);
  const json solved = json::parse(result.out);
  REQUIRE(solved.at("converged") == true);
  REQUIRE(solved.at("serial") == "IT-0002");
  for (const char* key : {"dc_volts", "ripple_pp_volts", "ripple_rms_volts", "input_power_watts"}) {
    REQUIRE(solved.at(key).get<double>() > 0.0);
  }
  // Power in ≥ power out (the load and the DMM's 10 MΩ).
  const double dc = solved.at("dc_volts").get<double>();
  REQUIRE(solved.at("input_power_watts").get<double>() > dc * 0.0002 + dc * dc / 10e6);

  // The same settings on the running bench head for the same state.
  Sim sim(json::parse(std::ifstream(file.path())));
  Session switch_session = sim.session("switch");
  Session source_session = sim.session("source");
  Session load_session = sim.session("load");
  switch_session.write("ROUT:CLOS (@2)");
  source_session.write("FREQ 20 kHz;VOLT 40 V;:OUTP ON");
  load_session.write("FUNC CURR;CURR 200 uA;:INP ON");
  REQUIRE(load_session.query("*OPC?") == "1");
  REQUIRE(source_session.query("*OPC?") == "1");
  const json truth = sim.call({{"op", "truth"}});
  REQUIRE(truth.at("steady_state").at("dc_volts").get<double>() == Approx(dc).epsilon(1e-6));
  REQUIRE(truth.at("steady_state").at("ripple_pp_volts").get<double>() ==
          Approx(solved.at("ripple_pp_volts").get<double>()).epsilon(1e-4));
}
