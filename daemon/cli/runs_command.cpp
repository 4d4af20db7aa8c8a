// `zout runs`: the most recent runs, newest first, straight from the database (works whether
// zoutd is running or not).
#include <fmt/format.h>

#include <filesystem>
#include <iostream>

#include <nlohmann/json.hpp>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/history_verbs.h"
#include "daemon/text/si_text.h"
#include "daemon/text/missing_value.h"
#include "daemon/text/time_text.h"
#include "daemon/cli/text_table.h"
#include "daemon/cli/time_zone_option.h"
#include "daemon/store/database.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct RunsOptions {
  ClientPaths paths;
  std::string state;
  std::string serial;
  int limit = 20;
  bool json_output = false;
  text::TimeZoneChoice zone = text::TimeZoneChoice::utc;
};

int run_runs(const RunsOptions& o) {
  const std::string path = o.paths.database_path();
  if (!std::filesystem::exists(path)) {
    throw std::runtime_error(fmt::format("database {}: no such file (no run recorded yet, or choose it with --db "
                                         "FILE / ZOUT_DB / --bench FILE)",
                                         path));
  }
  store::Database db(path, store::Database::Access::read_only);
  auto use = db.cached(
      "SELECT run_id, serial, plan_name, kind, state, started_at, ended_at, sweeps, v_oc_volts, z_out_ohms, "
      "ripple_rated_pp_volts, verdict, "
      "round((julianday(coalesce(ended_at, strftime('%Y-%m-%dT%H:%M:%fZ', 'now'))) - julianday(started_at)) * 86400.0, 1) "
      "FROM run_summary WHERE (:state = '' OR state = :state) AND (:serial = '' OR serial = :serial) "
      "ORDER BY run_id DESC LIMIT :limit");
  use->bind_text(":state", o.state).bind_text(":serial", o.serial).bind_int(":limit", o.limit);
  const auto opt_real = [&](int column) { return use->is_null(column) ? std::optional<double>() : use->column_real(column); };
  const auto text_at = [&](int column) { return use->is_null(column) ? std::string() : use->column_text(column); };
  json rows = json::array();
  TextTable table({"RUN", "SERIAL", "PLAN", "STATE", "STARTED", "TOOK", "V_OC", "Z_OUT", "RIPPLE@RATED"});
  while (use->step()) {
    const auto took_s = opt_real(12);
    rows.push_back({{"run_id", use->column_int(0)},
                    {"serial", text_at(1)},
                    {"plan_name", text_at(2)},
                    {"kind", text_at(3)},
                    {"state", text_at(4)},
                    {"started_at", use->is_null(5) ? json() : json(text_at(5))},
                    {"ended_at", use->is_null(6) ? json() : json(text_at(6))},
                    {"sweeps", use->column_int(7)},
                    {"v_oc_volts", opt_real(8) ? json(*opt_real(8)) : json()},
                    {"z_out_ohms", opt_real(9) ? json(*opt_real(9)) : json()},
                    {"ripple_rated_pp_volts", opt_real(10) ? json(*opt_real(10)) : json()},
                    {"verdict", use->is_null(11) ? json() : json(text_at(11))},
                    {"duration_s", took_s ? json(*took_s) : json()}});
    table.add_row({std::to_string(use->column_int(0)), text_at(1), text_at(2), text_at(4),
                   text::display_time(text_at(5), o.zone),
                   took_s ? text::clock_time(*took_s) : std::string(text::missing_value_mark),
                   text::si_text(opt_real(8), "V", 5), text::si_text(opt_real(9), "Ω", 3),
                   text::si_text(opt_real(10), "V", 3)});
  }
  if (o.json_output) {
    std::cout << rows.dump(2) << "\n";
  } else if (rows.empty()) {
    std::cout << "no runs match\n";
  } else {
    std::cout << table.render();
  }
  return exit_ok;
}

}  // namespace

void add_runs_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<RunsOptions>();
  auto* verb = app.add_subcommand("runs", "List recent runs, newest first (reads the database; no daemon needed)");
  verb->add_option("--state", o->state, "Only runs in this state")
      ->check(CLI::IsMember({"queued", "running", "passed", "failed", "aborted", "interrupted", "error"}));
  verb->add_option("--serial", o->serial, "Only runs of this unit");
  verb->add_option("--limit", o->limit, "At most this many runs")->default_val(20)->check(CLI::Range(1, 100000));
  verb->add_flag("--json", o->json_output, "Print a JSON array (times as stored: ISO-8601 UTC)");
  add_time_zone_option(*verb, o->zone);
  o->paths.add_options(*verb, false, true);
  verb->footer("Exit status: 0 ok, 1 the database cannot be read.\nExample: zout runs --state failed --limit 50");
  verb->callback(verb_callback("runs", exit_code, [o] { return run_runs(*o); }));
}

}  // namespace zout::cli
