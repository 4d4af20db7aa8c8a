#include "export_command.h"

#include <fmt/format.h>

#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/query_command.h"
#include "daemon/report/run_export.h"
#include "daemon/report/run_record.h"
#include "daemon/store/store_error.h"

namespace zout::cli {
namespace {

struct ExportOptions {
  std::int64_t run_id = 0;
  ClientPaths paths;
  std::string format;
  std::string output_file;
};

// One CSV line (RFC 4180: fields quoted where needed, CRLF at the end).
std::string csv_line(const std::vector<std::string>& fields) {
  std::string line;
  for (std::size_t i = 0; i < fields.size(); ++i) line += (i ? "," : "") + csv_field(fields[i]);
  return line + "\r\n";
}

std::string export_text(const report::RunRecord& record, const std::string& format) {
  if (format == "json") return report::export_json(record).dump(2) + "\n";
  std::string text = csv_line(report::export_csv_columns());
  for (const auto& row : report::export_reading_rows(record)) text += csv_line(row);
  return text;
}

int run_export(const ExportOptions& options) {
  std::string path;
  try {
    path = options.paths.database_path();
  } catch (const std::exception& e) {
    std::cerr << "zout export: " << e.what() << "\n";
    return exit_usage;
  }
  std::string text;
  try {
    text = export_text(report::load_run_record(path, options.run_id), options.format);
  } catch (const report::RunNotFound& e) {
    std::cerr << "zout export: " << e.what() << "\n";
    return exit_failure;
  } catch (const store::StoreError& e) {
    std::cerr << "zout export: " << e.what() << "\n";
    if (!std::filesystem::exists(path)) {
      std::cerr << "zout export: choose the database with --db FILE, the ZOUT_DB environment variable or --bench FILE\n";
    }
    return exit_failure;
  }
  if (options.output_file.empty()) {
    std::cout << text;
    return exit_ok;
  }
  std::ofstream out(options.output_file, std::ios::binary | std::ios::trunc);
  out << text;
  out.close();
  if (!out) {
    std::cerr << fmt::format("zout export: cannot write {}\n", options.output_file);
    return exit_failure;
  }
  return exit_ok;
}

}  // namespace

void add_export_command(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<ExportOptions>();
  auto* verb = app.add_subcommand("export", "Export every point of one run with its raw readings as CSV or JSON");
  verb->add_option("run", options->run_id, "The run's id (see zout query \"SELECT * FROM run_summary\")")
      ->required()
      ->check(CLI::PositiveNumber);
  options->paths.add_options(*verb, false, true);
  verb->add_option("--format", options->format,
                   "csv: one row per reading with its run, sweep, step and point (RFC 4180); "
                   "json: run summary, plan, points with readings, sweep results, events")
      ->required()
      ->check(CLI::IsMember({"csv", "json"}));
  verb->add_option("--output", options->output_file, "Write to this file instead of stdout");
  verb->footer(
      "Reads the database only; zoutd need not run. Reals are written so they read back exactly.\n"
      "Exit status: 0 ok, 1 no such run, unreadable database or unwritable output, 2 bad arguments.\n"
      "Example: zout export 42 --format csv --output run-42.csv --db /var/lib/zout/zout.db");
  verb->callback([options, &exit_code] { exit_code = run_export(*options); });
}

}  // namespace zout::cli
