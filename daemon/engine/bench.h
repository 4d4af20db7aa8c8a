#pragma once
// The instruments of one bench as the engine uses them: the four roles, connecting, safe
// state, reconnecting one role and reading every error queue. BenchConnection is the real
// one (SCPI over the bench file's links); tests put an in-memory bench behind it. Knows
// nothing of plans or runs; the engine drives it. Use from one thread at a time, except that
// the load may be read on a second thread while the meter reads (PointMeasurer does).

#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "daemon/engine/connected_instrument.h"
#include "daemon/plan/bench_config.h"
#include "drivers/instruments/load.h"
#include "drivers/instruments/meter.h"
#include "drivers/instruments/source.h"
#include "drivers/instruments/switch.h"

namespace zout {

class Bench {
 public:
  virtual ~Bench() = default;

  // The role objects; valid for the bench's lifetime, also across reconnect().
  virtual Source& source() = 0;
  virtual Meter& meter() = 0;
  virtual Load& load() = 0;
  // The panel switch, or nullptr when the bench has none.
  virtual Switch* panel_switch() = 0;

  // Reaches every instrument: its identity, and its error queue drained (returned as
  // stale_errors) and cleared. Throws IoError (message starting with the role) for the
  // first instrument that fails.
  virtual std::vector<ConnectedInstrument> connect() = 0;

  // Load input off, source output off, panel open, each confirmed and tried even when
  // another fails (a dead meter must not keep the load on). Returns one line per instrument
  // that did not confirm; empty when the bench is safe.
  virtual std::vector<std::string> enter_safe_state() noexcept = 0;

  // Closes and re-opens one role's link and clears its status. Throws IoError on failure.
  virtual void reconnect(const std::string& role) = 0;

  // Reads every instrument's error queue; returns "role: code,\"text\"" lines.
  virtual std::vector<std::string> drain_all_errors() = 0;

  // The roles present, in a fixed order: source, meter, load[, switch].
  virtual std::vector<std::string> roles() const = 0;
};

// Builds the bench an Engine drives from its bench file (BenchConnection unless a test
// supplies another).
using BenchFactory = std::function<std::unique_ptr<Bench>(const BenchConfig&)>;

}  // namespace zout
