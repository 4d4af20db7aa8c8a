#pragma once
// One place that turns what a verb threw into its message on stderr ("zout VERB: ...") and its
// exit status (daemon/cli/exit_codes.h): zoutd not running → exit_no_daemon with how to start
// it; a refused plan or request → exit_refused; bad arguments → exit_usage; instrument links →
// exit_timeout / exit_link; anything else → exit_failure.

#include <exception>
#include <string>

namespace zout::cli {

// Call from inside a catch block: rethrows the current exception to classify it.
int report_current_exception(const std::string& verb);

}  // namespace zout::cli
