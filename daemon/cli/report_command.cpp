#include "report_command.h"

#include <fmt/format.h>

#include <cstdint>
#include <filesystem>
#include <iostream>
#include <memory>
#include <system_error>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/time_zone_option.h"
#include "daemon/report/gnuplot_runner.h"
#include "daemon/report/plot_writer.h"
#include "daemon/report/run_record.h"
#include "daemon/report/run_report.h"
#include "daemon/store/store_error.h"

namespace zout::cli {
namespace {

struct ReportOptions {
  std::int64_t run_id = 0;
  ClientPaths paths;
  std::string plot_directory;
  bool json = false;
  text::TimeZoneChoice zone = text::TimeZoneChoice::utc;
};

int run_report(const ReportOptions& options) {
  std::string path;
  try {
    path = options.paths.database_path();
  } catch (const std::exception& e) {
    std::cerr << "zout report: " << e.what() << "\n";
    return exit_usage;
  }
  try {
    const report::RunRecord record = report::load_run_record(path, options.run_id);
    if (options.json) {
      std::cout << report::render_json_report(record).dump(2) << "\n";
    } else {
      std::cout << report::render_text_report(record, options.zone);
    }
    if (!options.plot_directory.empty()) {
      const std::filesystem::path directory(options.plot_directory);
      std::error_code error;
      std::filesystem::create_directories(directory, error);
      if (error || !std::filesystem::is_directory(directory)) {
        std::cerr << fmt::format("zout report: cannot create the plot directory {}: {}\n", directory.string(),
                                 error ? error.message() : "not a directory");
        return exit_failure;
      }
      const auto files = report::write_run_plots(record, directory);
      // With --json stdout holds only the JSON document, so the file list goes to stderr.
      std::ostream& list = options.json ? std::cerr : std::cout;
      list << (options.json ? "" : "\n") << "Plots written:\n";
      for (const auto& file : files.written) list << "  " << file.string() << "\n";
      for (const auto& reason : files.skipped) list << "  skipped " << reason << "\n";
    }
  } catch (const report::RunNotFound& e) {
    std::cerr << "zout report: " << e.what() << "\n";
    return exit_failure;
  } catch (const store::StoreError& e) {
    std::cerr << "zout report: " << e.what() << "\n";
    if (!std::filesystem::exists(path)) {
      std::cerr << "zout report: choose the database with --db FILE, the ZOUT_DB environment variable or --bench FILE\n";
    }
    return exit_failure;
  } catch (const report::GnuplotError& e) {
    std::cerr << "zout report: plots: " << e.what() << "\n";
    return exit_failure;
  }
  return exit_ok;
}

}  // namespace

void add_report_command(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<ReportOptions>();
  auto* verb = app.add_subcommand("report", "Report one run from the database: figures, model comparison, points, verdict");
  verb->add_option("run", options->run_id, "The run's id (see zout query \"SELECT * FROM run_summary\")")
      ->required()
      ->check(CLI::PositiveNumber);
  options->paths.add_options(*verb, false, true);
  verb->add_option("--plot", options->plot_directory,
                   "Also draw the plots (gnuplot) as SVG and PNG into this directory, created when missing");
  verb->add_flag("--json", options->json, "Print the report as one JSON object instead of text (times as stored: UTC)");
  add_time_zone_option(*verb, options->zone);
  verb->footer(
      "Reads the database only; zoutd need not run. Plots: run-RUN-iv (DC output against load\n"
      "current with the local fit, the tangent at the operating current and the Cockcroft-Walton\n"
      "model), run-RUN-ripple, and for a soak run run-RUN-soak (trends with control bands).\n"
      "Exit status: 0 ok, 1 no such run, unreadable database or failed plot, 2 bad arguments.\n"
      "Example: zout report 42 --plot plots/ --db /var/lib/zout/zout.db");
  verb->callback([options, &exit_code] { exit_code = run_report(*options); });
}

}  // namespace zout::cli
