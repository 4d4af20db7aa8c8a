#pragma once
// The whole simulated bench: the panel of units, the four instruments wired to it, their
// servers (loopback TCP, and pseudo-terminals on request) and the control channel, all on one
// io_context thread.

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include <asio.hpp>
#include <nlohmann/json.hpp>

#include "control_server.h"
#include "load_instrument.h"
#include "meter_instrument.h"
#include "panel.h"
#include "pty_instrument_server.h"
#include "sim_clock.h"
#include "sim_config.h"
#include "source_instrument.h"
#include "switch_instrument.h"
#include "tcp_instrument_server.h"

namespace zout::sim {

struct SimBenchOptions {
  // TCP ports: source port_base, meter +1, load +2, switch +3, control +4; 0 = free ports.
  std::uint16_t port_base = 0;
  // Also serve each instrument on a pseudo-terminal, with stable links in `pty_directory`
  // (which must exist).
  bool pty = false;
  std::string pty_directory;
};

class SimBench {
 public:
  // Throws std::system_error when a port or a pseudo-terminal cannot be opened, and
  // std::invalid_argument when a unit cannot be simulated.
  SimBench(asio::io_context& io, SimConfig config, const SimBenchOptions& options);
  ~SimBench();

  // Every address, as printed on the ready line:
  // {"source":"tcp://127.0.0.1:P",...,"control":"tcp://...","pty":{"source":"serial://...?baud=115200",...},
  //  "pty_devices":{"source":"/dev/pts/N",...}}
  nlohmann::json addresses() const;

  // Answers one control request (see drivers/sim/README.md); never throws for bad input.
  nlohmann::json control(const nlohmann::json& request);

  // Closes every server; io.run() then returns once pending work is done.
  void stop();

  ScpiInstrument* instrument(const std::string& role);

 private:
  nlohmann::json truth(const nlohmann::json& request);
  nlohmann::json panel_state() const;

  asio::io_context& io_;
  SimConfig config_;
  SimClock clock_;
  Panel panel_;
  SourceInstrument source_;
  MeterInstrument meter_;
  LoadInstrument load_;
  SwitchInstrument switch_;
  std::vector<std::unique_ptr<TcpInstrumentServer>> tcp_;
  std::vector<std::unique_ptr<PtyInstrumentServer>> pty_;
  std::unique_ptr<ControlServer> control_;
};

}  // namespace zout::sim
