#pragma once
// How hard the engine tries before a run ends `interrupted` (DEVELOPERS.md, "Run lifecycle"): a step that fails
// on I/O is repeated after a reconnect with growing pauses; past the budget the run stops.

#include <chrono>
#include <vector>

namespace zout {

struct RecoveryPolicy {
  // Pause before each reconnect attempt of one failing step; the count is the step budget.
  std::vector<std::chrono::milliseconds> backoff{std::chrono::milliseconds(200), std::chrono::milliseconds(500),
                                                 std::chrono::milliseconds(1000), std::chrono::milliseconds(2000)};
  // Failed attempts allowed over a whole run (every step together).
  int run_budget = 20;
};

}  // namespace zout
