#pragma once
// The ways a run stops early, as exceptions the engine's loops throw and the run executor
// turns into a final state (DEVELOPERS.md, "Run lifecycle").

#include <stdexcept>
#include <string>

namespace zout {

// A reading above the bench's safety.max_output_volts, or an overload that could hide one:
// safe state at once, run ends `error` with a safety event.
class SafetyTrip : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// The operator asked to abort (run.abort, SIGTERM): safe state, run ends `aborted`.
class RunAborted : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace zout
