#pragma once
// The verbs that talk to a running zoutd over its control socket:
//   zout status                      daemon, bench, queue and the run in progress
//   zout start PLAN --unit S[@SLOT]… | --panel FILE   queue runs (optionally --watch them)
//   zout watch [RUN…]                follow runs to their end
//   zout abort RUN                   abort a queued or running run; waits for safe state
// Each callback sets `exit_code` (daemon/cli/exit_codes.h).

#include <CLI/CLI.hpp>

namespace zout::cli {

void add_status_command(CLI::App& app, int& exit_code);
void add_start_command(CLI::App& app, int& exit_code);
void add_watch_command(CLI::App& app, int& exit_code);
void add_abort_command(CLI::App& app, int& exit_code);

}  // namespace zout::cli
