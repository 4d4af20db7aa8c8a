#pragma once
// Runs gnuplot (Debian gnuplot-nox) as a child process on a script. The script is written to
// a temporary file and given as gnuplot's argument; its output goes to a second temporary
// file, read back for the error message. No shell is involved.

#include <stdexcept>
#include <string>

namespace zout::report {

// gnuplot could not be started, or ended with a failure. The message names the command and
// says why (not found / exit status and gnuplot's own error lines).
class GnuplotError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// Runs `command` (looked up on PATH when it has no '/') on `script` and waits for it.
// Returns when gnuplot exited with status 0; throws GnuplotError otherwise.
void run_gnuplot(const std::string& script, const std::string& command = "gnuplot");

}  // namespace zout::report
