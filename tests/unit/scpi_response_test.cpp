// Unit tests for the SCPI response parsers (drivers/scpi/response.h, identity.h,
// error_entry.h): accepted forms, special values, and the exact protocol errors.

#include <catch2/catch.hpp>

#include <climits>
#include <cmath>
#include <string>
#include <string_view>

#include "drivers/scpi/error_entry.h"
#include "drivers/scpi/identity.h"
#include "drivers/scpi/response.h"
#include "drivers/transport/io_error.h"

using zout::IoError;
using zout::IoErrorKind;
using zout::ScpiNumber;

namespace {

// The kind of the IoError `f` throws; fails the test if it throws something else or nothing.
template <typename F>
IoErrorKind thrown_kind(F&& f) {
  try {
    f();
  } catch (const IoError& e) {
    return e.kind();
  }
  FAIL("no IoError was thrown");
  return IoErrorKind::open_failed;
}

}  // namespace

TEST_CASE("parse_number reads NR1 integer forms", "[scpi]") {
  CHECK(zout::parse_number("123").value == 123.0);
  CHECK(zout::parse_number("-5").value == -5.0);
  CHECK(zout::parse_number("+7").value == 7.0);
  CHECK(zout::parse_number("0").value == 0.0);
  CHECK(zout::parse_number("007").value == 7.0);
  CHECK(zout::parse_number("123").is_number());
}

TEST_CASE("parse_number reads NR2 decimal forms", "[scpi]") {
  CHECK(zout::parse_number("12.5").value == Approx(12.5));
  CHECK(zout::parse_number(".5").value == Approx(0.5));
  CHECK(zout::parse_number("-.25").value == Approx(-0.25));
  CHECK(zout::parse_number("5.").value == Approx(5.0));
  CHECK(zout::parse_number("-0.001").value == Approx(-0.001));
}

TEST_CASE("parse_number reads NR3 exponent forms", "[scpi]") {
  const ScpiNumber n = zout::parse_number("1.23E-3");
  REQUIRE(n.kind == ScpiNumber::Kind::number);
  REQUIRE(n.value == Approx(1.23e-3));
  CHECK(zout::parse_number("+4.5e+06").value == Approx(4.5e6));
  CHECK(zout::parse_number("1e3").value == Approx(1000.0));
  CHECK(zout::parse_number("-2.5E0").value == Approx(-2.5));
  CHECK(zout::parse_number("+1.00000000E+01").value == Approx(10.0));
  CHECK(zout::parse_number("5E-3").value == Approx(0.005));
}

TEST_CASE("parse_number trims surrounding whitespace", "[scpi]") {
  CHECK(zout::parse_number("  1.5\r\n").value == Approx(1.5));
  CHECK(zout::parse_number("\t-3 ").value == Approx(-3.0));
}

TEST_CASE("parse_number reads IEEE 488.2 non-decimal forms", "[scpi]") {
  // IEEE 488.2 §7.7.4: #H hexadecimal, #Q octal, #B binary.
  CHECK(zout::parse_number("#H1F").value == 31.0);
  CHECK(zout::parse_number("#h1f").value == 31.0);
  CHECK(zout::parse_number("#Q17").value == 15.0);
  CHECK(zout::parse_number("#B101").value == 5.0);
  CHECK(zout::parse_number(" #HFF\n").value == 255.0);
}

TEST_CASE("parse_number refuses malformed text with a protocol error", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_number("1.2.3"),
                      Catch::Contains("expected an SCPI number, got \"1.2.3\""));
  REQUIRE(thrown_kind([] { zout::parse_number("1.2.3"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_number(""), Catch::Contains("expected an SCPI number, got \"\""));
  REQUIRE_THROWS_WITH(zout::parse_number("   "),
                      Catch::Contains("expected an SCPI number, got \"\""));
  REQUIRE_THROWS_WITH(zout::parse_number("12V"),
                      Catch::Contains("expected an SCPI number, got \"12V\""));
  REQUIRE_THROWS_WITH(zout::parse_number("0x10"),
                      Catch::Contains("expected an SCPI number, got \"0x10\""));
  REQUIRE_THROWS_WITH(zout::parse_number("1 2"), Catch::Contains("got \"1 2\""));
  REQUIRE_THROWS_WITH(zout::parse_number("1e"), Catch::Contains("got \"1e\""));
  REQUIRE_THROWS_WITH(zout::parse_number("E5"), Catch::Contains("got \"E5\""));
  REQUIRE_THROWS_WITH(zout::parse_number("."), Catch::Contains("got \".\""));
  REQUIRE_THROWS_WITH(zout::parse_number("+-1"), Catch::Contains("got \"+-1\""));
  REQUIRE_THROWS_WITH(zout::parse_number("1,2"), Catch::Contains("got \"1,2\""));
  // Non-decimal forms: bad digits for the base, no digits, unknown letter.
  REQUIRE_THROWS_WITH(zout::parse_number("#B102"), Catch::Contains("got \"#B102\""));
  REQUIRE_THROWS_WITH(zout::parse_number("#Q8"), Catch::Contains("got \"#Q8\""));
  REQUIRE_THROWS_WITH(zout::parse_number("#H"), Catch::Contains("got \"#H\""));
  REQUIRE_THROWS_WITH(zout::parse_number("#X12"), Catch::Contains("got \"#X12\""));
  REQUIRE_THROWS_WITH(zout::parse_number("#H-1"), Catch::Contains("got \"#H-1\""));
  REQUIRE_THROWS_WITH(zout::parse_number("#H1FFFFFFFFFFFFFFFF"),
                      Catch::Contains("fits in 64 bits"));
}

TEST_CASE("parse_number escapes control bytes in its error message", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_number("1\x01"), Catch::Contains("got \"1\\x01\""));
}

TEST_CASE("parse_number refuses nan and inf as C spells them", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_number("nan"), Catch::Contains("got \"nan\""));
  REQUIRE_THROWS_WITH(zout::parse_number("inf"), Catch::Contains("got \"inf\""));
  REQUIRE_THROWS_WITH(zout::parse_number("-inf"), Catch::Contains("got \"-inf\""));
  REQUIRE_THROWS_WITH(zout::parse_number("infinity"), Catch::Contains("got \"infinity\""));
  REQUIRE_THROWS_WITH(zout::parse_number("NaN"), Catch::Contains("got \"NaN\""));
}

TEST_CASE("parse_number maps the SCPI special values", "[scpi]") {
  // SCPI-1999 Vol 1 §7.2.1 (from memory): 9.91E37 is not-a-number, +9.9E37 is positive
  // infinity and -9.9E37 is negative infinity.
  CHECK(zout::parse_number("9.91E37").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("+9.91000000E+37").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("9.9E37").kind == ScpiNumber::Kind::plus_infinity);
  CHECK(zout::parse_number("+9.90000000E+37").kind == ScpiNumber::Kind::plus_infinity);
  CHECK(zout::parse_number("-9.9E37").kind == ScpiNumber::Kind::minus_infinity);
  CHECK(zout::parse_number("-9.90000E+37").kind == ScpiNumber::Kind::minus_infinity);
  CHECK_FALSE(zout::parse_number("9.91E37").is_number());
  // The same values in the SCPI character forms.
  CHECK(zout::parse_number("NAN").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("INF").kind == ScpiNumber::Kind::plus_infinity);
  CHECK(zout::parse_number("+INF").kind == ScpiNumber::Kind::plus_infinity);
  CHECK(zout::parse_number("NINF").kind == ScpiNumber::Kind::minus_infinity);
  CHECK(zout::parse_number(" -INF\n").kind == ScpiNumber::Kind::minus_infinity);
}

TEST_CASE("parse_number treats other absurd magnitudes as not_a_number", "[scpi]") {
  // Our rule: above 1e37 in magnitude, anything but the two infinity markers is not a number.
  CHECK(zout::parse_number("5E37").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("-9.91E37").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("1E300").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("1E400").kind == ScpiNumber::Kind::not_a_number);
  CHECK(zout::parse_number("-1E400").kind == ScpiNumber::Kind::not_a_number);
  // 1e37 itself is still a number, and a value below double range is the nearest double, zero.
  CHECK(zout::parse_number("1E37").kind == ScpiNumber::Kind::number);
  const ScpiNumber tiny = zout::parse_number("1E-400");
  CHECK(tiny.kind == ScpiNumber::Kind::number);
  CHECK(tiny.value == 0.0);
}

TEST_CASE("parse_finite_number returns finite values and refuses special ones", "[scpi]") {
  CHECK(zout::parse_finite_number("-1.5E+2") == Approx(-150.0));
  REQUIRE_THROWS_WITH(zout::parse_finite_number("9.91E37"),
                      Catch::Contains("overload/invalid") && Catch::Contains("\"9.91E37\""));
  REQUIRE(thrown_kind([] { zout::parse_finite_number("9.91E37"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_finite_number("+9.9E37"),
                      Catch::Contains("overload/invalid") && Catch::Contains("+infinity"));
  REQUIRE_THROWS_WITH(zout::parse_finite_number("-9.9E37"),
                      Catch::Contains("overload/invalid") && Catch::Contains("-infinity"));
  REQUIRE_THROWS_WITH(zout::parse_finite_number("NAN"), Catch::Contains("overload/invalid"));
  REQUIRE_THROWS_WITH(zout::parse_finite_number("abc"),
                      Catch::Contains("expected an SCPI number, got \"abc\""));
}

TEST_CASE("parse_integer reads NR1 and non-decimal forms", "[scpi]") {
  CHECK(zout::parse_integer("42") == 42);
  CHECK(zout::parse_integer("-17") == -17);
  CHECK(zout::parse_integer("+3") == 3);
  CHECK(zout::parse_integer(" 0\r\n") == 0);
  CHECK(zout::parse_integer("#H1F") == 31);
  CHECK(zout::parse_integer("#Q17") == 15);
  CHECK(zout::parse_integer("#B101") == 5);
  CHECK(zout::parse_integer("9223372036854775807") == LLONG_MAX);
  CHECK(zout::parse_integer("-9223372036854775808") == LLONG_MIN);
  CHECK(zout::parse_integer("#H7FFFFFFFFFFFFFFF") == LLONG_MAX);
}

TEST_CASE("parse_integer refuses decimals, garbage and out-of-range values", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_integer("1.5"),
                      Catch::Contains("expected an SCPI integer (NR1 or #H/#Q/#B), got \"1.5\""));
  REQUIRE(thrown_kind([] { zout::parse_integer("1.5"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_integer("1E3"), Catch::Contains("got \"1E3\""));
  REQUIRE_THROWS_WITH(zout::parse_integer(""), Catch::Contains("got \"\""));
  REQUIRE_THROWS_WITH(zout::parse_integer("-"), Catch::Contains("got \"-\""));
  REQUIRE_THROWS_WITH(zout::parse_integer("+-5"), Catch::Contains("got \"+-5\""));
  REQUIRE_THROWS_WITH(zout::parse_integer("12a"), Catch::Contains("got \"12a\""));
  REQUIRE_THROWS_WITH(zout::parse_integer("9223372036854775808"),
                      Catch::Contains("within the signed 64-bit range") &&
                          Catch::Contains("\"9223372036854775808\""));
  REQUIRE_THROWS_WITH(zout::parse_integer("#H8000000000000000"),
                      Catch::Contains("within the signed 64-bit range"));
}

TEST_CASE("parse_boolean reads 1, 0, ON and OFF in any case", "[scpi]") {
  CHECK(zout::parse_boolean("1"));
  CHECK_FALSE(zout::parse_boolean("0"));
  CHECK(zout::parse_boolean("ON"));
  CHECK(zout::parse_boolean("on"));
  CHECK_FALSE(zout::parse_boolean("OFF"));
  CHECK_FALSE(zout::parse_boolean("Off"));
  CHECK(zout::parse_boolean(" 1\n"));
}

TEST_CASE("parse_boolean refuses anything else", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_boolean("2"),
                      Catch::Contains("expected an SCPI boolean (1, 0, ON or OFF), got \"2\""));
  REQUIRE(thrown_kind([] { zout::parse_boolean("2"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_boolean("TRUE"), Catch::Contains("got \"TRUE\""));
  REQUIRE_THROWS_WITH(zout::parse_boolean(""), Catch::Contains("got \"\""));
  REQUIRE_THROWS_WITH(zout::parse_boolean("ONN"), Catch::Contains("got \"ONN\""));
}

TEST_CASE("parse_quoted_string unquotes double- and single-quoted strings", "[scpi]") {
  CHECK(zout::parse_quoted_string("\"hello\"") == "hello");
  CHECK(zout::parse_quoted_string("'hello'") == "hello");
  CHECK(zout::parse_quoted_string("\"\"") == "");
  CHECK(zout::parse_quoted_string("  \"a, b\"\r\n") == "a, b");
  // A doubled quote stands for one; the other quote character needs no doubling.
  CHECK(zout::parse_quoted_string("\"a\"\"b\"") == "a\"b");
  CHECK(zout::parse_quoted_string("'it''s'") == "it's");
  CHECK(zout::parse_quoted_string("\"it's\"") == "it's");
}

TEST_CASE("parse_quoted_string refuses unterminated and unquoted text", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_quoted_string("\"abc"),
                      Catch::Contains("expected an SCPI quoted string with a closing quote, got "
                                      "\"\"abc\""));
  REQUIRE(thrown_kind([] { zout::parse_quoted_string("\"abc"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_quoted_string("abc"),
                      Catch::Contains("expected an SCPI quoted string, got \"abc\""));
  REQUIRE_THROWS_WITH(zout::parse_quoted_string("\"a\"b"),
                      Catch::Contains("nothing after the closing quote"));
  REQUIRE_THROWS_WITH(zout::parse_quoted_string("'a\""),
                      Catch::Contains("with a closing quote"));
  REQUIRE_THROWS_WITH(zout::parse_quoted_string(""),
                      Catch::Contains("expected an SCPI quoted string, got \"\""));
}

TEST_CASE("split_list splits on commas outside quotes and trims elements", "[scpi]") {
  using V = std::vector<std::string>;
  CHECK(zout::split_list("1,2,3") == V{"1", "2", "3"});
  CHECK(zout::split_list(" 1 , 2 ,3\r\n") == V{"1", "2", "3"});
  CHECK(zout::split_list("single") == V{"single"});
  CHECK(zout::split_list("").empty());
  CHECK(zout::split_list("  \n").empty());
  CHECK(zout::split_list("1,\"a,b\",'c,d'") == V{"1", "\"a,b\"", "'c,d'"});
  CHECK(zout::split_list("\"a\"\",b\",2") == V{"\"a\"\",b\"", "2"});
  CHECK(zout::split_list("1,,2") == V{"1", "", "2"});
  CHECK(zout::split_list("1,2,") == V{"1", "2", ""});
}

TEST_CASE("split_list refuses an unclosed quoted string", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::split_list("1,\"a,2"),
                      Catch::Contains("every quoted string closed") &&
                          Catch::Contains("\"1,\"a,2\""));
  REQUIRE(thrown_kind([] { zout::split_list("1,\"a,2"); }) == IoErrorKind::protocol);
}

TEST_CASE("parse_number_list parses every element", "[scpi]") {
  const auto numbers = zout::parse_number_list("1.5, -2E-3,9.91E37,#H10");
  REQUIRE(numbers.size() == 4);
  CHECK(numbers[0].value == Approx(1.5));
  CHECK(numbers[1].value == Approx(-2e-3));
  CHECK(numbers[2].kind == ScpiNumber::Kind::not_a_number);
  CHECK(numbers[3].value == 16.0);
  CHECK(zout::parse_number_list("").empty());
}

TEST_CASE("parse_number_list names the bad element", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_number_list("1,,2"),
                      Catch::Contains("element 2 of list \"1,,2\"") &&
                          Catch::Contains("expected an SCPI number, got \"\""));
  REQUIRE(thrown_kind([] { zout::parse_number_list("1,,2"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_number_list("1,x"),
                      Catch::Contains("element 2") && Catch::Contains("got \"x\""));
}

// IEEE 488.2 §10.14: the *IDN? reply has four fields: manufacturer, model, serial number
// ("0" when there is none) and firmware level.
TEST_CASE("parse_identity reads the four *IDN? fields", "[scpi]") {
  const zout::Identity id = zout::parse_identity("ACME,X1,SN1234,1.02\n");
  CHECK(id.manufacturer == "ACME");
  CHECK(id.model == "X1");
  CHECK(id.serial_number == "SN1234");
  CHECK(id.firmware == "1.02");

  const zout::Identity no_serial = zout::parse_identity("ACME, X1 , 0 , 2.0 \r\n");
  CHECK(no_serial.model == "X1");
  CHECK(no_serial.serial_number == "0");
  CHECK(no_serial.firmware == "2.0");
}

TEST_CASE("parse_identity gives extra commas to the firmware field", "[scpi]") {
  const zout::Identity id = zout::parse_identity("ACME,X1,0,1.0,2.0");
  CHECK(id.serial_number == "0");
  CHECK(id.firmware == "1.0,2.0");
}

TEST_CASE("parse_identity refuses short replies and empty names", "[scpi]") {
  REQUIRE_THROWS_WITH(zout::parse_identity("ACME,X1,0"),
                      Catch::Contains("expected a *IDN? reply of four comma-separated fields") &&
                          Catch::Contains("got \"ACME,X1,0\"") &&
                          Catch::Contains("fewer than four fields"));
  REQUIRE(thrown_kind([] { zout::parse_identity("ACME,X1,0"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_identity(""), Catch::Contains("fewer than four fields"));
  REQUIRE_THROWS_WITH(zout::parse_identity(" ,X1,0,1.0"),
                      Catch::Contains("empty manufacturer") &&
                          Catch::Contains("got \",X1,0,1.0\""));
  REQUIRE_THROWS_WITH(zout::parse_identity("ACME,,0,1.0"),
                      Catch::Contains("empty model") && Catch::Contains("\"ACME,,0,1.0\""));
}

// SCPI-1999 Vol 2 §21.8: an error queue entry is <code>,"<description>", with optional
// device-dependent information after ';' inside the quotes. Code meanings below are from the
// standard's error list (SCPI-1999 Vol 2 §21.8, from memory).
TEST_CASE("parse_error_entry reads standard error queue entries", "[scpi]") {
  const zout::ErrorEntry none = zout::parse_error_entry("0,\"No error\"");
  CHECK(none.code == 0);
  CHECK(none.message == "No error");
  CHECK(none.is_no_error());

  const zout::ErrorEntry plus_zero = zout::parse_error_entry("+0,\"No error\"\r\n");
  CHECK(plus_zero.code == 0);
  CHECK(plus_zero.is_no_error());

  CHECK(zout::parse_error_entry("-100,\"Command error\"").code == -100);
  CHECK(zout::parse_error_entry("-102,\"Syntax error\"").message == "Syntax error");

  const zout::ErrorEntry undefined = zout::parse_error_entry("-113,\"Undefined header\"");
  CHECK(undefined.code == -113);
  CHECK(undefined.message == "Undefined header");
  CHECK_FALSE(undefined.is_no_error());

  const zout::ErrorEntry range = zout::parse_error_entry("-222,\"Data out of range;VOLT 1000\"");
  CHECK(range.code == -222);
  CHECK(range.message == "Data out of range;VOLT 1000");

  const zout::ErrorEntry overflow = zout::parse_error_entry("-350, \"Queue overflow\"");
  CHECK(overflow.code == -350);
  CHECK(overflow.message == "Queue overflow");
}

TEST_CASE("parse_error_entry keeps commas and doubled quotes in the description", "[scpi]") {
  const zout::ErrorEntry e = zout::parse_error_entry("-222,\"Data out of range, \"\"VOLT\"\"\"");
  CHECK(e.code == -222);
  CHECK(e.message == "Data out of range, \"VOLT\"");
  CHECK(zout::parse_error_entry("201,\"Device-specific\"").code == 201);
}

TEST_CASE("parse_error_entry refuses other forms", "[scpi]") {
  const std::string expected = "expected an SCPI error entry <code>,\"<description>\", got ";
  REQUIRE_THROWS_WITH(zout::parse_error_entry("-113"),
                      Catch::Contains(expected + "\"-113\""));
  REQUIRE(thrown_kind([] { zout::parse_error_entry("-113"); }) == IoErrorKind::protocol);
  REQUIRE_THROWS_WITH(zout::parse_error_entry("0,No error"),
                      Catch::Contains(expected + "\"0,No error\""));
  REQUIRE_THROWS_WITH(zout::parse_error_entry("x,\"No error\""),
                      Catch::Contains(expected + "\"x,\"No error\"\""));
  REQUIRE_THROWS_WITH(zout::parse_error_entry("-1.5,\"Odd\""), Catch::Contains(expected));
  REQUIRE_THROWS_WITH(zout::parse_error_entry("0,\"No error"), Catch::Contains(expected));
  REQUIRE_THROWS_WITH(zout::parse_error_entry("0,\"a\",\"b\""), Catch::Contains(expected));
  REQUIRE_THROWS_WITH(zout::parse_error_entry("99999999999,\"Big\""), Catch::Contains(expected));
  REQUIRE_THROWS_WITH(zout::parse_error_entry(""), Catch::Contains(expected + "\"\""));
}
