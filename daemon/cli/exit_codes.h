#pragma once
// Exit statuses of the `zout` client (documented in the README).

namespace zout::cli {

enum ExitCode : int {
  exit_ok = 0,
  exit_failure = 1,         // anything not listed below
  exit_usage = 2,           // bad arguments or a malformed address
  exit_timeout = 3,         // an instrument did not answer before the deadline
  exit_link = 4,            // could not open, dropped link, or unreadable reply
  exit_instrument_error = 5, // the instrument reported entries in its error queue
  exit_query_timeout = 6,   // zout query: the statement ran past --timeout-ms and was stopped
  exit_refused = 7,         // a plan or request refused: invalid, or over the bench's safety maxima
  exit_no_daemon = 8,       // zoutd is not running (nobody on the control socket)
  exit_unit_failed = 9,     // watch/start --watch: a run ended `failed` (the unit failed a limit)
  exit_run_incomplete = 10  // watch/start --watch: a run ended aborted, interrupted or error
};

}  // namespace zout::cli
