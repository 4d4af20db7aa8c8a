// ScpiSource, ScpiMeter and ScpiLoad driven through a real Session over an in-memory
// transport: the exact commands sent, replies parsed and scaled, overloads kept distinct,
// wrong counts and wrong roles refused.

#include <catch2/catch.hpp>

#include <chrono>
#include <cmath>
#include <deque>
#include <limits>
#include <memory>
#include <stdexcept>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/dialect_error.h"
#include "drivers/instruments/scpi_load.h"
#include "drivers/instruments/scpi_meter.h"
#include "drivers/instruments/scpi_source.h"
#include "drivers/instruments/scpi_switch.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport.h"

using namespace std::chrono_literals;
using nlohmann::json;
using zout::Dialect;
using zout::IoError;
using zout::IoErrorKind;
using zout::ScpiNumber;

namespace {

// What passes over the in-memory link, shared between the test and the transport.
struct Wire {
  std::vector<std::string> written;   // every message written, in order
  std::deque<std::string> replies;    // scripted replies, one taken per query written
  std::deque<std::string> input;      // replies waiting to be read
  std::vector<std::chrono::milliseconds> read_budgets;  // time left to each read_line's deadline
};

// A Transport with no I/O: records each message; a message with '?' (a query) moves the
// next scripted reply to the input. With no reply waiting, read_line times out at once.
class MemoryTransport : public zout::Transport {
 public:
  MemoryTransport(std::shared_ptr<Wire> wire, std::string address)
      : wire_(std::move(wire)), address_(std::move(address)) {}

  void open(zout::Deadline) override { open_ = true; }
  void close() noexcept override {
    open_ = false;
    wire_->input.clear();
  }
  bool is_open() const override { return open_; }

  void write_message(std::string_view message, zout::Deadline) override {
    wire_->written.emplace_back(message);
    if (message.find('?') != std::string_view::npos && !wire_->replies.empty()) {
      wire_->input.push_back(wire_->replies.front());
      wire_->replies.pop_front();
    }
  }

  std::string read_line(zout::Deadline deadline) override {
    wire_->read_budgets.push_back(
        std::chrono::duration_cast<std::chrono::milliseconds>(deadline - zout::Clock::now()));
    if (wire_->input.empty()) throw IoError(IoErrorKind::timeout, address_ + ": no reply");
    std::string line = wire_->input.front();
    wire_->input.pop_front();
    return line;
  }

  void discard_input() override { wire_->input.clear(); }
  const std::string& address() const override { return address_; }

 private:
  std::shared_ptr<Wire> wire_;
  std::string address_;
  bool open_ = false;
};

// One instrument on the in-memory link with a 1 s default timeout.
struct Link {
  explicit Link(const std::string& address = "mem://instrument")
      : wire(std::make_shared<Wire>()),
        session(std::make_unique<MemoryTransport>(wire, address), 1000ms) {}

  void reply(std::initializer_list<std::string> lines) {
    for (const auto& line : lines) wire->replies.push_back(line);
  }

  std::shared_ptr<Wire> wire;
  zout::Session session;
};

Dialect shipped(const std::string& name) {
  return Dialect::load_file(std::string(ZOUT_SOURCE_DIR) + "/config/dialects/" + name);
}

using Commands = std::vector<std::string>;

}  // namespace

TEST_CASE("source sends the dialect's exact commands", "[instruments]") {
  Link link;
  zout::ScpiSource source(link.session, shipped("scpi-source.json"));
  source.select_sine();
  source.set_frequency_hz(1000.0);
  source.set_amplitude_volts_peak(2.5);
  source.set_offset_volts(-0.25);
  source.set_output(true);
  source.set_output(false);
  CHECK(link.wire->written == Commands{
                                  "SOURce:FUNCtion:SHAPe SINusoid",
                                  "SOURce:FREQuency:CW 1000",
                                  "SOURce:VOLTage:LEVel:IMMediate:AMPLitude 2.5",
                                  "SOURce:VOLTage:LEVel:IMMediate:OFFSet -0.25",
                                  "OUTPut:STATe ON",
                                  "OUTPut:STATe OFF",
                              });
}

TEST_CASE("source readbacks are parsed in SI units", "[instruments]") {
  Link link;
  zout::ScpiSource source(link.session, shipped("scpi-source.json"));
  link.reply({"+1.000000E+03", "2.5", "-2.500000E-01", "1", "OFF"});
  CHECK(source.read_frequency_hz() == 1000.0);
  CHECK(source.read_amplitude_volts_peak() == 2.5);
  CHECK(source.read_offset_volts() == -0.25);
  CHECK(source.read_output() == true);
  CHECK(source.read_output() == false);
  CHECK(link.wire->written == Commands{
                                  "SOURce:FREQuency:CW?",
                                  "SOURce:VOLTage:LEVel:IMMediate:AMPLitude?",
                                  "SOURce:VOLTage:LEVel:IMMediate:OFFSet?",
                                  "OUTPut:STATe?",
                                  "OUTPut:STATe?",
                              });
}

TEST_CASE("a peak-to-peak generator gets pp volts and its readback is scaled", "[instruments]") {
  auto document = json::parse(R"({
    "role": "source",
    "operations": {
      "select_sine": { "send": ["FUNC SIN"] },
      "set_frequency": { "send": ["FREQ {frequency_hz}"] },
      "set_amplitude": { "send": ["VOLT {amplitude_volts_pp}", "VOLT:RMS {amplitude_volts_rms}"] },
      "set_offset": { "send": ["VOLT:OFFS {offset_volts}"] },
      "output_on": { "send": ["OUTP ON"], "query": "*OPC?", "response": "integer" },
      "output_off": { "send": ["OUTP OFF"] },
      "read_frequency": { "query": "FREQ?", "response": "number" },
      "read_amplitude": { "query": "VOLT?", "response": "number", "scale": 0.5 },
      "read_offset": { "query": "VOLT:OFFS?", "response": "number" },
      "read_output": { "query": "OUTP?", "response": "boolean" }
    }
  })");
  Link link;
  zout::ScpiSource source(link.session, Dialect::from_json(document, "pp.json"));
  source.set_amplitude_volts_peak(1.0);
  link.reply({"1", "+1.000000E+01"});
  source.set_output(true);  // the setter's *OPC? is sent and its reply read
  CHECK(source.read_amplitude_volts_peak() == 5.0);
  CHECK(link.wire->written == Commands{"VOLT 2", "VOLT:RMS 0.7071067812", "OUTP ON", "*OPC?",
                                       "VOLT?"});
  CHECK(link.wire->input.empty());
}

TEST_CASE("source refuses non-finite values before sending anything", "[instruments]") {
  Link link;
  zout::ScpiSource source(link.session, shipped("scpi-source.json"));
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const double inf = std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(source.set_frequency_hz(nan), "source: frequency_hz must be finite, got nan");
  CHECK_THROWS_AS(source.set_amplitude_volts_peak(inf), std::invalid_argument);
  CHECK_THROWS_WITH(source.set_offset_volts(-inf), "source: offset_volts must be finite, got -inf");
  CHECK(link.wire->written.empty());
}

TEST_CASE("source readback of an overload or garbage is a protocol error", "[instruments]") {
  Link link("mem://source");
  zout::ScpiSource source(link.session, shipped("scpi-source.json"));
  link.reply({"9.91E37", "abc"});
  try {
    source.read_frequency_hz();
    FAIL("overload accepted");
  } catch (const IoError& e) {
    CHECK(e.kind() == IoErrorKind::protocol);
    CHECK_THAT(e.what(), Catch::Matchers::StartsWith("mem://source: reply to read_frequency: "));
  }
  try {
    source.read_offset_volts();
    FAIL("garbage accepted");
  } catch (const IoError& e) {
    CHECK(e.kind() == IoErrorKind::protocol);
    CHECK_THAT(e.what(), Catch::Matchers::StartsWith("mem://source: reply to read_offset: "));
  }
}

TEST_CASE("meter configures DC and AC with the dialect's exact commands", "[instruments]") {
  Link link;
  zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
  meter.configure_dc_volts(1000.0, 10.0);
  meter.configure_ac_volts(0.1);
  CHECK(link.wire->written == Commands{"CONFigure:VOLTage:DC 1000", "SENSe:VOLTage:DC:NPLCycles 10",
                                       "CONFigure:VOLTage:AC 0.1"});
  CHECK_THROWS_WITH(meter.configure_dc_volts(10.0, 0.0), "meter: nplc must be positive, got 0");
  CHECK_THROWS_AS(meter.configure_ac_volts(std::numeric_limits<double>::quiet_NaN()),
                  std::invalid_argument);
  CHECK(link.wire->written.size() == 3);
}

TEST_CASE("meter reads one value and keeps an overload distinct", "[instruments]") {
  Link link;
  zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
  link.reply({"+1.234500E+00", "9.91E37", "-9.9E37"});
  const ScpiNumber value = meter.read_one();
  REQUIRE(value.is_number());
  CHECK(value.value == 1.2345);
  const ScpiNumber overload = meter.read_one();
  CHECK_FALSE(overload.is_number());
  CHECK(overload.kind == ScpiNumber::Kind::not_a_number);
  CHECK(meter.read_one().kind == ScpiNumber::Kind::minus_infinity);
  CHECK(link.wire->written ==
        Commands{"SAMPle:COUNt 1", "READ?", "SAMPle:COUNt 1", "READ?", "SAMPle:COUNt 1", "READ?"});
}

TEST_CASE("meter reads many values, overloads kept in place", "[instruments]") {
  Link link;
  zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
  link.reply({"+1.000E+00,9.91E37,+1.200E+00"});
  const auto readings = meter.read_many(3);
  REQUIRE(readings.size() == 3);
  CHECK(readings[0].value == 1.0);
  CHECK(readings[1].kind == ScpiNumber::Kind::not_a_number);
  CHECK(readings[2].value == 1.2);
  CHECK(link.wire->written == Commands{"SAMPle:COUNt 3", "READ?"});
}

TEST_CASE("meter refuses a reply with the wrong number of readings", "[instruments]") {
  Link link("mem://meter");
  zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
  link.reply({"1.0,2.0"});
  try {
    meter.read_many(3);
    FAIL("short list accepted");
  } catch (const IoError& e) {
    CHECK(e.kind() == IoErrorKind::protocol);
    CHECK(std::string(e.what()) == "mem://meter: read_many asked for 3 readings, got 2");
  }
  CHECK_THROWS_WITH(meter.read_many(0), "meter: count must be at least 1, got 0");
}

TEST_CASE("meter gives a reading query time for the integration", "[instruments]") {
  Link link;
  SECTION("DC at 50 Hz mains: 1 s default + 5 x 10 NPLC / 50 Hz") {
    zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
    meter.configure_dc_volts(10.0, 10.0);
    CHECK(meter.reading_timeout(5) == 2000ms);
    CHECK(meter.reading_timeout(1) == 1200ms);
    link.reply({"1,2,3,4,5"});
    CHECK(meter.read_many(5).size() == 5);
    REQUIRE(link.wire->read_budgets.size() == 1);
    CHECK(link.wire->read_budgets[0] > 1900ms);
    CHECK(link.wire->read_budgets[0] <= 2000ms);
  }
  SECTION("DC at 60 Hz mains: 1 s default + 10 x 6 NPLC / 60 Hz") {
    zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"), 60.0);
    meter.configure_dc_volts(10.0, 6.0);
    CHECK(meter.reading_timeout(10) == 2000ms);
  }
  SECTION("AC: a fixed 0.1 s per reading") {
    zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
    meter.configure_ac_volts(1.0);
    CHECK(meter.reading_timeout(4) == 1400ms);
  }
  SECTION("not yet configured: a generous 1 s per reading") {
    zout::ScpiMeter meter(link.session, shipped("scpi-meter.json"));
    CHECK(meter.reading_timeout(2) == 3000ms);
  }
  SECTION("the line frequency must be positive") {
    CHECK_THROWS_AS(zout::ScpiMeter(link.session, shipped("scpi-meter.json"), 0.0),
                    std::invalid_argument);
  }
}

TEST_CASE("meter applies a dialect's scale to readings, not to overloads", "[instruments]") {
  auto document = json::parse(R"({
    "role": "meter",
    "operations": {
      "configure_dc_volts": { "send": ["CONF:VOLT:DC {range_volts}"] },
      "configure_ac_volts": { "send": ["CONF:VOLT:AC {range_volts}"] },
      "read_one": { "query": "READ?", "response": "number", "scale": 0.001 },
      "read_many": { "query": "READ:ARR? {count}", "response": "number_list", "scale": 0.001 }
    }
  })");
  Link link;
  zout::ScpiMeter meter(link.session, Dialect::from_json(document, "millivolts.json"));
  link.reply({"1500", "9.91E37", "250,-500"});
  CHECK(meter.read_one().value == Approx(1.5).epsilon(1e-12));
  CHECK(meter.read_one().kind == ScpiNumber::Kind::not_a_number);
  const auto readings = meter.read_many(2);
  REQUIRE(readings.size() == 2);
  CHECK(readings[0].value == Approx(0.25).epsilon(1e-12));
  CHECK(readings[1].value == Approx(-0.5).epsilon(1e-12));
  CHECK(link.wire->written == Commands{"READ?", "READ?", "READ:ARR? 2"});
}

TEST_CASE("load sends the dialect's exact commands", "[instruments]") {
  Link link;
  zout::ScpiLoad load(link.session, shipped("scpi-load.json"));
  load.set_input(false);
  load.select_mode(zout::LoadMode::constant_current);
  load.set_current_amps(0.0015);
  load.select_mode(zout::LoadMode::constant_resistance);
  load.set_resistance_ohms(1e6);
  load.set_input(true);
  CHECK(link.wire->written == Commands{
                                  "INPut:STATe OFF",
                                  "SOURce:FUNCtion CURRent",
                                  "SOURce:CURRent:LEVel:IMMediate:AMPLitude 0.0015",
                                  "SOURce:FUNCtion RESistance",
                                  "SOURce:RESistance:LEVel:IMMediate:AMPLitude 1000000",
                                  "INPut:STATe ON",
                              });
  CHECK_THROWS_WITH(load.set_current_amps(std::numeric_limits<double>::infinity()),
                    "load: current_amps must be finite, got inf");
  CHECK_THROWS_AS(load.set_resistance_ohms(std::numeric_limits<double>::quiet_NaN()),
                  std::invalid_argument);
  CHECK(link.wire->written.size() == 6);
}

TEST_CASE("load measurements are numbers, an overload is a protocol error", "[instruments]") {
  Link link("mem://load");
  zout::ScpiLoad load(link.session, shipped("scpi-load.json"));
  link.reply({"+1.49E-03", "+2.0501E+03", "9.91E37"});
  CHECK(load.measure_current_amps() == 0.00149);
  CHECK(load.measure_voltage_volts() == 2050.1);
  try {
    load.measure_voltage_volts();
    FAIL("overload accepted as a voltage");
  } catch (const IoError& e) {
    CHECK(e.kind() == IoErrorKind::protocol);
    CHECK_THAT(e.what(), Catch::Matchers::StartsWith("mem://load: reply to measure_voltage: "));
  }
  CHECK(link.wire->written ==
        Commands{"MEASure:CURRent:DC?", "MEASure:VOLTage:DC?", "MEASure:VOLTage:DC?"});
}

TEST_CASE("a missing reply surfaces as the session's timeout", "[instruments]") {
  Link link;
  zout::ScpiLoad load(link.session, shipped("scpi-load.json"));
  try {
    load.measure_current_amps();
    FAIL("no reply, yet a value");
  } catch (const IoError& e) {
    CHECK(e.kind() == IoErrorKind::timeout);
  }
}

TEST_CASE("an instrument refuses a dialect of another role", "[instruments]") {
  Link link;
  const std::string dir = std::string(ZOUT_SOURCE_DIR) + "/config/dialects/";
  CHECK_THROWS_WITH(zout::ScpiSource(link.session, shipped("scpi-meter.json")),
                    dir + "scpi-meter.json: dialect is for role \"meter\"; a source needs role "
                          "\"source\"");
  CHECK_THROWS_WITH(zout::ScpiMeter(link.session, shipped("scpi-load.json")),
                    dir + "scpi-load.json: dialect is for role \"load\"; a meter needs role "
                          "\"meter\"");
  CHECK_THROWS_AS(zout::ScpiLoad(link.session, shipped("scpi-source.json")), zout::DialectError);
  CHECK(link.wire->written.empty());
}

TEST_CASE("switch opens the panel before closing one slot, and reads a slot back", "[instruments]") {
  Link link("mem://switch");
  // ROUTe subsystem commands of SCPI-1999 Vol 2 (channel list "(@N)").
  const auto dialect = Dialect::from_json(nlohmann::json::parse(R"json({
    "role": "switch",
    "operations": {
      "close_slot": { "send": ["ROUTe:CLOSe (@{slot})"] },
      "open_all": { "send": ["ROUTe:OPEN:ALL"] },
      "read_closed": { "query": "ROUTe:CLOSe? (@{slot})", "response": "boolean" }
    }
  })json"), "inline-switch");
  zout::ScpiSwitch panel(link.session, dialect);
  link.reply({"1", "0"});
  panel.close_slot(3);
  CHECK(panel.is_closed(3));
  CHECK_FALSE(panel.is_closed(4));
  panel.open_all();
  CHECK(link.wire->written == Commands{"ROUTe:OPEN:ALL", "ROUTe:CLOSe (@3)", "ROUTe:CLOSe? (@3)",
                                       "ROUTe:CLOSe? (@4)", "ROUTe:OPEN:ALL"});
  CHECK_THROWS_WITH(panel.close_slot(0), "switch: slot must be 1 or more, got 0");
}
