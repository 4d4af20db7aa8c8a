#pragma once
// Faults injected into one simulated instrument on demand (from the control channel), each
// standing for a failure seen on real benches:
//   drop      the link is closed when the next command arrives (a pulled cable, a crash)
//   stall     replies are not sent (a hung instrument); commands still take effect
//   garbage   each reply is replaced by a line of non-SCPI bytes (line noise, wrong baud)
//   split     each reply is sent one byte at a time, 1 ms apart (a slow serial adapter)
//   overload  readings come back as 9.91E37 (an input beyond the range)
// A fault is active for `count` events (replies, readings or links) or, with no count,
// until cleared. Pushing error-queue entries is an action, not a state; the bench does it
// directly.

#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace zout::sim {

enum class FaultKind { drop, stall, garbage, split, overload };

// "drop", "stall", ...; std::nullopt for another name.
std::optional<FaultKind> fault_kind_named(std::string_view name);
const char* to_string(FaultKind kind);
// Every kind's name, for messages ("drop, stall, garbage, split, overload").
std::string fault_kind_names();

class InstrumentFaults {
 public:
  // Activates `kind` for `count` events (>= 1), or until cleared when count is empty.
  void inject(FaultKind kind, std::optional<int> count = std::nullopt);
  void clear(FaultKind kind);
  void clear_all();

  // True when `kind` is active; uses up one of its events.
  bool consume(FaultKind kind);
  bool active(FaultKind kind) const;

  // Active faults with their remaining count (-1 = until cleared), for the control channel.
  std::map<std::string, int> describe() const;

 private:
  std::map<FaultKind, int> active_;  // remaining events; -1 = until cleared
};

}  // namespace zout::sim
