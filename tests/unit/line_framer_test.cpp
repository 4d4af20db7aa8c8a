// The one framing rule all transports share: LF ends a line, a CR before it is dropped,
// CR alone with eol=cr, and a line past the limit is a protocol error.
#include <catch2/catch.hpp>

#include "drivers/transport/io_error.h"
#include "drivers/transport/line_framer.h"

using namespace zout;

TEST_CASE("framer splits LF and CRLF lines and keeps partial ones", "[framing]") {
  LineFramer framer(Framing{});
  framer.append("+1.5E+00\r\n-2");
  REQUIRE(framer.next_line() == std::optional<std::string>("+1.5E+00"));
  REQUIRE_FALSE(framer.next_line().has_value());
  REQUIRE(framer.pending() == "-2");
  framer.append(".5\n\n");
  REQUIRE(framer.next_line() == std::optional<std::string>("-2.5"));
  REQUIRE(framer.next_line() == std::optional<std::string>(""));
  REQUIRE(framer.empty());
  REQUIRE(framer.terminator() == "\n");
}

TEST_CASE("framer assembles a line arriving one byte at a time", "[framing]") {
  LineFramer framer(Framing{});
  const std::string reply = "ACME,M1,0,1.0\r\n";
  for (std::size_t i = 0; i + 1 < reply.size(); ++i) {
    framer.append(reply.substr(i, 1));
    REQUIRE_FALSE(framer.next_line().has_value());
  }
  framer.append("\n");
  REQUIRE(framer.next_line() == std::optional<std::string>("ACME,M1,0,1.0"));
}

TEST_CASE("framer with eol=cr splits on CR and writes CR", "[framing]") {
  LineFramer framer(Framing{LineEnding::cr, 1024});
  framer.append("1\r2\r");
  REQUIRE(framer.next_line() == std::optional<std::string>("1"));
  REQUIRE(framer.next_line() == std::optional<std::string>("2"));
  REQUIRE(framer.terminator() == "\r");
  REQUIRE(LineFramer(Framing{LineEnding::crlf, 1024}).terminator() == "\r\n");
}

TEST_CASE("framer refuses a line over the limit and recovers", "[framing]") {
  LineFramer framer(Framing{LineEnding::lf, 16});
  framer.append("0123456789");
  try {
    framer.append("0123456789");
    FAIL("no error for an over-long line");
  } catch (const IoError& e) {
    REQUIRE(e.kind() == IoErrorKind::protocol);
    REQUIRE_THAT(e.what(), Catch::Contains("longer than 16 bytes") && Catch::Contains("20 bytes"));
  }
  REQUIRE(framer.empty());
  framer.append("ok\n");
  REQUIRE(framer.next_line() == std::optional<std::string>("ok"));
}

TEST_CASE("framer counts only the unterminated tail against the limit", "[framing]") {
  LineFramer framer(Framing{LineEnding::lf, 8});
  REQUIRE_NOTHROW(framer.append("1234567\n1234567\n123"));
  REQUIRE(framer.next_line() == std::optional<std::string>("1234567"));
  REQUIRE(framer.next_line() == std::optional<std::string>("1234567"));
  REQUIRE_NOTHROW(framer.append("45678"));
  REQUIRE_THROWS_AS(framer.append("9"), IoError);
}

TEST_CASE("escape_bytes shows control bytes and cuts long input", "[framing]") {
  REQUIRE(escape_bytes(std::string("A\r\n\x01\xff", 5)) == "A\\r\\n\\x01\\xFF");
  REQUIRE(escape_bytes(std::string(70, 'x'), 64) == std::string(64, 'x') + "... (6 more bytes)");
}
