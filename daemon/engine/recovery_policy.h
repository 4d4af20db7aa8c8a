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
  // Before each run the engine tries this often to reach the bench, pausing between tries.
  int connect_attempts = 3;
  std::chrono::milliseconds connect_retry_pause{500};
  // After a run found the bench unreachable, the queue rests this long (or until stopped).
  std::chrono::milliseconds unreachable_pause{5000};
};

}  // namespace zout
