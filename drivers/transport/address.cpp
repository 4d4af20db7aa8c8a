#include "address.h"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <charconv>
#include <map>

namespace zout {
namespace {

constexpr std::string_view kTcpScheme = "tcp://";
constexpr std::string_view kSerialScheme = "serial://";
constexpr std::string_view kUsbSerialHost = "usb-serial";

// Standard POSIX baud rates (termios B* constants) — the only ones a pseudo-terminal or
// plain termios path can set; real ports through libserialport accept the same set here.
constexpr std::array<int, 19> kStandardBauds = {50,    75,    110,   134,    150,    200,   300,
                                                600,   1200,  1800,  2400,   4800,   9600,  19200,
                                                38400, 57600, 115200, 230400, 460800};

[[noreturn]] void fail(std::string_view uri, const std::string& what) {
  throw AddressError(fmt::format("address \"{}\": {}", uri, what));
}

int parse_int(std::string_view uri, std::string_view name, std::string_view value,
              const std::string& allowed) {
  int result = 0;
  const auto* end = value.data() + value.size();
  const auto [ptr, ec] = std::from_chars(value.data(), end, result);
  if (value.empty() || ec != std::errc() || ptr != end) {
    fail(uri, fmt::format("{}={} is not a whole number; allowed: {}", name, value, allowed));
  }
  return result;
}

// Splits "a=1&b=2" into a map; a repeated or empty key is an error.
std::map<std::string, std::string> parse_query(std::string_view uri, std::string_view query) {
  std::map<std::string, std::string> params;
  while (!query.empty()) {
    const auto amp = query.find('&');
    const auto item = query.substr(0, amp);
    query = amp == std::string_view::npos ? std::string_view{} : query.substr(amp + 1);
    if (item.empty()) continue;
    const auto eq = item.find('=');
    if (eq == std::string_view::npos || eq == 0) {
      fail(uri, fmt::format("parameter \"{}\" must be written name=value", item));
    }
    std::string key(item.substr(0, eq));
    if (!params.emplace(key, std::string(item.substr(eq + 1))).second) {
      fail(uri, fmt::format("parameter {} is given twice", key));
    }
  }
  return params;
}

LineEnding parse_eol(std::string_view uri, const std::string& value) {
  if (value == "lf") return LineEnding::lf;
  if (value == "crlf") return LineEnding::crlf;
  if (value == "cr") return LineEnding::cr;
  fail(uri, fmt::format("eol={} is not a line ending; allowed: lf, crlf, cr", value));
}

Address parse_tcp(std::string_view uri, std::string_view rest,
                  const std::map<std::string, std::string>& params) {
  TcpEndpoint tcp;
  std::string_view host_port = rest;
  if (const auto slash = host_port.find('/'); slash != std::string_view::npos) {
    if (slash + 1 != host_port.size()) fail(uri, "a tcp address has no path; write tcp://HOST:PORT");
    host_port = host_port.substr(0, slash);
  }
  std::string_view host;
  std::string_view port_text;
  if (!host_port.empty() && host_port.front() == '[') {  // [IPv6]:port
    const auto close = host_port.find(']');
    if (close == std::string_view::npos) fail(uri, "unclosed '[' in IPv6 host");
    host = host_port.substr(1, close - 1);
    if (close + 1 >= host_port.size() || host_port[close + 1] != ':') {
      fail(uri, "missing port; write tcp://[HOST]:PORT");
    }
    port_text = host_port.substr(close + 2);
  } else {
    const auto colon = host_port.rfind(':');
    if (colon == std::string_view::npos) fail(uri, "missing port; write tcp://HOST:PORT");
    host = host_port.substr(0, colon);
    port_text = host_port.substr(colon + 1);
  }
  if (host.empty()) fail(uri, "missing host; write tcp://HOST:PORT");
  const int port = parse_int(uri, "port", port_text, "1 to 65535");
  if (port < 1 || port > 65535) fail(uri, fmt::format("port {} is out of range; allowed: 1 to 65535", port));
  tcp.host = std::string(host);
  tcp.port = static_cast<std::uint16_t>(port);

  Address address{std::string(uri), tcp, {}};
  for (const auto& [key, value] : params) {
    if (key == "eol") {
      address.framing.line_ending = parse_eol(uri, value);
    } else {
      fail(uri, fmt::format("unknown parameter {}; allowed for tcp: eol", key));
    }
  }
  return address;
}

Address parse_serial(std::string_view uri, std::string_view rest,
                     const std::map<std::string, std::string>& params) {
  SerialEndpoint serial;
  if (rest.starts_with('/')) {
    serial.device_path = std::string(rest);
    if (serial.device_path.size() < 2) fail(uri, "missing device path; write serial:///dev/ttyUSB0");
  } else if (rest.starts_with(kUsbSerialHost) && rest.size() > kUsbSerialHost.size() &&
             rest[kUsbSerialHost.size()] == '/') {
    serial.usb_serial = std::string(rest.substr(kUsbSerialHost.size() + 1));
    if (serial.usb_serial.empty() || serial.usb_serial.find('/') != std::string::npos) {
      fail(uri, "missing USB serial number; write serial://usb-serial/SERIALNUMBER");
    }
  } else {
    fail(uri, "a serial address is serial:///dev/DEVICE or serial://usb-serial/SERIALNUMBER");
  }

  Address address{std::string(uri), serial, {}};
  auto& settings = std::get<SerialEndpoint>(address.endpoint).settings;
  for (const auto& [key, value] : params) {
    if (key == "baud") {
      settings.baud = parse_int(uri, key, value, "a standard rate such as 9600 or 115200");
      if (std::find(kStandardBauds.begin(), kStandardBauds.end(), settings.baud) == kStandardBauds.end()) {
        fail(uri, fmt::format("baud={} is not a standard rate; allowed: 50 to 460800 "
                              "(1200, 2400, 4800, 9600, 19200, 38400, 57600, 115200, ...)", value));
      }
    } else if (key == "data") {
      settings.data_bits = parse_int(uri, key, value, "5, 6, 7 or 8");
      if (settings.data_bits < 5 || settings.data_bits > 8) {
        fail(uri, fmt::format("data={} is out of range; allowed: 5, 6, 7 or 8", value));
      }
    } else if (key == "stop") {
      settings.stop_bits = parse_int(uri, key, value, "1 or 2");
      if (settings.stop_bits != 1 && settings.stop_bits != 2) {
        fail(uri, fmt::format("stop={} is out of range; allowed: 1 or 2", value));
      }
    } else if (key == "parity") {
      if (value == "none") settings.parity = Parity::none;
      else if (value == "odd") settings.parity = Parity::odd;
      else if (value == "even") settings.parity = Parity::even;
      else if (value == "mark") settings.parity = Parity::mark;
      else if (value == "space") settings.parity = Parity::space;
      else fail(uri, fmt::format("parity={} is not a parity; allowed: none, odd, even, mark, space", value));
    } else if (key == "flow") {
      if (value == "none") settings.flow = FlowControl::none;
      else if (value == "rtscts") settings.flow = FlowControl::rts_cts;
      else if (value == "xonxoff") settings.flow = FlowControl::xon_xoff;
      else if (value == "dtrdsr") settings.flow = FlowControl::dtr_dsr;
      else fail(uri, fmt::format("flow={} is not a flow control; allowed: none, rtscts, xonxoff, dtrdsr", value));
    } else if (key == "eol") {
      address.framing.line_ending = parse_eol(uri, value);
    } else {
      fail(uri, fmt::format("unknown parameter {}; allowed for serial: baud, data, parity, stop, flow, eol", key));
    }
  }
  return address;
}

}  // namespace

Address parse_address(std::string_view uri) {
  const auto question = uri.find('?');
  const auto base = uri.substr(0, question);
  const auto params =
      parse_query(uri, question == std::string_view::npos ? std::string_view{} : uri.substr(question + 1));
  if (base.starts_with(kTcpScheme)) return parse_tcp(uri, base.substr(kTcpScheme.size()), params);
  if (base.starts_with(kSerialScheme)) return parse_serial(uri, base.substr(kSerialScheme.size()), params);
  fail(uri, "unknown scheme; an address starts with tcp:// or serial://");
}

const char* to_string(Parity parity) {
  switch (parity) {
    case Parity::none: return "none";
    case Parity::odd: return "odd";
    case Parity::even: return "even";
    case Parity::mark: return "mark";
    case Parity::space: return "space";
  }
  return "?";
}

const char* to_string(FlowControl flow) {
  switch (flow) {
    case FlowControl::none: return "none";
    case FlowControl::rts_cts: return "rtscts";
    case FlowControl::xon_xoff: return "xonxoff";
    case FlowControl::dtr_dsr: return "dtrdsr";
  }
  return "?";
}

}  // namespace zout
