#pragma once
// Simulated time: wall-clock seconds since the bench started, 1:1 (the daemon waits in real
// time, so the circuit must move in real time too).

#include <chrono>

namespace zout::sim {

class SimClock {
 public:
  SimClock() : start_(std::chrono::steady_clock::now()) {}

  // Seconds since construction; never decreases.
  double now_s() const {
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  }
  // The steady_clock moment of simulated time `time_s`, for timers.
  std::chrono::steady_clock::time_point at(double time_s) const {
    return start_ + std::chrono::duration_cast<std::chrono::steady_clock::duration>(std::chrono::duration<double>(time_s));
  }

 private:
  std::chrono::steady_clock::time_point start_;
};

}  // namespace zout::sim
