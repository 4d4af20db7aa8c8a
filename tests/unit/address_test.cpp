// Address URIs (DEVELOPERS.md, "Names and units"): what parses, and that every refusal names the wrong part and
// what is allowed.
#include <catch2/catch.hpp>

#include "drivers/transport/address.h"

using namespace zout;

TEST_CASE("tcp address gives host, port and default framing", "[address]") {
  const Address a = parse_address("tcp://127.0.0.1:5601");
  const auto& tcp = std::get<TcpEndpoint>(a.endpoint);
  REQUIRE(tcp.host == "127.0.0.1");
  REQUIRE(tcp.port == 5601);
  REQUIRE(a.framing.line_ending == LineEnding::lf);
  REQUIRE(a.framing.max_line_bytes == 1024 * 1024);
  REQUIRE(a.text == "tcp://127.0.0.1:5601");
}

TEST_CASE("tcp address takes a host name, IPv6 and eol", "[address]") {
  REQUIRE(std::get<TcpEndpoint>(parse_address("tcp://dmm-3.lab.example:5025").endpoint).host == "dmm-3.lab.example");
  const Address v6 = parse_address("tcp://[::1]:5025?eol=crlf");
  REQUIRE(std::get<TcpEndpoint>(v6.endpoint).host == "::1");
  REQUIRE(std::get<TcpEndpoint>(v6.endpoint).port == 5025);
  REQUIRE(v6.framing.line_ending == LineEnding::crlf);
}

TEST_CASE("serial address by device path with every setting", "[address]") {
  const Address a = parse_address("serial:///dev/ttyUSB0?baud=115200&parity=even&data=7&stop=2&flow=rtscts&eol=cr");
  const auto& serial = std::get<SerialEndpoint>(a.endpoint);
  REQUIRE(serial.device_path == "/dev/ttyUSB0");
  REQUIRE(serial.usb_serial.empty());
  REQUIRE(serial.settings.baud == 115200);
  REQUIRE(serial.settings.parity == Parity::even);
  REQUIRE(serial.settings.data_bits == 7);
  REQUIRE(serial.settings.stop_bits == 2);
  REQUIRE(serial.settings.flow == FlowControl::rts_cts);
  REQUIRE(a.framing.line_ending == LineEnding::cr);
}

TEST_CASE("serial address defaults are 9600 8N1 without flow control", "[address]") {
  const Address a = parse_address("serial:///dev/ttyS0");
  const auto& s = std::get<SerialEndpoint>(a.endpoint).settings;
  REQUIRE(s.baud == 9600);
  REQUIRE(s.data_bits == 8);
  REQUIRE(s.parity == Parity::none);
  REQUIRE(s.stop_bits == 1);
  REQUIRE(s.flow == FlowControl::none);
}

TEST_CASE("serial address by USB adapter serial number", "[address]") {
  const Address a = parse_address("serial://usb-serial/A5C0FFEE?baud=115200");
  const auto& serial = std::get<SerialEndpoint>(a.endpoint);
  REQUIRE(serial.usb_serial == "A5C0FFEE");
  REQUIRE(serial.device_path.empty());
  REQUIRE(serial.settings.baud == 115200);
}

TEST_CASE("address refusals name the wrong part and what is allowed", "[address]") {
  using Catch::Contains;
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?baud=fast"),
                      Contains("serial:///dev/ttyUSB0?baud=fast") && Contains("baud=fast") &&
                          Contains("not a whole number"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?baud=12345"),
                      Contains("baud=12345 is not a standard rate") && Contains("115200"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?parity=maybe"),
                      Contains("parity=maybe") && Contains("none, odd, even, mark, space"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?data=9"), Contains("data=9 is out of range"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?stop=3"), Contains("allowed: 1 or 2"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?flow=magic"), Contains("none, rtscts, xonxoff, dtrdsr"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?speed=9600"),
                      Contains("unknown parameter speed") && Contains("baud, data, parity, stop, flow, eol"));
  REQUIRE_THROWS_WITH(parse_address("serial:///dev/ttyUSB0?baud=9600&baud=19200"), Contains("baud is given twice"));
  REQUIRE_THROWS_WITH(parse_address("serial://ttyUSB0"), Contains("serial:///dev/DEVICE"));
  REQUIRE_THROWS_WITH(parse_address("serial://usb-serial/"), Contains("missing USB serial number"));
  REQUIRE_THROWS_WITH(parse_address("tcp://127.0.0.1"), Contains("missing port"));
  REQUIRE_THROWS_WITH(parse_address("tcp://:5025"), Contains("missing host"));
  REQUIRE_THROWS_WITH(parse_address("tcp://host:70000"), Contains("port 70000 is out of range"));
  REQUIRE_THROWS_WITH(parse_address("tcp://host:50x"), Contains("port=50x is not a whole number"));
  REQUIRE_THROWS_WITH(parse_address("tcp://host:5025?baud=9600"), Contains("allowed for tcp: eol"));
  REQUIRE_THROWS_WITH(parse_address("tcp://host:5025?eol=nul"), Contains("allowed: lf, crlf, cr"));
  REQUIRE_THROWS_WITH(parse_address("gpib://0/22"), Contains("starts with tcp:// or serial://"));
  REQUIRE_THROWS_AS(parse_address("usb://x"), AddressError);
}
