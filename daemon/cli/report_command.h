#pragma once
// `zout report RUN [--plot DIR] [--json]`: the report of one run read from the database
// (no daemon needed): text (default) or JSON; with --plot, gnuplot plots as SVG and PNG in DIR
// (created when missing), each file written listed on its own line.

#include <CLI/CLI.hpp>

namespace zout::cli {

// Adds the `report` verb to `app`; the verb's callback sets `exit_code`.
void add_report_command(CLI::App& app, int& exit_code);

}  // namespace zout::cli
