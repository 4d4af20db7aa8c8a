#pragma once
// Runs a long-lived server program (zout-sim) for integration tests: starts it, waits for the
// first line it prints on stdout (its ready line), and keeps it running until terminate() or
// destruction (SIGTERM, then SIGKILL after two seconds). Its stderr goes to the test's stderr.

#include <sys/types.h>

#include <chrono>
#include <string>
#include <vector>

namespace zout::test {

class SimProcess {
 public:
  // Starts `argv` (argv[0] a path) and waits up to `timeout` for one line on its stdout.
  // Throws std::runtime_error (with what it printed, if anything) when the program cannot be
  // started, exits, or prints no line in time.
  SimProcess(const std::vector<std::string>& argv, std::chrono::milliseconds timeout);
  ~SimProcess();
  SimProcess(const SimProcess&) = delete;
  SimProcess& operator=(const SimProcess&) = delete;

  // The first stdout line, without its newline.
  const std::string& ready_line() const { return ready_line_; }
  pid_t pid() const { return pid_; }

  // Sends `signal_number` and waits up to `timeout` for the exit. Returns the exit status,
  // or -1 when it ended by a signal; throws std::runtime_error when it is still running
  // after the timeout (it is then killed).
  int terminate(int signal_number, std::chrono::milliseconds timeout);

 private:
  pid_t pid_ = -1;
  int out_fd_ = -1;
  bool running_ = false;
  std::string ready_line_;
};

}  // namespace zout::test
