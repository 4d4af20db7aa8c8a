#pragma once
// Runs a real program for integration tests: captures stdout and stderr, waits at most
// `timeout`, kills it past that (reported as timed_out).

#include <chrono>
#include <string>
#include <vector>

namespace zout::test {

struct ChildResult {
  int exit_code = -1;      // the exit status, or -1 when killed by a signal
  bool timed_out = false;  // killed because it ran past the timeout
  std::string out;         // everything it wrote to stdout
  std::string err;         // everything it wrote to stderr
};

ChildResult run_child(const std::vector<std::string>& argv, std::chrono::milliseconds timeout);

}  // namespace zout::test
