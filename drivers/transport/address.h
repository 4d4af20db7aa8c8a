#pragma once
// Instrument addresses are URIs (DEVELOPERS.md, "Names and units"):
//   tcp://HOST:PORT[?eol=lf|crlf|cr]
//   serial:///dev/ttyUSB0?baud=115200&parity=none&data=8&stop=1&flow=none[&eol=...]
//   serial://usb-serial/A5C0FFEE?baud=115200   (a USB adapter by its serial number)
// parse_address refuses anything else with an AddressError that names the address, the
// part that is wrong, and what is allowed.

#include <cstddef>
#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <variant>

namespace zout {

class AddressError : public std::invalid_argument {
 public:
  using std::invalid_argument::invalid_argument;
};

// How lines end on the wire. Reading always accepts a CR before the LF (CRLF), so
// `lf` talks to instruments that send either; `cr` is for the rare CR-only instrument.
enum class LineEnding { lf, crlf, cr };

struct Framing {
  LineEnding line_ending = LineEnding::lf;     // appended to every message written
  std::size_t max_line_bytes = 1024 * 1024;    // a longer reply is a protocol error
};

enum class Parity { none, odd, even, mark, space };
enum class FlowControl { none, rts_cts, xon_xoff, dtr_dsr };

struct SerialSettings {
  int baud = 9600;  // the usual factory default of SCPI instruments (common practice)
  int data_bits = 8;
  Parity parity = Parity::none;
  int stop_bits = 1;
  FlowControl flow = FlowControl::none;
};

struct TcpEndpoint {
  std::string host;
  std::uint16_t port = 0;
};

struct SerialEndpoint {
  std::string device_path;  // "/dev/ttyUSB0"; empty when usb_serial is used
  std::string usb_serial;   // USB adapter serial number; empty when device_path is used
  SerialSettings settings;
};

struct Address {
  std::string text;  // the URI as given, for messages
  std::variant<TcpEndpoint, SerialEndpoint> endpoint;
  Framing framing;
};

// Parses an address URI; throws AddressError on anything malformed or out of range.
Address parse_address(std::string_view uri);

const char* to_string(Parity parity);
const char* to_string(FlowControl flow);

}  // namespace zout
