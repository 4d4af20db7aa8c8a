#pragma once
// `zout export RUN --format csv|json [--output FILE]`: every point of one run with its raw
// readings, read from the database (no daemon needed). CSV: one row per reading (RFC 4180);
// JSON: run summary, plan, points with readings, sweep results, events. Default: stdout.

#include <CLI/CLI.hpp>

namespace zout::cli {

// Adds the `export` verb to `app`; the verb's callback sets `exit_code`.
void add_export_command(CLI::App& app, int& exit_code);

}  // namespace zout::cli
