#pragma once
// One place that turns what a verb threw into its message on stderr ("zout VERB: ...") and its
// exit status (daemon/cli/exit_codes.h): zoutd not running → exit_no_daemon with how to start
// it; a refused plan or request → exit_refused; bad arguments → exit_usage; instrument links →
// exit_timeout / exit_link; anything else → exit_failure.

#include <exception>
#include <functional>
#include <string>
#include <utility>

namespace zout::cli {

// Call from inside a catch block: rethrows the current exception to classify it.
int report_current_exception(const std::string& verb);

// A verb's callback: runs `run` (which returns the exit status) and turns anything it throws
// into the message and status above. `exit_code` must outlive the callback.
template <typename Run>
std::function<void()> verb_callback(std::string verb, int& exit_code, Run run) {
  return [verb = std::move(verb), &exit_code, run = std::move(run)] {
    try {
      exit_code = run();
    } catch (...) {
      exit_code = report_current_exception(verb);
    }
  };
}

}  // namespace zout::cli
