// `zout scpi` as a real process against the scripted peer, on TCP and on a pseudo-terminal.
#include <catch2/catch.hpp>

#include "tests/support/child_process.h"
#include "tests/support/scripted_peer.h"

using namespace zout::test;
using namespace std::chrono_literals;
using Link = ScriptedPeer::Link;

TEST_CASE("zout scpi prints each query's reply, one per line", "[cli][scpi]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  ScriptedPeer peer(link, simple_instrument());
  const ChildResult r = run_child({ZOUT_CLI_PATH, "scpi", peer.address(), "*IDN?", "*CLS", "MEAS:VOLT?"}, 10s);
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE(r.out == "Testbench Labs,PEER-1,SN0042,1.0.3\n+1.23450000E+03\n");
  REQUIRE(peer.received() == std::vector<std::string>{"*IDN?", "*CLS", "MEAS:VOLT?"});
}

TEST_CASE("zout scpi --check-errors exits 5 and prints the entries", "[cli][scpi]") {
  int reads = 0;
  ScriptedPeer peer(Link::tcp, [&reads](const std::string& line) {
    if (line == "SYSTem:ERRor?") {
      return ++reads == 1 ? PeerAction::reply("-102,\"Syntax error\"\n") : PeerAction::reply("0,\"No error\"\n");
    }
    return PeerAction::silence();
  });
  const ChildResult r = run_child({ZOUT_CLI_PATH, "scpi", peer.address(), "VOLT:DC:RANG fast", "--check-errors"}, 10s);
  REQUIRE(r.exit_code == 5);
  REQUIRE_THAT(r.err, Catch::Contains("-102,\"Syntax error\""));
}

TEST_CASE("zout scpi times out with exit 3 and a clear message", "[cli][scpi]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  ScriptedPeer peer(link, [](const std::string&) { return PeerAction::silence(); });
  const ChildResult r = run_child({ZOUT_CLI_PATH, "scpi", "--timeout-ms", "200", peer.address(), "MEAS:VOLT?"}, 10s);
  REQUIRE(r.exit_code == 3);
  REQUIRE(r.out.empty());
  REQUIRE_THAT(r.err, Catch::Contains("timeout") && Catch::Contains(peer.address()) &&
                          Catch::Contains("no reply before the deadline") && Catch::Contains("MEAS:VOLT?"));
}

TEST_CASE("zout scpi refuses a bad address with exit 2 naming the parameter", "[cli][scpi]") {
  const ChildResult r = run_child({ZOUT_CLI_PATH, "scpi", "serial:///dev/ttyUSB0?baud=fast", "*IDN?"}, 10s);
  REQUIRE(r.exit_code == 2);
  REQUIRE_THAT(r.err, Catch::Contains("baud=fast is not a whole number"));
}

TEST_CASE("zout scpi reports a missing serial device with exit 4", "[cli][scpi]") {
  const ChildResult r = run_child({ZOUT_CLI_PATH, "scpi", "serial:///dev/ttyUSB-zout-missing", "*IDN?"}, 10s);
  REQUIRE(r.exit_code == 4);
  REQUIRE_THAT(r.err, Catch::Contains("does not exist"));
}

TEST_CASE("zout ports lists ports or says there are none", "[cli][ports]") {
  const ChildResult r = run_child({ZOUT_CLI_PATH, "ports"}, 10s);
  REQUIRE(r.exit_code == 0);
  const bool table = r.out.rfind("DEVICE  ", 0) == 0;
  const bool none = r.out == "no serial ports found\n";
  REQUIRE((table || none));
  const ChildResult j = run_child({ZOUT_CLI_PATH, "ports", "--json"}, 10s);
  REQUIRE(j.exit_code == 0);
  REQUIRE(j.out.front() == '[');
}

TEST_CASE("zout without a verb is a usage error", "[cli]") {
  const ChildResult r = run_child({ZOUT_CLI_PATH}, 10s);
  REQUIRE(r.exit_code == 2);
}
