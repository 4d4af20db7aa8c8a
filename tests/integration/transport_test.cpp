// Transports and the SCPI session over real links: loopback TCP sockets and a real
// pseudo-terminal pair, each test run on both (GENERATE), against a scripted peer.
#include <catch2/catch.hpp>

#include <chrono>
#include <thread>

#include "drivers/scpi/instrument_error.h"
#include "drivers/scpi/session.h"
#include "drivers/transport/io_error.h"
#include "drivers/transport/serial_ports.h"
#include "drivers/transport/serial_transport.h"
#include "drivers/transport/transport_factory.h"
#include "tests/support/scripted_peer.h"

using namespace zout;
using namespace zout::test;
using namespace std::chrono_literals;
using Link = ScriptedPeer::Link;

namespace {

const char* link_name(Link link) { return link == Link::tcp ? "tcp" : "pseudo-terminal"; }

Session open_session(const ScriptedPeer& peer, std::chrono::milliseconds timeout = 1000ms) {
  return Session(make_transport(parse_address(peer.address())), timeout);
}

IoError catch_io_error(const std::function<void()>& call) {
  try {
    call();
  } catch (const IoError& e) {
    return e;
  }
  FAIL("expected an IoError");
  return IoError(IoErrorKind::protocol, "unreachable");
}

}  // namespace

TEST_CASE("query round trip returns the reply and the peer saw the command", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, simple_instrument());
  Session session = open_session(peer);
  const Identity id = session.identify();
  REQUIRE(id.manufacturer == "Testbench Labs");
  REQUIRE(id.model == "PEER-1");
  REQUIRE(id.serial_number == "SN0042");
  REQUIRE(id.firmware == "1.0.3");
  REQUIRE(session.query("MEAS:VOLT?") == "+1.23450000E+03");
  session.write("*CLS");
  REQUIRE(session.drain_errors().empty());
  session.wait_complete(1000ms);
  // Let the peer read the last command before checking what it saw.
  std::this_thread::sleep_for(50ms);
  REQUIRE(peer.received() ==
          std::vector<std::string>{"*IDN?", "MEAS:VOLT?", "*CLS", "SYSTem:ERRor?", "*OPC?"});
}

TEST_CASE("CRLF replies read the same as LF replies", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, simple_instrument("\r\n"));
  Session session = open_session(peer);
  REQUIRE(session.query("MEAS:VOLT?") == "+1.23450000E+03");
  REQUIRE(session.identify().firmware == "1.0.3");
}

TEST_CASE("a silent peer times out within twice the deadline", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, [](const std::string&) { return PeerAction::silence(); });
  Session session = open_session(peer, 300ms);
  const auto started = std::chrono::steady_clock::now();
  const IoError e = catch_io_error([&] { session.query("MEAS:VOLT?"); });
  const auto elapsed = std::chrono::steady_clock::now() - started;
  REQUIRE(e.kind() == IoErrorKind::timeout);
  REQUIRE_THAT(e.what(), Catch::Contains("no reply before the deadline") && Catch::Contains("MEAS:VOLT?"));
  REQUIRE(elapsed >= 300ms);
  REQUIRE(elapsed < 600ms);
}

TEST_CASE("a reply split into single bytes arrives whole", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, [](const std::string&) { return PeerAction::bytewise("-4.2000E-01,+1.0E+00\r\n"); });
  Session session = open_session(peer);
  REQUIRE(session.query("READ?") == "-4.2000E-01,+1.0E+00");
}

TEST_CASE("disconnect in the middle of a reply is reported with the partial bytes", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, [](const std::string&) { return PeerAction::cut_off("+1.23"); });
  Session session = open_session(peer);
  const IoError e = catch_io_error([&] { session.query("MEAS:VOLT?"); });
  REQUIRE(e.kind() == IoErrorKind::disconnected);
  REQUIRE_THAT(e.what(), Catch::Contains("in the middle of a reply") && Catch::Contains("+1.23"));
}

TEST_CASE("garbage bytes reach the parser escaped, and the link stays usable", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  int count = 0;
  ScriptedPeer peer(link, [&count](const std::string&) {
    return ++count == 1 ? PeerAction::reply(std::string("\x01\xfe\x7f#garbage\n", 12)) : PeerAction::reply("0,\"No error\"\n");
  });
  Session session = open_session(peer);
  // The garbage is a line; parsing it as an error-queue entry must fail with the bytes escaped.
  const IoError e = catch_io_error([&] { session.drain_errors(); });
  REQUIRE(e.kind() == IoErrorKind::protocol);
  REQUIRE_THAT(e.what(), Catch::Contains("\\x01\\xFE\\x7F#garbage"));
  REQUIRE(session.drain_errors().empty());
}

TEST_CASE("an over-long line is a protocol error, not unbounded memory", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, [](const std::string&) { return PeerAction::reply(std::string(1024 * 1024 + 10, '7')); });
  Session session = open_session(peer, 5000ms);
  const IoError e = catch_io_error([&] { session.query("READ?"); });
  REQUIRE(e.kind() == IoErrorKind::protocol);
  REQUIRE_THAT(e.what(), Catch::Contains("longer than 1048576 bytes"));
}

TEST_CASE("a late reply after a timeout is discarded, not taken as the next answer", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  ScriptedPeer peer(link, [](const std::string& line) {
    if (line == "SLOW?") {
      std::this_thread::sleep_for(std::chrono::milliseconds(250));
      return PeerAction::reply("late\n");
    }
    return PeerAction::reply("fresh\n");
  });
  Session session = open_session(peer, 100ms);
  REQUIRE_THROWS_AS(session.query("SLOW?"), IoError);
  std::this_thread::sleep_for(300ms);  // the late reply is now waiting in the link
  REQUIRE(session.query("FAST?") == "fresh");
}

TEST_CASE("error-queue entries are drained and reported as an instrument error", "[transport]") {
  const Link link = GENERATE(Link::tcp, Link::pseudo_terminal);
  INFO(link_name(link));
  int reads = 0;
  ScriptedPeer peer(link, [&reads](const std::string& line) {
    if (line != "SYSTem:ERRor?") return PeerAction::silence();
    switch (++reads) {
      case 1: return PeerAction::reply("-113,\"Undefined header\"\n");
      case 2: return PeerAction::reply("-222,\"Data out of range\"\n");
      default: return PeerAction::reply("0,\"No error\"\n");
    }
  });
  Session session = open_session(peer);
  try {
    session.check_errors();
    FAIL("no InstrumentError");
  } catch (const InstrumentError& e) {
    REQUIRE(e.code() == -113);
    REQUIRE_THAT(e.what(), Catch::Contains("-113,\"Undefined header\"; -222,\"Data out of range\""));
  }
}

TEST_CASE("an error queue that never empties stops the drain at its bound", "[transport]") {
  ScriptedPeer peer(Link::tcp, [](const std::string&) { return PeerAction::reply("-350,\"Queue overflow\"\n"); });
  Session session = open_session(peer);
  const IoError e = catch_io_error([&] { session.drain_errors(8); });
  REQUIRE(e.kind() == IoErrorKind::protocol);
  REQUIRE_THAT(e.what(), Catch::Contains("still not empty after 8 reads"));
  REQUIRE(peer.received().size() == 8);
}

TEST_CASE("tcp reconnects cleanly after the peer drops the link", "[transport]") {
  int count = 0;
  ScriptedPeer peer(Link::tcp, [&count](const std::string&) {
    return ++count == 1 ? PeerAction::cut_off("") : PeerAction::reply("back\n");
  });
  Session session = open_session(peer);
  REQUIRE(catch_io_error([&] { session.query("A?"); }).kind() == IoErrorKind::disconnected);
  // The transport closed itself; the next call opens a fresh connection.
  REQUIRE(session.query("B?") == "back");
  REQUIRE(peer.links_accepted() == 2);
  session.reconnect(1000ms);
  REQUIRE(session.query("C?") == "back");
  REQUIRE(peer.links_accepted() == 3);
}

TEST_CASE("tcp connect to a closed port fails with open_failed", "[transport]") {
  // Bind a port, then close it, so nothing listens there.
  std::string address;
  {
    ScriptedPeer peer(Link::tcp, simple_instrument());
    address = peer.address();
  }
  Session session(make_transport(parse_address(address)), 500ms);
  const IoError e = catch_io_error([&] { session.query("*IDN?"); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains(address) && Catch::Contains("cannot connect"));
}

TEST_CASE("serial: a missing device is a clear open error", "[transport][serial]") {
  SerialTransport transport(parse_address("serial:///dev/ttyUSB-zout-missing?baud=9600"));
  const IoError e = catch_io_error([&] { transport.open(deadline_after(500ms)); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains("/dev/ttyUSB-zout-missing does not exist"));
}

TEST_CASE("serial: a file that is not a serial port is refused by libserialport", "[transport][serial]") {
  // /dev/null exists but is no serial port: the libserialport path must say so.
  SerialTransport transport(parse_address("serial:///dev/null"));
  const IoError e = catch_io_error([&] { transport.open(deadline_after(500ms)); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains("/dev/null") && Catch::Contains("libserialport"));
}

TEST_CASE("serial: a USB serial number that is not connected is a clear error", "[transport][serial]") {
  SerialTransport transport(parse_address("serial://usb-serial/ZOUT-NO-SUCH-ADAPTER"));
  const IoError e = catch_io_error([&] { transport.open(deadline_after(500ms)); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains("no USB serial adapter with serial number ZOUT-NO-SUCH-ADAPTER"));
}

TEST_CASE("serial: a port already open elsewhere is reported busy", "[transport][serial]") {
  ScriptedPeer peer(Link::pseudo_terminal, simple_instrument());
  REQUIRE(is_pseudo_terminal(peer.device_path()));
  SerialTransport first(parse_address(peer.address()));
  first.open(deadline_after(500ms));
  SerialTransport second(parse_address(peer.address()));
  const IoError e = catch_io_error([&] { second.open(deadline_after(500ms)); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains("is busy"));
  first.close();
  REQUIRE_NOTHROW(second.open(deadline_after(500ms)));
}

TEST_CASE("serial: pseudo-terminal detection", "[transport][serial]") {
  REQUIRE_FALSE(is_pseudo_terminal("/dev/null"));
  REQUIRE_FALSE(is_pseudo_terminal("/nonexistent"));
}

TEST_CASE("serial: a real port opened through libserialport is locked against a second user",
          "[transport][serial]") {
  // Needs a real (non-pty) serial port that libserialport can open, such as a UART the
  // machine has; machines without one cannot exercise this path and say so.
  std::string usable;
  for (const auto& port : list_serial_ports()) {
    SerialTransport probe(parse_address("serial://" + port.device_path));
    try {
      probe.open(deadline_after(500ms));
      usable = port.device_path;
      break;
    } catch (const IoError&) {
    }
  }
  if (usable.empty()) {
    WARN("no serial port that libserialport can open on this machine; libserialport busy path not exercised");
    return;
  }
  INFO(usable);
  SerialTransport first(parse_address("serial://" + usable + "?baud=115200&parity=even&stop=2"));
  first.open(deadline_after(500ms));
  SerialTransport second(parse_address("serial://" + usable));
  const IoError e = catch_io_error([&] { second.open(deadline_after(500ms)); });
  REQUIRE(e.kind() == IoErrorKind::open_failed);
  REQUIRE_THAT(e.what(), Catch::Contains("is busy"));
  first.close();
  REQUIRE_NOTHROW(second.open(deadline_after(500ms)));
}
