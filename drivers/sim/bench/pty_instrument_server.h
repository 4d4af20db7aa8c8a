#pragma once
// Serves one simulated instrument on a pseudo-terminal, for zout's serial path. The sim holds
// the master side (raw mode) and keeps a slave descriptor open, so a client may close and
// re-open the slave without the line hanging up. Clients use a stable symbolic link
// (`link_path`) to the slave device: a drop fault hangs the terminal up (the client's reads
// fail with EIO, as when a USB adapter is pulled) and the sim then opens a new pseudo-terminal
// and points the link at it, so the client can reconnect at the same address, as with a
// /dev/serial/by-id name.

#include <memory>
#include <string>

#include <asio.hpp>

#include "instrument_link.h"
#include "scpi_instrument.h"
#include "sim_clock.h"

namespace zout::sim {

class PtyInstrumentServer {
 public:
  // Opens a pseudo-terminal and makes `link_path` point at its slave. Throws
  // std::system_error when that fails.
  PtyInstrumentServer(asio::io_context& io, ScpiInstrument& instrument, const SimClock& clock, std::string link_path);
  ~PtyInstrumentServer();
  PtyInstrumentServer(const PtyInstrumentServer&) = delete;
  PtyInstrumentServer& operator=(const PtyInstrumentServer&) = delete;

  const std::string& link_path() const { return link_path_; }
  // The present slave device ("/dev/pts/7"); changes after a drop fault.
  const std::string& device_path() const { return device_path_; }
  // Closes the terminal and removes the link.
  void stop();

 private:
  // Opens a new terminal, points the link path at it and serves it; the previous terminal's
  // link (if any) is kept until the next replacement, its keep-alive descriptor closed.
  void open_terminal();

  asio::io_context& io_;
  ScpiInstrument& instrument_;
  const SimClock& clock_;
  std::string link_path_;
  std::string device_path_;
  int keepalive_fd_ = -1;
  bool stopped_ = false;
  std::shared_ptr<InstrumentLink> link_;
  std::shared_ptr<InstrumentLink> retired_link_;
};

}  // namespace zout::sim
