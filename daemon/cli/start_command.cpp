// `zout start PLAN --unit SERIAL[@SLOT]... | --panel FILE`: queue one run per unit.
#include <fmt/format.h>
#include <unistd.h>

#include <filesystem>
#include <iostream>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/api/control_client.h"
#include "daemon/cli/daemon_verbs.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/run_follower.h"
#include "daemon/cli/time_zone_option.h"
#include "daemon/cli/unit_list.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct StartOptions {
  ClientPaths paths;
  std::string plan;
  std::vector<std::string> units;
  std::string panel;
  std::string operator_name;
  std::string note;
  bool watch = false;
  bool json_output = false;
  text::TimeZoneChoice zone = text::TimeZoneChoice::utc;
};

int run_start(const StartOptions& o) {
  std::vector<UnitOnBench> units;
  if (!o.panel.empty()) {
    units = load_panel_file(o.panel);
  } else {
    for (const auto& text : o.units) units.push_back(parse_unit_argument(text));
  }
  ControlClient client(o.paths.socket_path());
  // The daemon reads the plan file itself (it may run as another user in another directory).
  const std::string plan_path = std::filesystem::absolute(o.plan).string();
  json params = {{"plan_path", plan_path}, {"units", units_json(units)}};
  const char* login = o.operator_name.empty() ? ::getlogin() : nullptr;
  params["operator"] = login != nullptr ? std::string(login) : o.operator_name;
  if (!o.note.empty()) params["note"] = o.note;
  const auto ids = client.call("run.start", params).at("run_ids").get<std::vector<std::int64_t>>();
  if (o.json_output && !o.watch) {
    std::cout << json{{"run_ids", ids}}.dump() << "\n";
  } else if (!o.json_output) {
    for (std::size_t i = 0; i < ids.size(); ++i) {
      std::cout << fmt::format("queued run {} for {}{}\n", ids[i], units[i].serial,
                               units[i].slot ? fmt::format(" in slot {}", *units[i].slot) : std::string());
    }
  }
  if (!o.watch) return exit_ok;
  RunFollower follower(client, std::cout, o.json_output, ::isatty(STDOUT_FILENO) == 1, o.zone);
  return exit_status_for(follower.follow(ids));
}

}  // namespace

void add_start_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<StartOptions>();
  auto* verb = app.add_subcommand("start", "Queue a plan for one or more units (one run each, run one after another)");
  verb->add_option("plan", o->plan, "Plan file (JSON), e.g. config/plans/bias-board-production.json")
      ->required()
      ->check(CLI::ExistingFile);
  auto* unit = verb->add_option("--unit", o->units, "A unit: SERIAL, or SERIAL@SLOT on a panel (repeatable)");
  auto* panel = verb->add_option("--panel", o->panel, "A panel file: {\"panel\": [{\"slot\": 1, \"serial\": \"...\"}, ...]}")
                    ->check(CLI::ExistingFile);
  unit->excludes(panel);
  verb->add_option("--operator", o->operator_name, "Who runs it (default: the login name)");
  verb->add_option("--note", o->note, "Free text kept with the run");
  verb->add_flag("--watch", o->watch, "Follow the runs to their end (as zout watch)");
  verb->add_flag("--json", o->json_output, "Print {\"run_ids\": [...]} (with --watch: one JSON notification per line)");
  add_time_zone_option(*verb, o->zone);
  o->paths.add_options(*verb, true, false);
  verb->footer(
      "The plan is checked against the bench's safety maxima before anything is queued.\n"
      "Exit status: 0 queued (with --watch: every unit passed), 7 plan refused, 8 zoutd not running,\n"
      "9 a unit failed, 10 a run was aborted, interrupted or ended in error, 2 bad arguments.\n"
      "Examples: zout start config/plans/bias-board-production.json --unit BB5-2611-0001@1 --watch\n"
      "          zout start config/plans/bias-board-production.json --panel config/panels/bb5-demo-panel.json");
  verb->callback(verb_callback("start", exit_code, [o] {
    if (o->units.empty() && o->panel.empty()) {
      throw std::invalid_argument("name the units: --unit SERIAL[@SLOT] (repeatable) or --panel FILE");
    }
    return run_start(*o);
  }));
}

}  // namespace zout::cli
