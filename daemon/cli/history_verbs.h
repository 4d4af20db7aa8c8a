#pragma once
// Verbs that need no daemon:
//   zout runs         recent runs from the database (read-only)
//   zout bench        identify every instrument of a bench file directly (*IDN?, error queue)
//   zout check PLAN   validate a plan against a bench; Cockcroft–Walton predictions per step
// Each callback sets `exit_code` (daemon/cli/exit_codes.h).

#include <CLI/CLI.hpp>

namespace zout::cli {

void add_runs_command(CLI::App& app, int& exit_code);
void add_bench_command(CLI::App& app, int& exit_code);
void add_check_command(CLI::App& app, int& exit_code);

}  // namespace zout::cli
