// RunExecutor's state machine through the in-memory FakeBench and a real StoreWriter on a
// temporary file: normal runs, I/O faults recovered at every phase, the retry budgets, abort,
// safety trips and instrument errors, each ending with the bench in safe state (load off,
// then source off, then the panel open) and the final state recorded and notified.
// Backoffs are 1 ms and plans tiny, so each test takes milliseconds.
#include <catch2/catch.hpp>

#include <algorithm>
#include <atomic>

#include "daemon/engine/run_executor.h"
#include "daemon/plan/plan.h"
#include "daemon/store/store_writer.h"
#include "tests/support/fake_bench.h"
#include "tests/support/notification_log.h"
#include "tests/support/temp_dir.h"

using namespace zout;
using namespace std::chrono_literals;
using store::RunState;
using zout::test::FakeBench;
using zout::test::FakeFault;
using zout::test::fast_plan_json;

namespace {

const std::vector<std::string> kSafeSequence{"load.set_input off", "source.set_output off"};
const std::vector<std::string> kSafeSequenceWithSwitch{"load.set_input off", "source.set_output off",
                                                        "switch.open_all"};

long count_of(const std::vector<std::string>& v, const std::string& what) { return std::count(v.begin(), v.end(), what); }

// A store, an event log, a fake bench and the services RunExecutor needs, with one run queued.
class RunRig {
 public:
  explicit RunRig(bool with_switch = false)
      : store_(dir_.path / "zout.db"),
        fake(with_switch),
        config(test::fake_bench_config()),
        station_id_(store_.record_station(config.station, std::chrono::system_clock::now())),
        events_(store_, notes.sink(), station_id_) {
    for (const auto& role : fake.roles()) {
      instrument_ids_[role] = store_.record_instrument(
          {station_id_, role, "fake://" + role, "zout-test", "fake-" + role, "0", "1.0"}, std::chrono::system_clock::now());
    }
  }

  // Queues a run of `plan_json` and returns its ticket.
  RunTicket queue(const nlohmann::json& plan_json, std::optional<int> slot = std::nullopt) {
    RunTicket ticket;
    ticket.plan = parse_plan(plan_json, "test plan");
    ticket.plan_origin = "test plan";
    ticket.unit_serial = "SN-1";
    ticket.slot = slot;
    const auto at = std::chrono::system_clock::now();
    const auto plan_id = store_.record_plan(ticket.plan.name, ticket.plan.canonical_json, at);
    const auto unit_id = store_.record_unit(ticket.unit_serial, ticket.plan.dut.model, at);
    ticket.run_id = store_.create_run({unit_id, plan_id, station_id_, store::RunKind::production, RunState::queued, at,
                                       "tester", "", slot});
    return ticket;
  }

  RunState execute(const RunTicket& ticket) {
    RunServices services{store_,      fake,       config, recovery, station_id_, instrument_ids_, notes.sink(),
                         events_,     [this] { return abort.load(); }, &progress_, &progress_mutex_};
    return RunExecutor(services).execute(ticket);
  }

  // One number from the store.
  std::int64_t count(const std::string& sql) {
    auto use = store_.database().cached(sql);
    REQUIRE(use->step());
    return use->column_int(0);
  }
  std::string text(const std::string& sql) {
    auto use = store_.database().cached(sql);
    REQUIRE(use->step());
    return use->is_null(0) ? "NULL" : use->column_text(0);
  }
  std::int64_t events_coded(const std::string& code) {
    return count("SELECT count(*) FROM event WHERE code = '" + code + "'");
  }

  // The bench is safe, and the last thing sent was the safe sequence in order.
  void require_left_safe() {
    REQUIRE(fake.in_safe_state());
    REQUIRE(fake.last_safe_state_commands() ==
            (fake.panel_switch() ? kSafeSequenceWithSwitch : kSafeSequence));
  }

 private:
  test::TempDir dir_{"zout-engine-run"};
  store::StoreWriter store_;

 public:
  test::NotificationLog notes;
  FakeBench fake;
  BenchConfig config;
  RecoveryPolicy recovery = test::fast_recovery_policy();
  std::atomic<bool> abort{false};

 private:
  std::int64_t station_id_;
  EventLog events_;
  std::map<std::string, std::int64_t> instrument_ids_;
  RunProgress progress_;
  std::mutex progress_mutex_;
};

std::vector<std::string> one_sweep_story(const std::string& final_state) {
  return {"run.state:running", "point", "point", "point", "point", "sweep.result", "run.state:" + final_state};
}

}  // namespace

TEST_CASE("RunExecutor: a clean run passes, notifications in order, points stored, bench left safe", "[engine]") {
  RunRig rig;
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::passed);

  REQUIRE(rig.notes.story(ticket.run_id) == one_sweep_story("passed"));
  // Every run.state carries the same four fields; no reason on a pass.
  for (const auto& params : rig.notes.states(ticket.run_id)) {
    REQUIRE(params.size() == 4);
    REQUIRE(params.at("run_id") == ticket.run_id);
    REQUIRE(params.at("at").get<std::string>().size() == 24);  // 2026-12-01T21:15:14.123Z
    REQUIRE(params.at("reason").is_null());
  }
  REQUIRE(rig.text("SELECT state FROM run") == "passed");
  REQUIRE(rig.count("SELECT count(*) FROM point") == 4);
  REQUIRE(rig.count("SELECT count(*) FROM sweep_result") == 1);
  REQUIRE(rig.text("SELECT verdict FROM sweep_result") == "pass");
  // Every point holds its readings: two settling, two DC samples, two from the load (plus
  // the ripple at the rated step).
  REQUIRE(rig.count("SELECT count(*) FROM reading") == 4 * 6 + 1);

  // Safe state first, configured, and only then drive on and load on.
  const auto c = rig.fake.commands();
  const std::vector<std::string> start(c.begin(), c.begin() + 13);
  REQUIRE(start == std::vector<std::string>{"bench.enter_safe_state", "load.set_input off", "source.set_output off",
                                            "source.select_sine", "source.set_frequency_hz 20000",
                                            "source.set_amplitude_volts_peak 40", "source.set_offset_volts 0",
                                            "meter.configure_dc_volts 1000 1", "load.select_mode cc",
                                            "bench.drain_all_errors", "source.set_output on", "load.set_current_amps 0",
                                            "load.set_input on"});
  rig.require_left_safe();
  REQUIRE(rig.events_coded("reconnect") == 0);
}

TEST_CASE("RunExecutor: a panel run closes its slot after safe state and opens the panel last", "[engine]") {
  RunRig rig(true);
  const auto ticket = rig.queue(fast_plan_json(), 2);
  REQUIRE(rig.execute(ticket) == RunState::passed);
  const auto c = rig.fake.commands();
  REQUIRE(c[4] == "switch.close_slot 2");  // after enter_safe_state, load off, source off, open
  rig.require_left_safe();
  REQUIRE_FALSE(rig.fake.closed_slot().has_value());
}

TEST_CASE("RunExecutor: a drop or a stall at any phase is recovered and the step repeated", "[engine]") {
  // The phase, by the command that fails the first time it is sent.
  const auto [command, call] = GENERATE(table<std::string, int>({
      {"source.select_sine", 1},          // configure
      {"meter.configure_dc_volts", 1},    // configure (the meter)
      {"bench.drain_all_errors", 1},      // configure (the error check)
      {"load.set_input", 2},              // set-up: load on (1 is the safe state's off)
      {"meter.read_one", 1},              // settle
      {"meter.read_many", 2},             // DC samples of step 2
      {"meter.configure_ac_volts", 1},    // ripple (rated step)
      {"load.measure_current_amps", 3},   // the load's readback, step 3
  }));
  const auto fault = GENERATE(FakeFault::drop, FakeFault::stall);
  CAPTURE(command, call, fault == FakeFault::drop ? "drop" : "stall");
  RunRig rig;
  rig.fake.inject(command, fault, call);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::passed);

  REQUIRE(rig.events_coded(fault == FakeFault::drop ? "io.disconnected" : "io.timeout") == 1);
  REQUIRE(rig.events_coded("reconnect") == 1);
  REQUIRE(rig.events_coded("reconnect.failed") == 0);
  // Every role reconnected once; each step stored once (a repeated step is not duplicated).
  for (const auto& role : rig.fake.roles()) REQUIRE(rig.fake.calls(role + ".reconnect") == 1);
  REQUIRE(rig.count("SELECT count(*) FROM point") == 4);
  REQUIRE(rig.count("SELECT count(DISTINCT step_index) FROM point") == 4);
  REQUIRE(rig.notes.story(ticket.run_id) == one_sweep_story("passed"));
  // After the reconnect the bench was configured again, the drive and the load back on.
  REQUIRE(rig.fake.calls("source.select_sine") == 2);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a drop while resting between soak sweeps is recovered like a step", "[engine]") {
  RunRig rig;
  // Sweep 1 sets steps 0..3 (calls 1..4); the rest at step 0 before sweep 2 is call 5.
  rig.fake.inject("load.set_current_amps", FakeFault::drop, 5);
  std::int64_t sweeps_begun = 0;
  rig.fake.before("load.set_current_amps", 5, [&] { sweeps_begun = rig.count("SELECT count(*) FROM sweep"); });
  const auto ticket = rig.queue(fast_plan_json(2, 0.1));
  REQUIRE(rig.execute(ticket) == RunState::passed);
  REQUIRE(sweeps_begun == 1);  // the call that dropped was the rest, not sweep 2's first step
  REQUIRE(rig.events_coded("io.disconnected") == 1);
  REQUIRE(rig.events_coded("reconnect") == 1);
  REQUIRE(rig.count("SELECT count(*) FROM point") == 8);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a soak notifies each sweep's points and result before the final state", "[engine]") {
  RunRig rig;
  const auto ticket = rig.queue(fast_plan_json(2, 0.0));
  REQUIRE(rig.execute(ticket) == RunState::passed);
  REQUIRE(rig.notes.story(ticket.run_id) ==
          std::vector<std::string>{"run.state:running", "point", "point", "point", "point", "sweep.result", "point",
                                   "point", "point", "point", "sweep.result", "run.state:passed"});
  REQUIRE(rig.count("SELECT count(*) FROM sweep") == 2);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a fault that outlasts the step's retries ends the run interrupted", "[engine]") {
  RunRig rig;
  const std::string command = GENERATE("source.select_sine", "meter.read_many", "load.measure_voltage_volts");
  CAPTURE(command);
  rig.fake.inject(command, FakeFault::drop, 1, 1000);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::interrupted);

  // One reconnect per backoff entry (4), then the step is given up.
  REQUIRE(rig.fake.calls("meter.reconnect") == 4);
  REQUIRE(rig.events_coded("run.interrupted") == 1);
  const auto states = rig.notes.states(ticket.run_id);
  REQUIRE(states.back().at("state") == "interrupted");
  REQUIRE_THAT(states.back().at("reason").get<std::string>(),
               Catch::StartsWith("instrument fault past the retry budget: ") && Catch::Contains("link dropped"));
  REQUIRE(rig.text("SELECT state FROM run") == "interrupted");
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: the run's budget counts failures over all steps", "[engine]") {
  RunRig rig;
  rig.recovery.run_budget = 2;
  // Each step's DC samples fail once: steps 1 and 2 recover, step 3 finds the budget spent.
  rig.fake.inject("meter.read_many", FakeFault::drop, 1);
  rig.fake.inject("meter.read_many", FakeFault::drop, 3);
  rig.fake.inject("meter.read_many", FakeFault::drop, 5);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::interrupted);
  REQUIRE(rig.fake.calls("meter.reconnect") == 2);
  REQUIRE(rig.count("SELECT count(*) FROM point") == 2);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a failed reconnect spends the same budgets in set-up as in a step", "[engine]") {
  // One rule: the fault, then every failed reconnect, each spend one; after the step's four
  // reconnect attempts the run ends interrupted, whether it was setting up or measuring.
  const auto [command, call] = GENERATE(table<std::string, int>({{"source.select_sine", 1}, {"meter.read_many", 2}}));
  CAPTURE(command);
  RunRig rig;
  rig.fake.inject(command, FakeFault::stall, call);  // a passing fault...
  rig.fake.inject("meter.reconnect", FakeFault::drop, 1, 1000);  // ...but the meter never comes back
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::interrupted);
  REQUIRE(rig.events_coded("io.timeout") == 1);
  REQUIRE(rig.events_coded("reconnect.failed") == 4);
  REQUIRE(rig.events_coded("reconnect") == 0);
  REQUIRE(rig.fake.calls("meter.reconnect") == 4);
  // The safe state's own retries reconnect the meter as well, after the run gave up: the
  // bench still ends safe (load and source answer).
  REQUIRE(rig.fake.in_safe_state());
}

TEST_CASE("RunExecutor: a reconnect that fails once is retried within the budget and the run passes", "[engine]") {
  RunRig rig;
  rig.fake.inject("meter.read_one", FakeFault::drop, 1);
  rig.fake.inject("load.reconnect", FakeFault::drop, 1);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::passed);
  REQUIRE(rig.events_coded("reconnect.failed") == 1);
  REQUIRE(rig.events_coded("reconnect") == 1);
  REQUIRE(rig.fake.calls("load.reconnect") == 2);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: an abort at any phase ends the run aborted with the bench safe", "[engine]") {
  const auto [command, call] = GENERATE(table<std::string, int>({
      {"source.select_sine", 1},         // configure
      {"meter.read_one", 1},             // settle
      {"meter.read_many", 2},            // DC samples
      {"meter.configure_ac_volts", 1},   // ripple
      {"load.measure_current_amps", 2},  // the load's readback
      {"meter.reconnect", 1},            // recovering from a fault
  }));
  CAPTURE(command, call);
  RunRig rig;
  rig.fake.inject("meter.read_many", FakeFault::drop, 3);  // the fault that leads to recovery
  rig.fake.before(command, call, [&rig] { rig.abort = true; });
  // Ripple at every step, so an abort during step 1's ripple has a later reading to stop at
  // (an abort during the last point's last reading finds the run complete).
  auto plan = fast_plan_json();
  plan["measure"]["ripple"]["at"] = "every_step";
  const auto ticket = rig.queue(plan);
  REQUIRE(rig.execute(ticket) == RunState::aborted);
  const auto states = rig.notes.states(ticket.run_id);
  REQUIRE(states.back().at("state") == "aborted");
  REQUIRE(states.back().at("reason") == "aborted by request");
  REQUIRE(rig.notes.story(ticket.run_id).front() == "run.state:running");
  REQUIRE(count_of(rig.notes.story(ticket.run_id), "sweep.result") == 0);
  REQUIRE(rig.text("SELECT state FROM run") == "aborted");
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: an abort while resting between soak sweeps ends the run aborted", "[engine]") {
  RunRig rig;
  rig.fake.before("load.set_current_amps", 5, [&rig] { rig.abort = true; });  // the rest before sweep 2
  const auto ticket = rig.queue(fast_plan_json(2, 30.0));  // 30 s apart: only the abort ends the wait
  const auto began = std::chrono::steady_clock::now();
  REQUIRE(rig.execute(ticket) == RunState::aborted);
  REQUIRE(std::chrono::steady_clock::now() - began < 5s);
  REQUIRE(rig.count("SELECT count(*) FROM point") == 4);
  REQUIRE(count_of(rig.notes.story(ticket.run_id), "sweep.result") == 1);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a safety trip ends the run in error with a safety event, safe state at once", "[engine]") {
  const auto [command, call, reading] = GENERATE(table<std::string, int, double>({
      {"meter.read_one", 1, -1.0},               // overload while settling (step 1)
      {"meter.read_many", 3, -1.0},              // overload in the DC samples (step 3)
      {"meter.read_many", 2, 750.0},             // above max_output_volts 500 V
      {"load.measure_voltage_volts", 4, 750.0},  // the load's own reading above it
  }));
  CAPTURE(command, call, reading);
  RunRig rig;
  if (reading < 0) {
    rig.fake.inject(command, FakeFault::overload, call);
  } else {
    rig.fake.inject_reading(command, reading, call);
  }
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::error);
  REQUIRE(rig.events_coded("safety.trip") == 1);
  const auto reason = rig.notes.states(ticket.run_id).back().at("reason").get<std::string>();
  REQUIRE_THAT(reason, Catch::Contains("safety.max_output_volts"));
  REQUIRE(rig.text("SELECT state FROM run") == "error");
  // The trip's own safe state comes before anything else is set (then the final one): in
  // between, at most the rest of the point's readings (the load's run beside the meter's).
  const auto c = rig.fake.commands();
  auto tripped = c.begin();
  for (int seen = 0; tripped != c.end(); ++tripped) {
    if (tripped->rfind(command, 0) == 0 && ++seen == call) break;
  }
  REQUIRE(tripped != c.end());
  const auto next_safe = std::find(tripped, c.end(), "bench.enter_safe_state");
  REQUIRE(next_safe != c.end());
  for (auto it = tripped + 1; it != next_safe; ++it) {
    CAPTURE(*it);
    REQUIRE((it->rfind("meter.", 0) == 0 || it->rfind("load.measure", 0) == 0));
  }
  REQUIRE(count_of(c, "bench.enter_safe_state") == 3);  // set-up, the trip, the end
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: error-queue entries after configuring end the run in error", "[engine]") {
  RunRig rig;
  rig.fake.before("load.select_mode", 1, [&rig] { rig.fake.push_error("source", {-222, "Data out of range"}); });
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::error);
  REQUIRE(rig.events_coded("configure.instrument_error") == 1);
  REQUIRE(rig.notes.states(ticket.run_id).back().at("reason") ==
          "instruments reported errors after configuring: source: -222,\"Data out of range\"");
  REQUIRE(rig.count("SELECT count(*) FROM point") == 0);
  // The drive never went on.
  REQUIRE(count_of(rig.fake.commands(), "source.set_output on") == 0);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a bench that cannot reach safe state at the start is not driven", "[engine]") {
  RunRig rig;
  // The load refuses "input off" and its retry over a fresh link; later it answers again.
  rig.fake.inject("load.set_input", FakeFault::drop, 1, 2);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::interrupted);
  REQUIRE_THAT(rig.notes.states(ticket.run_id).back().at("reason").get<std::string>(),
               Catch::Contains("cannot reach safe state: load:"));
  REQUIRE(count_of(rig.fake.commands(), "source.set_output on") == 0);
  rig.require_left_safe();
}

TEST_CASE("RunExecutor: a safe state that fails at the end is an event per instrument", "[engine]") {
  RunRig rig;
  // The end's safe state: the source refuses "output off" twice (call 1 was the set-up's).
  rig.fake.inject("source.set_output", FakeFault::drop, 3, 2);
  const auto ticket = rig.queue(fast_plan_json());
  REQUIRE(rig.execute(ticket) == RunState::passed);
  REQUIRE(rig.events_coded("safe_state.failed") == 1);
  REQUIRE(rig.fake.source_output_on());    // the source never took the command
  REQUIRE_FALSE(rig.fake.load_input_on());  // the load went off regardless, first
}
