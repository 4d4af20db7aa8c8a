#pragma once
// Serves one simulated instrument on a loopback TCP port. One client at a time: a new
// connection replaces the one before it (which is closed), as a daemon reconnecting after a
// timeout must get through even when its old connection is still half open.

#include <cstdint>
#include <memory>

#include <asio.hpp>

#include "instrument_link.h"
#include "scpi_instrument.h"
#include "sim_clock.h"

namespace zout::sim {

class TcpInstrumentServer {
 public:
  // Listens on 127.0.0.1:`port` (0 = a free port chosen by the system). Throws
  // std::system_error when the port cannot be bound.
  TcpInstrumentServer(asio::io_context& io, ScpiInstrument& instrument, const SimClock& clock, std::uint16_t port);

  std::uint16_t port() const { return port_; }
  // Stops accepting and closes the client link.
  void stop();

 private:
  void accept();

  asio::io_context& io_;
  ScpiInstrument& instrument_;
  const SimClock& clock_;
  asio::ip::tcp::acceptor acceptor_;
  std::uint16_t port_ = 0;
  std::shared_ptr<InstrumentLink> link_;
};

}  // namespace zout::sim
