// Dialect files: the shipped ones load; every broken rule is refused with a message naming
// the file, the JSON path and the rule; templates render to exact SCPI text.

#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <limits>
#include <stdexcept>
#include <string>
#include <unistd.h>

#include <nlohmann/json.hpp>

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/dialect_error.h"

using zout::Dialect;
using zout::DialectError;
using zout::ResponseType;
using nlohmann::json;

namespace {

const std::string dialect_dir = std::string(ZOUT_SOURCE_DIR) + "/config/dialects/";
const std::string origin = "config/dialects/x.json";

json meter_json() {
  return json::parse(R"({
    "role": "meter",
    "description": "test meter",
    "operations": {
      "configure_dc_volts": { "send": ["CONFigure:VOLTage:DC {range_volts}",
                                       "SENSe:VOLTage:DC:NPLCycles {nplc}"] },
      "configure_ac_volts": { "send": ["CONFigure:VOLTage:AC {range_volts}"] },
      "read_one": { "query": "READ?", "response": "number" },
      "read_many": { "send": ["SAMPle:COUNt {count}"], "query": "READ?", "response": "number_list" }
    }
  })");
}

json load_json() {
  return json::parse(R"({
    "role": "load",
    "operations": {
      "select_current_mode": { "send": ["SOURce:FUNCtion CURRent"] },
      "select_resistance_mode": { "send": ["SOURce:FUNCtion RESistance"] },
      "set_current": { "send": ["SOURce:CURRent {current_amps}"] },
      "set_resistance": { "send": ["SOURce:RESistance {resistance_ohms}"] },
      "input_on": { "send": ["INPut:STATe ON"] },
      "input_off": { "send": ["INPut:STATe OFF"] },
      "measure_current": { "query": "MEASure:CURRent:DC?", "response": "number" },
      "measure_voltage": { "query": "MEASure:VOLTage:DC?", "response": "number" }
    }
  })");
}

// The message a refused dialect gives; fails the test if it is accepted.
std::string refusal(const json& document) {
  try {
    Dialect::from_json(document, origin);
  } catch (const DialectError& e) {
    return e.what();
  }
  FAIL("dialect accepted: " << document.dump());
  return {};
}

std::string refusal_of_file(const std::string& path) {
  try {
    Dialect::load_file(path);
  } catch (const DialectError& e) {
    return e.what();
  }
  FAIL("dialect file accepted: " << path);
  return {};
}

// A file under the system temp directory holding `text`; removed by the destructor.
struct TempFile {
  explicit TempFile(const std::string& text)
      : path((std::filesystem::temp_directory_path() /
              ("zout_dialect_test_" + std::to_string(::getpid()) + ".json"))
                 .string()) {
    std::ofstream(path) << text;
  }
  ~TempFile() { std::filesystem::remove(path); }
  std::string path;
};

}  // namespace

TEST_CASE("shipped source dialect loads with the SCPI-1999 source tree", "[dialect]") {
  const auto dialect = Dialect::load_file(dialect_dir + "scpi-source.json");
  CHECK(dialect.role() == "source");
  CHECK(dialect.origin() == dialect_dir + "scpi-source.json");
  CHECK_THAT(dialect.description(), Catch::Matchers::Contains("SCPI-1999"));
  CHECK(dialect.render_send("select_sine", {}) ==
        std::vector<std::string>{"SOURce:FUNCtion:SHAPe SINusoid"});
  CHECK(dialect.render_send("set_frequency", {{"frequency_hz", 1000.0}}) ==
        std::vector<std::string>{"SOURce:FREQuency:CW 1000"});
  CHECK(dialect.render_send("set_amplitude", {{"amplitude_volts_peak", 2.5},
                                              {"amplitude_volts_pp", 5.0},
                                              {"amplitude_volts_rms", 1.77}}) ==
        std::vector<std::string>{"SOURce:VOLTage:LEVel:IMMediate:AMPLitude 2.5"});
  CHECK(dialect.render_send("output_on", {}) == std::vector<std::string>{"OUTPut:STATe ON"});
  CHECK(dialect.render_send("output_off", {}) == std::vector<std::string>{"OUTPut:STATe OFF"});
  const auto& read_output = dialect.operation("read_output");
  CHECK(read_output.send.empty());
  CHECK(read_output.query == std::optional<std::string>("OUTPut:STATe?"));
  CHECK(read_output.response == ResponseType::boolean);
  CHECK(dialect.operation("read_amplitude").scale == 1.0);
}

TEST_CASE("shipped meter dialect loads with the SCPI-1999 measurement tree", "[dialect]") {
  const auto dialect = Dialect::load_file(dialect_dir + "scpi-meter.json");
  CHECK(dialect.role() == "meter");
  CHECK_THAT(dialect.description(), Catch::Matchers::Contains("SCPI-1999"));
  CHECK(dialect.render_send("configure_dc_volts", {{"range_volts", 1000.0}, {"nplc", 10.0}}) ==
        std::vector<std::string>{"CONFigure:VOLTage:DC 1000", "SENSe:VOLTage:DC:NPLCycles 10"});
  CHECK(dialect.render_send("configure_ac_volts", {{"range_volts", 10.0}}) ==
        std::vector<std::string>{"CONFigure:VOLTage:AC 10"});
  // read_one puts the sample count back to 1 after read_many changed it.
  CHECK(dialect.render_send("read_one", {}) == std::vector<std::string>{"SAMPle:COUNt 1"});
  CHECK(dialect.render_query("read_one", {}) == "READ?");
  CHECK(dialect.render_send("read_many", {{"count", 20.0}}) ==
        std::vector<std::string>{"SAMPle:COUNt 20"});
  CHECK(dialect.operation("read_many").response == ResponseType::number_list);
}

TEST_CASE("shipped load dialect loads with the SCPI-1999 load tree", "[dialect]") {
  const auto dialect = Dialect::load_file(dialect_dir + "scpi-load.json");
  CHECK(dialect.role() == "load");
  CHECK_THAT(dialect.description(), Catch::Matchers::Contains("SCPI-1999"));
  CHECK(dialect.render_send("select_current_mode", {}) ==
        std::vector<std::string>{"SOURce:FUNCtion CURRent"});
  CHECK(dialect.render_send("set_current", {{"current_amps", 0.0015}}) ==
        std::vector<std::string>{"SOURce:CURRent:LEVel:IMMediate:AMPLitude 0.0015"});
  CHECK(dialect.render_send("set_resistance", {{"resistance_ohms", 1e6}}) ==
        std::vector<std::string>{"SOURce:RESistance:LEVel:IMMediate:AMPLitude 1000000"});
  CHECK(dialect.render_query("measure_voltage", {}) == "MEASure:VOLTage:DC?");
  CHECK(dialect.render_query("measure_current", {}) == "MEASure:CURRent:DC?");
}

TEST_CASE("each role lists its required operations and placeholders", "[dialect]") {
  CHECK(Dialect::required_operations("meter") ==
        std::vector<std::string>{"configure_dc_volts", "configure_ac_volts", "read_one",
                                 "read_many"});
  CHECK(Dialect::required_operations("source").size() == 10);
  CHECK(Dialect::required_operations("load").size() == 8);
  CHECK(Dialect::required_operations("switch") ==
        std::vector<std::string>{"close_slot", "open_all", "read_closed"});
  CHECK(Dialect::required_operations("scope").empty());
  CHECK(Dialect::allowed_placeholders("source", "set_amplitude") ==
        std::vector<std::string>{"amplitude_volts_peak", "amplitude_volts_pp",
                                 "amplitude_volts_rms"});
  CHECK(Dialect::allowed_placeholders("meter", "read_one").empty());
}

TEST_CASE("a dialect missing a required operation is refused", "[dialect]") {
  auto document = meter_json();
  document["operations"].erase("read_one");
  CHECK(refusal(document) ==
        "config/dialects/x.json: operation \"read_one\" is missing (role meter requires "
        "configure_dc_volts, configure_ac_volts, read_one, read_many)");
}

TEST_CASE("an unknown operation name is refused", "[dialect]") {
  auto document = meter_json();
  document["operations"]["read_two"] = json::parse(R"({"query": "READ?", "response": "number"})");
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_two: unknown operation; role meter has "
        "configure_dc_volts, configure_ac_volts, read_one, read_many");
}

TEST_CASE("an unknown placeholder is refused with the allowed ones", "[dialect]") {
  auto document = load_json();
  document["operations"]["set_current"]["send"][0] = "SOURce:CURRent {curent_amps}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.set_current.send[0]: unknown placeholder "
        "{curent_amps}; allowed: {current_amps}");

  document = load_json();
  document["operations"]["input_on"]["send"][0] = "INPut:STATe {current_amps}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.input_on.send[0]: unknown placeholder "
        "{current_amps}; allowed: none");

  document = meter_json();
  document["operations"]["read_one"]["query"] = "READ? {count}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.query: unknown placeholder {count}; "
        "allowed: none");
}

TEST_CASE("unbalanced or empty braces are refused", "[dialect]") {
  auto document = meter_json();
  document["operations"]["configure_dc_volts"]["send"][0] = "CONFigure:VOLTage:DC {range_volts";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_dc_volts.send[0]: unbalanced brace: '{' "
        "at character 22 is not closed in \"CONFigure:VOLTage:DC {range_volts\"");

  document = meter_json();
  document["operations"]["configure_dc_volts"]["send"][1] = "SENSe:VOLTage:DC:NPLCycles nplc}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_dc_volts.send[1]: unbalanced brace: '}' "
        "at character 32 has no '{' in \"SENSe:VOLTage:DC:NPLCycles nplc}\"");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["send"][0] = "CONFigure:VOLTage:AC {{range_volts}}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.send[0]: unbalanced brace: '{' "
        "at character 22 is not closed in \"CONFigure:VOLTage:AC {{range_volts}}\"");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["send"][0] = "CONFigure:VOLTage:AC {}";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.send[0]: empty placeholder {} "
        "at character 22 in \"CONFigure:VOLTage:AC {}\"");
}

TEST_CASE("a wrong, unknown or missing response type is refused", "[dialect]") {
  auto document = meter_json();
  document["operations"]["read_one"]["response"] = "boolean";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.response: \"boolean\" is the wrong type; "
        "read_one must answer \"number\"");

  document = meter_json();
  document["operations"]["read_many"]["response"] = "number";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_many.response: \"number\" is the wrong type; "
        "read_many must answer \"number_list\"");

  document = meter_json();
  document["operations"]["read_one"]["response"] = "float";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.response: unknown response type \"float\"; "
        "expected one of number, number_list, boolean, integer, string");

  document = meter_json();
  document["operations"]["read_one"].erase("response");
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one: has a \"query\" but no \"response\" (one "
        "of number, number_list, boolean, integer, string)");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["response"] = "number";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.response: is allowed only "
        "together with \"query\"");

  document = meter_json();
  document["operations"]["read_one"] = json::parse(R"({"send": ["INITiate"]})");
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one: must have a \"query\" answering \"number\"");
}

TEST_CASE("a wrong or missing role is refused", "[dialect]") {
  auto document = meter_json();
  document["role"] = "dmm";
  CHECK(refusal(document) ==
        "config/dialects/x.json: role: unknown role \"dmm\"; expected source, meter, load or switch");

  document = meter_json();
  document.erase("role");
  CHECK(refusal(document) == "config/dialects/x.json: role: is missing (source, meter, load or switch)");

  // A load's operations under role meter: the first one met is unknown to a meter.
  document = load_json();
  document["role"] = "meter";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.input_off: unknown operation; role meter has "
        "configure_dc_volts, configure_ac_volts, read_one, read_many");
}

TEST_CASE("unknown keys are refused at the top and in operations", "[dialect]") {
  auto document = meter_json();
  document["vendor"] = "x";
  CHECK(refusal(document) ==
        "config/dialects/x.json: vendor: unknown key; allowed: role, description, operations");

  document = meter_json();
  document["operations"]["read_one"]["timeout_ms"] = 5;
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.timeout_ms: unknown key; allowed: send, "
        "query, response, scale");
}

TEST_CASE("malformed templates and scales are refused", "[dialect]") {
  auto document = meter_json();
  document["operations"]["configure_ac_volts"]["send"][0] = "CONFigure:VOLTage:AC?";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.send[0]: \"CONFigure:VOLTage:AC?\" "
        "is a query; put it in \"query\" so its reply is read");

  document = meter_json();
  document["operations"]["read_one"]["query"] = "READ";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.query: \"READ\" is not a query (an SCPI "
        "query ends its header with '?')");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["send"][0] = "CONF:VOLT:AC 10\nREAD?";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.send[0]: control character \\x0A "
        "is not allowed (one command per entry; the transport adds the terminator)");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["send"] = json::array();
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.send: must be a non-empty array "
        "of command templates");

  document = meter_json();
  document["operations"]["read_one"]["scale"] = 0;
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.read_one.scale: must be a finite number other than "
        "zero");

  document = meter_json();
  document["operations"]["configure_ac_volts"]["scale"] = 2;
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.configure_ac_volts.scale: applies only to an "
        "operation that returns a number");

  // A setter that ignores its value would silently send a fixed level.
  document = load_json();
  document["operations"]["set_current"]["send"][0] = "SOURce:CURRent 1";
  CHECK(refusal(document) ==
        "config/dialects/x.json: operations.set_current: uses none of its values; expected "
        "{current_amps}");
}

TEST_CASE("a missing file and bad JSON are refused naming the file", "[dialect]") {
  CHECK(refusal_of_file("/nonexistent/zout/x.json") ==
        "/nonexistent/zout/x.json: cannot open dialect file (No such file or directory)");

  const TempFile file("{\n  \"role\": \"meter\",\n  \"operations\": }\n");
  const auto message = refusal_of_file(file.path);
  CHECK_THAT(message, Catch::Matchers::StartsWith(file.path + ": not valid JSON: "));
  CHECK_THAT(message, Catch::Matchers::Contains("line 3, column 17"));
}

TEST_CASE("a dialect file on disk with a setter query and a scale loads", "[dialect]") {
  auto document = load_json();
  document["operations"]["input_on"]["query"] = "*OPC?";
  document["operations"]["input_on"]["response"] = "integer";
  document["operations"]["measure_current"]["scale"] = 0.001;
  const TempFile file(document.dump(2));
  const auto dialect = Dialect::load_file(file.path);
  CHECK(dialect.operation("input_on").query == std::optional<std::string>("*OPC?"));
  CHECK(dialect.operation("input_on").response == ResponseType::integer);
  CHECK(dialect.operation("measure_current").scale == 0.001);
  CHECK(dialect.description().empty());
}

TEST_CASE("render writes numbers compactly as SCPI NRf", "[dialect]") {
  const auto one = [](double value) {
    return Dialect::render("SOURce:FREQuency:CW {frequency_hz}", {{"frequency_hz", value}});
  };
  CHECK(one(1e-5) == "SOURce:FREQuency:CW 1e-05");
  CHECK(one(50.0) == "SOURce:FREQuency:CW 50");
  CHECK(one(0.5) == "SOURce:FREQuency:CW 0.5");
  CHECK(one(-2.25) == "SOURce:FREQuency:CW -2.25");
  CHECK(one(1.0 / 3.0) == "SOURce:FREQuency:CW 0.3333333333");
  CHECK(one(1234567.891) == "SOURce:FREQuency:CW 1234567.891");
  CHECK(one(2.5e10) == "SOURce:FREQuency:CW 2.5e+10");
  CHECK(one(0.0) == "SOURce:FREQuency:CW 0");

  CHECK(Dialect::render("A {x};B {y} {x}", {{"x", 1.0}, {"y", 2.0}}) == "A 1;B 2 1");
  CHECK(Dialect::render("*RST", {}) == "*RST");
}

TEST_CASE("rendering without a value is a logic error", "[dialect]") {
  CHECK_THROWS_AS(Dialect::render("SOURce:FREQuency:CW {frequency_hz}", {}), std::logic_error);
  CHECK_THROWS_WITH(Dialect::render("SOURce:FREQuency:CW {frequency_hz}", {{"offset_volts", 1.0}}),
                    "template \"SOURce:FREQuency:CW {frequency_hz}\": no value for {frequency_hz}");
  CHECK_THROWS_AS(Dialect::render("X {v}", {{"v", std::numeric_limits<double>::quiet_NaN()}}),
                  std::logic_error);
  CHECK_THROWS_AS(Dialect::render("X {v", {{"v", 1.0}}), std::logic_error);

  const auto dialect = Dialect::from_json(meter_json(), origin);
  CHECK_THROWS_WITH(dialect.render_query("configure_ac_volts", {}),
                    "config/dialects/x.json: operation \"configure_ac_volts\" has no query");
  CHECK_THROWS_AS(dialect.operation("set_frequency"), std::logic_error);
}
