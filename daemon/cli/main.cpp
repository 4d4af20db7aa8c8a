// `zout`: the operator's client. Each verb lives in its own *_command.cpp.

#include <CLI/CLI.hpp>

#include "daemon/cli/daemon_verbs.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/export_command.h"
#include "daemon/cli/history_verbs.h"
#include "daemon/cli/ports_command.h"
#include "daemon/cli/query_command.h"
#include "daemon/cli/report_command.h"
#include "daemon/cli/scpi_command.h"

int main(int argc, char** argv) {
  CLI::App app{"zout: unattended output-impedance, ripple and drift testing of voltage multipliers"};
  app.require_subcommand(1);
  int exit_code = zout::cli::exit_ok;
  zout::cli::add_scpi_command(app, exit_code);
  zout::cli::add_ports_command(app, exit_code);
  zout::cli::add_query_command(app, exit_code);
  zout::cli::add_status_command(app, exit_code);
  zout::cli::add_start_command(app, exit_code);
  zout::cli::add_watch_command(app, exit_code);
  zout::cli::add_abort_command(app, exit_code);
  zout::cli::add_runs_command(app, exit_code);
  zout::cli::add_bench_command(app, exit_code);
  zout::cli::add_check_command(app, exit_code);
  zout::cli::add_report_command(app, exit_code);
  zout::cli::add_export_command(app, exit_code);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? zout::cli::exit_ok : zout::cli::exit_usage;
  }
  return exit_code;
}
