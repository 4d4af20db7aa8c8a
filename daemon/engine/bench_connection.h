#pragma once
// The live instruments of one bench: a Session per instrument and the role objects built
// from its dialect. Knows nothing of plans or runs; the engine drives it.

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "daemon/plan/bench_config.h"
#include "drivers/instruments/scpi_load.h"
#include "drivers/instruments/scpi_meter.h"
#include "drivers/instruments/scpi_source.h"
#include "drivers/instruments/scpi_switch.h"
#include "drivers/scpi/identity.h"
#include "drivers/scpi/session.h"

namespace zout {

struct ConnectedInstrument {
  std::string role;     // source | meter | load | switch
  std::string address;
  Identity identity;
  std::vector<ErrorEntry> stale_errors;  // entries found in its error queue when connecting
};

class BenchConnection {
 public:
  // Loads every dialect of `bench` (already checked by load_bench_file); opens nothing yet.
  explicit BenchConnection(const BenchConfig& bench);

  // Opens each link, reads *IDN?, drains SYSTem:ERRor? (returning what it held) and sends
  // *CLS. Throws IoError
  // (message starting with the role) for the first instrument that fails.
  std::vector<ConnectedInstrument> connect();

  // Load input off, source output off, panel open: each confirmed with *OPC?, retried once
  // over a fresh link, and tried even when another fails (a dead meter must not keep the
  // load on). Returns one line per instrument that did not confirm; empty when safe.
  std::vector<std::string> enter_safe_state() noexcept;

  // Closes and re-opens one role's link, then *CLS. Throws IoError on failure.
  void reconnect(const std::string& role);

  // Reads every instrument's error queue; returns "role: code,\"text\"" lines.
  std::vector<std::string> drain_all_errors();

  Source& source() { return *source_; }
  Meter& meter() { return *meter_; }
  Load& load() { return *load_; }
  Switch* panel_switch() { return switch_ ? switch_.get() : nullptr; }
  Session& session(const std::string& role);
  // The roles present, in a fixed order: source, meter, load[, switch].
  std::vector<std::string> roles() const;

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
