// `zout status`: is zoutd up, is its bench connected, what runs and what waits.
#include <fmt/format.h>

#include <algorithm>
#include <iostream>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/api/control_client.h"
#include "daemon/cli/daemon_verbs.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/cli/time_zone_option.h"
#include "daemon/text/si_text.h"
#include "daemon/text/time_text.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct StatusOptions {
  ClientPaths paths;
  bool json_output = false;
  text::TimeZoneChoice zone = text::TimeZoneChoice::utc;
};

json gather_status(ControlClient& client, const std::string& socket) {
  json status;
  status["socket"] = socket;
  status["bench"] = client.call("bench.describe", json::object());
  status["running"] = client.call("run.list", {{"state", "running"}, {"limit", 10}}).at("runs");
  json queued = client.call("run.list", {{"state", "queued"}, {"limit", 10000}}).at("runs");
  // run.list is newest first; the queue runs oldest first.
  std::reverse(queued.begin(), queued.end());
  status["queued"] = queued;
  status["progress"] = json();
  if (!status["running"].empty()) {
    const auto id = status["running"][0].at("run_id").get<std::int64_t>();
    status["progress"] = client.call("run.get", {{"run_id", id}}).value("progress", json());
  }
  return status;
}

void print_status(const json& s, text::TimeZoneChoice zone) {
  const json& bench = s.at("bench");
  std::cout << fmt::format("zoutd     running, control socket {}\n", s.at("socket").get<std::string>());
  std::cout << fmt::format("station   {}  (bench file {})\n", bench.value("station", ""), bench.value("bench_file", ""));
  std::cout << fmt::format("database  {}\n", bench.value("database", ""));
  std::cout << fmt::format("bench     {}\n", bench.value("connected", false) ? "connected, in safe state between runs"
                                                                             : "not connected");
  if (bench.contains("error")) std::cout << fmt::format("          last error: {}\n", bench.at("error").get<std::string>());
  for (const auto& instrument : bench.value("instruments", json::array())) {
    std::cout << fmt::format("  {:<7} {:<36} {} {} (serial {}, firmware {})\n", instrument.value("role", ""),
                             instrument.value("address", ""), instrument.value("manufacturer", ""),
                             instrument.value("model", ""), instrument.value("serial_number", ""),
                             instrument.value("firmware", ""));
  }
  const json& safety = bench.value("safety", json::object());
  std::cout << fmt::format("safety    output ≤ {}, load ≤ {}, drive ≤ {} peak\n",
                           text::si_text(safety.value("max_output_volts", 0.0), "V", 3), text::si_text(safety.value("max_load_amps", 0.0), "A", 3),
                           text::si_text(safety.value("max_source_volts_peak", 0.0), "V", 3));
  if (s.at("running").empty()) {
    std::cout << "running   nothing\n";
  } else {
    const json& run = s.at("running")[0];
    std::string where;
    const json& progress = s.at("progress");
    if (progress.is_object()) {
      where = fmt::format("  sweep {}/{} step {}/{}", progress.value("sweep", 0), progress.value("sweep_count", 0),
                          progress.value("step", 0), progress.value("step_count", 0));
    }
    std::cout << fmt::format("running   run {}  {}  {}  since {}{}\n", run.value("run_id", 0), run.value("serial", ""),
                             run.value("plan_name", ""),
                             text::display_time(run.value("started_at", ""), zone), where);
  }
  if (s.at("queued").empty()) {
    std::cout << "queue     empty\n";
  } else {
    std::string ids;
    for (const auto& run : s.at("queued")) ids += fmt::format(" {}({})", run.value("run_id", 0), run.value("serial", ""));
    std::cout << fmt::format("queue     {} waiting:{}\n", s.at("queued").size(), ids);
  }
}

}  // namespace

void add_status_command(CLI::App& app, int& exit_code) {
  auto options = std::make_shared<StatusOptions>();
  auto* verb = app.add_subcommand("status", "Show zoutd, its bench, the run in progress and the queue");
  options->paths.add_options(*verb, true, false);
  verb->add_flag("--json", options->json_output, "Print one JSON object instead of text");
  add_time_zone_option(*verb, options->zone);
  verb->footer("Exit status: 0 zoutd answered, 8 zoutd is not running, 1 other failure.\nExample: zout status");
  verb->callback(verb_callback("status", exit_code, [options] {
    const std::string socket = options->paths.socket_path();
    ControlClient client(socket);
    const json status = gather_status(client, socket);
    if (options->json_output) {
      std::cout << status.dump(2) << "\n";
    } else {
      print_status(status, options->zone);
    }
    return exit_ok;
  }));
}

}  // namespace zout::cli
