#pragma once
// The live instruments of one bench: a Session per instrument and the role objects built
// from its dialect, behind the Bench interface the engine drives.

#include <chrono>
#include <memory>
#include <string>
#include <vector>

#include "daemon/engine/bench.h"
#include "daemon/plan/bench_config.h"
#include "drivers/instruments/scpi_load.h"
#include "drivers/instruments/scpi_meter.h"
#include "drivers/instruments/scpi_source.h"
#include "drivers/instruments/scpi_switch.h"
#include "drivers/scpi/session.h"

namespace zout {

class BenchConnection : public Bench {
 public:
  // Loads every dialect of `bench` (already checked by load_bench_file); opens nothing yet.
  explicit BenchConnection(const BenchConfig& bench);

  // Opens each link, reads *IDN?, drains SYSTem:ERRor? (returning what it held) and sends
  // *CLS. Throws IoError
  // (message starting with the role) for the first instrument that fails.
  std::vector<ConnectedInstrument> connect() override;

  // Load input off, source output off, panel open: each confirmed with *OPC?, retried once
  // over a fresh link, and tried even when another fails (a dead meter must not keep the
  // load on). Returns one line per instrument that did not confirm; empty when safe.
  std::vector<std::string> enter_safe_state() noexcept override;

  // Closes and re-opens one role's link, then *CLS. Throws IoError on failure.
  void reconnect(const std::string& role) override;

  // Reads every instrument's error queue; returns "role: code,\"text\"" lines.
  std::vector<std::string> drain_all_errors() override;

  Source& source() override { return *source_; }
  Meter& meter() override { return *meter_; }
  Load& load() override { return *load_; }
  Switch* panel_switch() override { return switch_ ? switch_.get() : nullptr; }
  // The roles present, in a fixed order: source, meter, load[, switch].
  std::vector<std::string> roles() const override;

  // The SCPI session of one role, for tools that talk to an instrument beside its role
  // object (tests/bench/sweep_bench.cpp sends *OPC? through it). Throws
  // std::invalid_argument for a role the bench lacks.
  Session& session(const std::string& role);

 private:
  struct Link {
    std::string role;
    std::chrono::milliseconds timeout;
    std::unique_ptr<Session> session;
  };
  Link& link(const std::string& role);

  std::vector<Link> links_;
  std::unique_ptr<ScpiSource> source_;
  std::unique_ptr<ScpiMeter> meter_;
  std::unique_ptr<ScpiLoad> load_;
  std::unique_ptr<ScpiSwitch> switch_;
};

}  // namespace zout
