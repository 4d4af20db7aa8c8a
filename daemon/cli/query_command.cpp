#include "query_command.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <iostream>
#include <memory>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/text_table.h"
#include "daemon/store/store_error.h"

namespace zout::cli {
namespace {

struct QueryOptions {
  std::string sql;
  ClientPaths paths;
  std::string format = "table";
  int timeout_ms = 10000;
};

std::string real_text(double value) {
  if (std::isnan(value)) return "NaN";
  if (std::isinf(value)) return value > 0 ? "Inf" : "-Inf";
  std::string text = fmt::format("{}", value);
  if (text.find_first_of(".e") == std::string::npos) text += ".0";
  return text;
}

// A JSON string; bytes that are not UTF-8 become U+FFFD rather than an error.
std::string json_string(const std::string& text) {
  return nlohmann::json(text).dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
}

std::string json_value(const store::QueryValue& value) {
  if (const auto* d = std::get_if<double>(&value)) return std::isfinite(*d) ? real_text(*d) : "null";
  if (const auto* i = std::get_if<std::int64_t>(&value)) return std::to_string(*i);
  if (std::holds_alternative<std::monostate>(value)) return "null";
  return json_string(cell_text(value));
}

// Table cells stay on one line: control characters are shown escaped.
std::string table_cell(const store::QueryValue& value) {
  std::string out;
  for (char c : cell_text(value)) {
    if (c == '\n') {
      out += "\\n";
    } else if (c == '\r') {
      out += "\\r";
    } else if (c == '\t') {
      out += "\\t";
    } else {
      out += c;
    }
  }
  return out;
}

int run_query(const QueryOptions& options) {
  std::string path;
  try {
    path = options.paths.database_path();
  } catch (const std::exception& e) {
    std::cerr << "zout query: " << e.what() << "\n";
    return exit_usage;
  }
  std::vector<std::string> names;
  std::unique_ptr<TextTable> table;
  bool first_row = true;
  const auto on_columns = [&](const std::vector<std::string>& columns) {
    names = columns;
    if (options.format == "table") {
      table = std::make_unique<TextTable>(columns);
    } else if (options.format == "csv") {
      std::string line;
      for (std::size_t i = 0; i < columns.size(); ++i) line += (i ? "," : "") + csv_field(columns[i]);
      std::cout << line << "\r\n";
    } else {
      std::cout << "[";
    }
  };
  const auto on_row = [&](const std::vector<store::QueryValue>& row) {
    if (options.format == "table") {
      std::vector<std::string> cells;
      for (const auto& value : row) cells.push_back(table_cell(value));
      table->add_row(std::move(cells));
    } else if (options.format == "csv") {
      std::string line;
      for (std::size_t i = 0; i < row.size(); ++i) line += (i ? "," : "") + csv_field(cell_text(row[i]));
      std::cout << line << "\r\n";
    } else {
      std::string object = first_row ? "\n  {" : ",\n  {";
      for (std::size_t i = 0; i < row.size(); ++i) {
        object += fmt::format("{}{}: {}", i ? ", " : "", json_string(names[i]), json_value(row[i]));
      }
      std::cout << object << "}";
    }
    first_row = false;
  };
  try {
    store::ReadOnlyQuery query(path);
    query.run(options.sql, std::chrono::milliseconds(options.timeout_ms), on_columns, on_row);
  } catch (const store::StoreError& e) {
    std::cout.flush();
    std::cerr << "zout query: " << e.what() << "\n";
    if (e.kind() == store::StoreError::Kind::failure && !std::filesystem::exists(path)) {
      std::cerr << "zout query: choose the database with --db FILE, the ZOUT_DB environment variable or --bench FILE\n";
    }
    switch (e.kind()) {
      case store::StoreError::Kind::refused:
      case store::StoreError::Kind::bad_sql: return exit_usage;
      case store::StoreError::Kind::timed_out: return exit_query_timeout;
      default: return exit_failure;
    }
  }
  if (options.format == "table") {
    std::cout << table->render();
  } else if (options.format == "json") {
    std::cout << (first_row ? "]\n" : "\n]\n");
  }
  return exit_ok;
}

}  // namespace

std::string cell_text(const store::QueryValue& value) {
  if (const auto* i = std::get_if<std::int64_t>(&value)) return std::to_string(*i);
  if (const auto* d = std::get_if<double>(&value)) return real_text(*d);
  if (const auto* s = std::get_if<std::string>(&value)) return *s;
  if (const auto* b = std::get_if<store::QueryBlob>(&value)) {
    std::string text = "X'";
    for (unsigned char byte : b->bytes) text += fmt::format("{:02X}", byte);
    return text + "'";
  }
  return "";
}

std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string quoted = "\"";
  for (char c : text) {
    if (c == '"') quoted += '"';
    quoted += c;
  }
  return quoted + "\"";
}

void add_query_command(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<QueryOptions>();
  auto* verb = app.add_subcommand("query", "Run one read-only SQL statement against the test history");
  verb->add_option("sql", options->sql, "One SQL statement, e.g. \"SELECT * FROM run_summary WHERE day = '2026-12-01'\"")
      ->required();
  options->paths.add_options(*verb, false, true);
  verb->add_option("--format", options->format, "Output: table (aligned), csv (RFC 4180) or json (array of objects)")
      ->default_val("table")
      ->check(CLI::IsMember({"table", "csv", "json"}));
  verb->add_option("--timeout-ms", options->timeout_ms, "Stop the statement after this many milliseconds; 0: no limit")
      ->default_val(10000)
      ->check(CLI::Range(0, 86'400'000));
  verb->footer(
      "The database is opened read-only; statements that would write, ATTACH another file,\n"
      "change a setting with PRAGMA or load an extension are refused.\n"
      "Views: run_summary, iv_curve, unit_history, soak_trend (see schema/004_views_count_from_one.sql).\n"
      "Exit status: 0 ok, 1 cannot open or read the database, 2 bad arguments, bad SQL or a\n"
      "refused statement, 6 stopped at --timeout-ms.\n"
      "Example: zout query \"SELECT * FROM unit_history WHERE serial = 'CW5-0001'\" --format csv");
  verb->callback([options, &exit_code] { exit_code = run_query(*options); });
}

}  // namespace zout::cli
