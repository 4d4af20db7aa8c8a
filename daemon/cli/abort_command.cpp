// `zout abort RUN`: abort a queued or running run and wait until it has ended (the daemon puts
// the bench in safe state before it records the end).
#include <fmt/format.h>

#include <chrono>
#include <iostream>

#include "daemon/cli/client_paths.h"
#include "daemon/cli/command_errors.h"
#include "daemon/api/control_client.h"
#include "daemon/cli/daemon_verbs.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/store/run_state.h"

namespace zout::cli {
namespace {

using nlohmann::json;

struct AbortOptions {
  ClientPaths paths;
  std::int64_t run = 0;
  double wait_s = 10.0;
};

int run_abort(const AbortOptions& o) {
  ControlClient client(o.paths.socket_path());
  client.call("events.subscribe", json::object());
  client.call("run.abort", {{"run_id", o.run}});
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::duration<double>(o.wait_s);
  std::string state = client.call("run.get", {{"run_id", o.run}}).value("state", "");
  while (!store::is_final_state_word(state) && std::chrono::steady_clock::now() < deadline) {
    const auto message = client.next_notification(std::chrono::milliseconds(200));
    if (message && message->value("method", "") == "run.state" &&
        message->at("params").value("run_id", std::int64_t{0}) == o.run) {
      state = message->at("params").value("state", state);
    }
  }
  if (!store::is_final_state_word(state)) {
    std::cerr << fmt::format("zout abort: run {} asked to abort but still {} after {:g} s; see zout status\n", o.run,
                             state, o.wait_s);
    return exit_failure;
  }
  std::cout << fmt::format("run {} {}; bench left in safe state (load off, source off)\n", o.run, state);
  return exit_ok;
}

}  // namespace

void add_abort_command(CLI::App& app, int& exit_code) {
  auto o = std::make_shared<AbortOptions>();
  auto* verb = app.add_subcommand("abort", "Abort a queued or running run; the bench goes to safe state");
  verb->add_option("run", o->run, "Run id")->required()->check(CLI::PositiveNumber);
  verb->add_option("--wait-s", o->wait_s, "How long to wait for the run to end")->default_val(10.0)->check(CLI::Range(0.0, 3600.0));
  o->paths.add_options(*verb, true, false);
  verb->footer("Exit status: 0 the run has ended, 1 no such run (or not queued/running) or still running after\n"
               "--wait-s, 8 zoutd not running.\nExample: zout abort 42");
  verb->callback(verb_callback("abort", exit_code, [o] { return run_abort(*o); }));
}

}  // namespace zout::cli
