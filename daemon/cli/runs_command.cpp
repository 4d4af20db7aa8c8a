// `zout runs`: the most recent runs, newest first, straight from the database (works whether
// zoutd is running or not).
#include <fmt/format.h>

#include <chrono>
#include <cmath>
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
#include "daemon/store/record_json.h"
#include "daemon/store/run_reader.h"

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
  store::RunReader reader(path);
  store::RunFilter filter;
  if (!o.state.empty()) filter.state = store::run_state_named(o.state);
  filter.serial = o.serial;
  filter.limit = o.limit;
  json rows = json::array();
  TextTable table({"RUN", "SERIAL", "PLAN", "STATE", "STARTED", "TOOK", "V_OC", "Z_OUT", "RIPPLE@RATED"});
  for (const auto& run : reader.runs(filter)) {
    std::optional<double> took_s;
    if (run.started_at) {
      const auto end = run.ended_at.value_or(std::chrono::system_clock::now());
      took_s = std::round(std::chrono::duration<double>(end - *run.started_at).count() * 10.0) / 10.0;
    }
    json row = store::run_summary_json(run);
    row["duration_s"] = took_s ? json(*took_s) : json();
    rows.push_back(row);
    const auto figure = [&run](std::optional<double> store::SweepResultRecord::*member) {
      return run.latest_result ? (*run.latest_result).*member : std::nullopt;
    };
    table.add_row({std::to_string(run.run_id), run.serial, run.plan_name, std::string(store::to_string(run.state)),
                   run.started_at ? text::display_time(*run.started_at, o.zone) : std::string(text::missing_value_mark),
                   took_s ? text::clock_time(*took_s) : std::string(text::missing_value_mark),
                   text::si_text(figure(&store::SweepResultRecord::v_oc_volts), "V", 5),
                   text::si_text(figure(&store::SweepResultRecord::z_out_ohms), "Ω", 3),
                   text::si_text(figure(&store::SweepResultRecord::ripple_rated_pp_volts), "V", 3)});
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
      ->check(CLI::IsMember(store::run_state_word_list()));
  verb->add_option("--serial", o->serial, "Only runs of this unit");
  verb->add_option("--limit", o->limit, "At most this many runs")->default_val(20)->check(CLI::Range(1, 100000));
  verb->add_flag("--json", o->json_output, "Print a JSON array (times as stored: ISO-8601 UTC)");
  add_time_zone_option(*verb, o->zone);
  o->paths.add_options(*verb, false, true);
  verb->footer("Exit status: 0 ok, 1 the database cannot be read.\nExample: zout runs --state failed --limit 50");
  verb->callback(verb_callback("runs", exit_code, [o] { return run_runs(*o); }));
}

}  // namespace zout::cli
