// Faults injected into the real zout-sim through its control channel, each observed from the
// client side with zout's own Session, on TCP and on pseudo-terminals.
#include <catch2/catch.hpp>

#include <atomic>
#include <chrono>
#include <fstream>

#include <nlohmann/json.hpp>

#include "drivers/scpi/instrument_error.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/transport_factory.h"
#include "tests/support/sim_process.h"

using namespace zout;
using namespace std::chrono_literals;
using nlohmann::json;

namespace {

// The smallest bench: a 2-stage cascade in one slot.
const char* const config_text = R"({
  "dut": {"stages": 2, "capacitance_farads": 100e-9},
  "meter": {"range_volts": 100},
  "panel": [{"slot": 1, "serial": "FT-0001"}]
})";

class FaultBench {
 public:
  FaultBench()
      : path_("/tmp/zout-sim-faults-" + std::to_string(::getpid()) + "-" + std::to_string(counter_++) + ".json"),
        process_(start(path_)),
        ready_(json::parse(process_.ready_line())),
        control_(make_transport(parse_address(ready_.at("control").get<std::string>())), 5000ms) {}
  ~FaultBench() { std::remove(path_.c_str()); }

  std::string address(const std::string& role, const std::string& link) const {
    return link == "tcp" ? ready_.at(role).get<std::string>() : ready_.at("pty").at(role).get<std::string>();
  }
  // Sends one control request and returns the reply (ok or not).
  json call(const json& request) { return json::parse(control_.query(request.dump())); }
  Session& control() { return control_; }

 private:
  static test::SimProcess start(const std::string& path) {
    std::ofstream(path) << config_text;
    return test::SimProcess({ZOUT_SIM_PATH, "--config", path, "--port-base", "0", "--pty"}, 10s);
  }

  static inline std::atomic<int> counter_{0};
  std::string path_;
  test::SimProcess process_;
  json ready_;
  Session control_;
};

IoErrorKind io_error_kind(const std::function<void()>& call) {
  try {
    call();
  } catch (const IoError& e) {
    return e.kind();
  }
  FAIL("expected an IoError");
  return IoErrorKind::open_failed;
}

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace

TEST_CASE("each injected fault is seen by the client as the failure it stands for", "[sim-bench]") {
  FaultBench bench;
  const std::string link = GENERATE("tcp", "pty");
  INFO(link);
  Session meter(make_transport(parse_address(bench.address("meter", link))), 400ms);
  const std::string idn = meter.query("*IDN?");
  REQUIRE(idn == "zout-sim,SIM-DMM-1,ZS-DMM-0001,sim-0.1.0");
  const auto inject = [&](const json& fields) {
    json request = {{"op", "inject_fault"}, {"instrument", "meter"}};
    request.update(fields);
    const json reply = bench.call(request);
    INFO(reply.dump());
    REQUIRE(reply.at("ok") == true);
  };

  SECTION("stall: the reply never comes; the deadline passes; the next query is answered") {
    inject({{"fault", "stall"}, {"count", 1}});
    const auto start = std::chrono::steady_clock::now();
    REQUIRE(io_error_kind([&] { meter.query("*IDN?"); }) == IoErrorKind::timeout);
    REQUIRE(seconds_since(start) >= 0.4);
    REQUIRE(meter.query("*IDN?") == idn);
  }
  SECTION("drop: the link closes under the client; reconnecting at the same address works") {
    inject({{"fault", "drop"}, {"count", 1}});
    REQUIRE(io_error_kind([&] { meter.query("*IDN?"); }) == IoErrorKind::disconnected);
    REQUIRE(bench.call({{"op", "faults"}}).at("meter").empty());  // one drop, used up
    meter.reconnect(2000ms);
    REQUIRE(meter.query("*IDN?") == idn);
    // Without a count the instrument drops every link at its first message until cleared.
    inject({{"fault", "drop"}});
    for (int i = 0; i < 2; ++i) {
      REQUIRE(io_error_kind([&] { meter.query("*IDN?"); }) == IoErrorKind::disconnected);
      meter.reconnect(2000ms);
    }
    REQUIRE(bench.call({{"op", "clear_fault"}, {"instrument", "meter"}}).at("ok") == true);
    REQUIRE(meter.query("*IDN?") == idn);
  }
  SECTION("garbage: the reply is unreadable, a protocol error; the link then recovers") {
    inject({{"fault", "garbage"}, {"count", 1}});
    REQUIRE(io_error_kind([&] { meter.identify(); }) == IoErrorKind::protocol);
    REQUIRE(meter.query("*IDN?") == idn);
  }
  SECTION("split: the reply comes a byte at a time and still reads whole") {
    inject({{"fault", "split"}});
    const auto start = std::chrono::steady_clock::now();
    REQUIRE(meter.query("*IDN?") == idn);
    REQUIRE(seconds_since(start) >= 0.001 * static_cast<double>(idn.size()));
    REQUIRE(meter.query("MEAS:VOLT:DC?") == "+0.000000000E+00");  // nothing driven: 0 V, no noise
    REQUIRE(bench.call({{"op", "clear_fault"}, {"instrument", "meter"}, {"fault", "split"}}).at("ok") == true);
    REQUIRE(bench.call({{"op", "faults"}}).at("meter").empty());
  }
  SECTION("errors: pushed entries come out of the error queue as instrument errors") {
    inject({{"fault", "errors"}, {"codes", {-222, -113}}});
    try {
      meter.check_errors();
      FAIL("expected an InstrumentError");
    } catch (const InstrumentError& e) {
      REQUIRE(e.code() == -222);
      REQUIRE_THAT(e.what(), Catch::Contains("-113,\"Undefined header;injected\""));
    }
    REQUIRE(meter.drain_errors().empty());
    // A command error of the client's own, with its standard code.
    meter.write("MEAS:VOLT:DC? 1,2,3");
    meter.write("SENS:VOLT:DC:NPLC 1000");
    meter.write("SAMP:COUN");
    const auto entries = meter.drain_errors();
    REQUIRE(entries.size() == 3);
    REQUIRE(entries[0].code == -108);
    REQUIRE(entries[1].code == -222);
    REQUIRE(entries[2].code == -109);
    REQUIRE(entries[2].message == "Missing parameter;0 parameter(s) given, 1 required");
  }
}

TEST_CASE("garbage from the client never stops the simulated instruments", "[sim-bench]") {
  FaultBench bench;
  Session source(make_transport(parse_address(bench.address("source", "tcp"))), 2000ms);
  // Control bytes, bytes with the high bit set, an unterminated string, a 100 kB line.
  // Each followed by *OPC? so the entries queue in the order sent.
  for (const std::string& message : {std::string("\x01\x02\xff\xfe *IDN?", 10), std::string("VOLT \"never closed"),
                                     std::string(100 * 1024, 'V'), std::string(":::;;;***???")}) {
    source.write(message);
    REQUIRE(source.query("*OPC?") == "1");
  }
  const auto errors = source.drain_errors();
  REQUIRE(errors.size() == 4);
  REQUIRE(errors[0].code == -101);
  REQUIRE(errors[1].code == -102);
  REQUIRE(errors[2].code == -363);
  REQUIRE(errors[3].code == -102);
  REQUIRE(source.query("*IDN?") == "zout-sim,SIM-GEN-1,ZS-GEN-0001,sim-0.1.0");

  // The control channel answers bad requests with an error naming what is wrong.
  const auto refused = [&](const std::string& line) {
    const json reply = json::parse(bench.control().query(line));
    REQUIRE(reply.at("ok") == false);
    return reply.at("error").get<std::string>();
  };
  REQUIRE_THAT(refused("{not json"), Catch::StartsWith("not JSON"));
  REQUIRE_THAT(refused("[1,2]"), Catch::Contains("JSON object"));
  REQUIRE_THAT(refused(R"({"op":"fly"})"), Catch::StartsWith("fly: unknown op"));
  REQUIRE_THAT(refused(R"({"op":"inject_fault","instrument":"scope","fault":"drop"})"),
               Catch::Contains("unknown instrument \"scope\""));
  REQUIRE_THAT(refused(R"({"op":"inject_fault","instrument":"meter","fault":"melt"})"),
               Catch::Contains("unknown fault \"melt\""));
  REQUIRE_THAT(refused(R"({"op":"inject_fault","instrument":"meter","fault":"stall","cout":1})"),
               Catch::Contains("unknown key \"cout\""));
  REQUIRE_THAT(refused(R"({"op":"insert_unit","slot":9,"serial":"X-1"})"), Catch::Contains("no slot 9"));
  REQUIRE_THAT(refused(R"({"op":"insert_unit","slot":1,"serial":"A B"})"), Catch::Contains("not allowed"));
  REQUIRE(bench.call({{"op", "ping"}}).at("ok") == true);
}
