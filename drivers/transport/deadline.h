#pragma once
// Deadlines are absolute points on the monotonic clock, so a call made of several reads
// still ends on time however the time splits between them.

#include <chrono>

namespace zout {

using Clock = std::chrono::steady_clock;
using Deadline = Clock::time_point;

// A deadline `timeout` from now.
inline Deadline deadline_after(std::chrono::milliseconds timeout) { return Clock::now() + timeout; }

// Milliseconds left before `deadline`, rounded up so a wait of that long never ends early;
// zero once it has passed (never negative).
inline int milliseconds_left(Deadline deadline) {
  const auto left = std::chrono::ceil<std::chrono::milliseconds>(deadline - Clock::now());
  if (left.count() <= 0) return 0;
  return left.count() > 1'000'000'000 ? 1'000'000'000 : static_cast<int>(left.count());
}

}  // namespace zout
