// `zout watch [RUN...]`: follow runs to their end. Without RUN: the run in progress and every
// run queued behind it; with nothing running or queued, the most recent run's ending.
#include <fmt/format.h>
#include <unistd.h>

#include <iostream>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/api/control_client.h"
#include "daemon/cli/daemon_verbs.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/run_follower.h"
#include "daemon/cli/time_zone_option.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct WatchOptions {
  ClientPaths paths;
  std::vector<std::int64_t> runs;
  bool json_output = false;
  text::TimeZoneChoice zone = text::TimeZoneChoice::utc;
};

std::vector<std::int64_t> runs_to_watch(ControlClient& client) {
  std::vector<std::int64_t> ids;
  for (const char* state : {"running", "queued"}) {
    json runs = client.call("run.list", {{"state", state}, {"limit", 10000}}).at("runs");
    std::reverse(runs.begin(), runs.end());  // oldest first
    for (const auto& run : runs) ids.push_back(run.at("run_id").get<std::int64_t>());
  }
  if (ids.empty()) {
    const json latest = client.call("run.list", {{"limit", 1}}).at("runs");
    if (!latest.empty()) ids.push_back(latest[0].at("run_id").get<std::int64_t>());
  }
  return ids;
}

int run_watch(const WatchOptions& o) {
  ControlClient client(o.paths.socket_path());
  const auto ids = o.runs.empty() ? runs_to_watch(client) : o.runs;
  if (ids.empty()) {
    std::cerr << "zout watch: no runs yet; queue one with zout start PLAN --unit SERIAL\n";
    return exit_failure;
  }
  RunFollower follower(client, std::cout, o.json_output, ::isatty(STDOUT_FILENO) == 1, o.zone);
  return exit_status_for(follower.follow(ids));
}

}  // namespace

void add_watch_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<WatchOptions>();
  auto* verb = app.add_subcommand("watch", "Follow runs live: each point, each sweep's figures, the verdict");
  verb->add_option("run", o->runs, "Run ids (default: the run in progress and the queue behind it)")
      ->check(CLI::PositiveNumber);
  verb->add_flag("--json", o->json_output, "Print each notification as one JSON object per line");
  add_time_zone_option(*verb, o->zone);
  o->paths.add_options(*verb, true, false);
  verb->footer(
      "Exit status: 0 every run passed, 9 a unit failed, 10 a run was aborted, interrupted or ended\n"
      "in error, 8 zoutd not running, 1 no such run.\nExample: zout watch 42");
  verb->callback(verb_callback("watch", exit_code, [o] { return run_watch(*o); }));
}

}  // namespace zout::cli
