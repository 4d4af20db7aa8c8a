// Engine (the queue thread) with a FakeBench injected through its bench factory and a real
// store on a temporary file: the queue from enqueue to the final state, connecting (and
// failing to), abort of queued and running runs, stop(), a stored plan it cannot run, and
// the threads notifications come from. Pauses are 1 ms: each test takes milliseconds.
#include <catch2/catch.hpp>

#include <atomic>
#include <memory>
#include <thread>

#include "daemon/engine/engine.h"
#include "daemon/plan/config_error.h"
#include "daemon/plan/plan.h"
#include "daemon/store/store_writer.h"
#include "tests/support/fake_bench.h"
#include "tests/support/notification_log.h"
#include "tests/support/temp_dir.h"

using namespace zout;
using namespace std::chrono_literals;
using zout::test::FakeBench;
using zout::test::FakeFault;
using zout::test::fast_plan_json;

namespace {

constexpr auto kWait = 10s;  // a bound for a wait that takes milliseconds

class EngineRig {
 public:
  explicit EngineRig(bool with_switch = false)
      : config(test::fake_bench_config((dir_.path / "zout.db").string(), with_switch)),
        owned_(std::make_unique<FakeBench>(with_switch)),
        fake(*owned_),
        engine(config, notes.sink(), test::fast_recovery_policy(),
               [this](const BenchConfig&) -> std::unique_ptr<Bench> { return std::move(owned_); }) {}

  // Queues one run of the fast plan per serial.
  std::vector<std::int64_t> enqueue(const nlohmann::json& plan_json, const std::vector<std::string>& serials) {
    std::vector<UnitRequest> units;
    for (const auto& serial : serials) units.push_back({serial, std::nullopt});
    return engine.enqueue(parse_plan(plan_json, "test plan"), "test plan", units, "tester", "");
  }

  // Queues a run straight into the store, as a daemon that stopped would have left it.
  std::int64_t leave_queued(const nlohmann::json& plan_document) {
    store::StoreWriter writer(config.database_path);
    const auto at = std::chrono::system_clock::now();
    const auto station = writer.record_station(config.station, at);
    const auto plan_id = writer.record_plan(plan_document.value("name", "unnamed"), plan_document.dump(), at);
    const auto unit_id = writer.record_unit("SN-LEFT", "fake unit", at);
    return writer.create_run({unit_id, plan_id, station, store::RunKind::production, store::RunState::queued, at,
                              "tester", "", std::nullopt});
  }

 private:
  test::TempDir dir_{"zout-engine-queue"};

 public:
  BenchConfig config;
  test::NotificationLog notes;

 private:
  std::unique_ptr<FakeBench> owned_;  // until the engine builds its bench

 public:
  FakeBench& fake;  // owned by the engine once started
  Engine engine;
};

void require_run_state_fields(const std::vector<nlohmann::json>& states) {
  REQUIRE_FALSE(states.empty());
  for (const auto& params : states) {
    CAPTURE(params.dump());
    REQUIRE(params.size() == 4);
    REQUIRE(params.at("run_id").is_number_integer());
    REQUIRE(params.at("state").is_string());
    REQUIRE(params.at("at").get<std::string>().back() == 'Z');
    REQUIRE((params.at("reason").is_null() || params.at("reason").is_string()));
  }
}

}  // namespace

TEST_CASE("Engine: a queued run goes queued -> running -> points -> sweep.result -> passed", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  REQUIRE(rig.engine.describe_bench().at("connected") == true);
  REQUIRE(rig.engine.describe_bench().at("instruments").size() == 3);
  REQUIRE(rig.engine.describe_bench().at("instruments")[1].at("model") == "fake-meter");

  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1"});
  REQUIRE(ids.size() == 1);
  REQUIRE(rig.notes.wait_for_state(ids[0], "passed", kWait));
  REQUIRE(rig.notes.story(ids[0]) == std::vector<std::string>{"run.state:queued", "run.state:running", "point", "point",
                                                              "point", "point", "sweep.result", "run.state:passed"});
  require_run_state_fields(rig.notes.states(ids[0]));
  REQUIRE(rig.notes.states(ids[0]).front().at("reason").is_null());
  rig.engine.stop();
  REQUIRE(rig.fake.in_safe_state());
  REQUIRE(rig.fake.last_safe_state_commands() == std::vector<std::string>{"load.set_input off", "source.set_output off"});
}

TEST_CASE("Engine: runs of one enqueue run in order, one at a time", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1", "SN-2"});
  REQUIRE(rig.notes.wait_for_state(ids[1], "passed", kWait));
  // The second started only once the first was over.
  std::vector<std::string> order;
  for (const auto& e : rig.notes.entries()) {
    if (e.method == "run.state" && e.params.at("state") != "queued") {
      order.push_back(std::to_string(e.params.at("run_id").get<std::int64_t>()) + ":" +
                      e.params.at("state").get<std::string>());
    }
  }
  const auto first = std::to_string(ids[0]);
  const auto second = std::to_string(ids[1]);
  REQUIRE(order == std::vector<std::string>{first + ":running", first + ":passed", second + ":running",
                                            second + ":passed"});
}

TEST_CASE("Engine: a bench that stays unreachable ends the run interrupted after the connect tries", "[engine]") {
  EngineRig rig;
  const auto fault = GENERATE(FakeFault::drop, FakeFault::stall);
  rig.fake.inject("meter.connect", fault, 1, 1000);
  rig.engine.start();  // an unreachable bench is an event at start-up, not a failure
  const auto described = rig.engine.describe_bench();
  REQUIRE(described.at("connected") == false);
  REQUIRE_THAT(described.at("error").get<std::string>(), Catch::StartsWith("meter.connect:"));
  REQUIRE(rig.notes.event_codes() == std::vector<std::string>{"startup", "bench.unreachable"});

  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1"});
  REQUIRE(rig.notes.wait_for_state(ids[0], "interrupted", kWait));
  REQUIRE(rig.notes.story(ids[0]) == std::vector<std::string>{"run.state:queued", "run.state:interrupted"});
  REQUIRE(rig.notes.states(ids[0]).back().at("reason") == "bench unreachable");
  require_run_state_fields(rig.notes.states(ids[0]));
  // Once at start-up, then RecoveryPolicy::connect_attempts (3) before the run.
  REQUIRE(rig.fake.calls("meter.connect") == 4);
  REQUIRE(rig.fake.in_safe_state());  // whatever answered was made safe
}

TEST_CASE("Engine: a passing fault while connecting is retried and the run passes", "[engine]") {
  EngineRig rig;
  const auto fault = GENERATE(FakeFault::drop, FakeFault::stall);
  rig.fake.inject("load.connect", fault, 2);  // call 1 is start-up's
  rig.engine.start();
  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1"});
  REQUIRE(rig.notes.wait_for_state(ids[0], "passed", kWait));
  REQUIRE(rig.fake.calls("load.connect") == 3);
  REQUIRE(rig.notes.event_codes(ids[0]) == std::vector<std::string>{"bench.unreachable"});
}

TEST_CASE("Engine: stale error-queue entries found when connecting are warning events", "[engine]") {
  EngineRig rig;
  rig.fake.push_error("load", {-113, "Undefined header"});
  rig.engine.start();
  REQUIRE(rig.notes.event_codes() == std::vector<std::string>{"startup", "error_queue.stale"});
  const auto events = rig.notes.entries();
  REQUIRE(events[1].params.at("source") == "load");
  REQUIRE(events[1].params.at("message") == "-113,\"Undefined header\" was in the error queue when connecting");
}

TEST_CASE("Engine: an abort while the run connects ends it aborted, the bench safe", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  // The first run of a fresh database is run 1; its connect is the second "meter.connect".
  std::atomic<bool> accepted{false};  // set on the engine's thread: no assertion there
  rig.fake.before("meter.connect", 2, [&] { accepted = rig.engine.abort(1); });
  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1"});
  REQUIRE(ids == std::vector<std::int64_t>{1});
  REQUIRE(rig.notes.wait_for_state(1, "aborted", kWait));
  REQUIRE(accepted);
  REQUIRE(rig.notes.story(1) == std::vector<std::string>{"run.state:queued", "run.state:running", "run.state:aborted"});
  REQUIRE(rig.fake.calls("meter.read_many") == 0);
  rig.engine.stop();
  REQUIRE(rig.fake.in_safe_state());
}

TEST_CASE("Engine: abort of a queued run takes it out of the queue, the running one goes on", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  std::atomic<bool> aborted_queued{false};  // set on the engine's thread: no assertion there
  std::atomic<bool> aborted_unknown{true};
  // While run 1 measures (the engine's thread), run 2 is still queued.
  rig.fake.before("meter.read_many", 1, [&] {
    aborted_queued = rig.engine.abort(2);
    aborted_unknown = rig.engine.abort(99);
  });
  const auto ids = rig.enqueue(fast_plan_json(), {"SN-1", "SN-2"});
  REQUIRE(ids == std::vector<std::int64_t>{1, 2});
  REQUIRE(rig.notes.wait_for_state(1, "passed", kWait));
  REQUIRE(aborted_queued);
  REQUIRE_FALSE(aborted_unknown);
  REQUIRE(rig.notes.story(2) == std::vector<std::string>{"run.state:queued", "run.state:aborted"});
  REQUIRE(rig.notes.states(2).back().at("reason") == "aborted while queued");
  require_run_state_fields(rig.notes.states(2));
  REQUIRE_FALSE(rig.engine.abort(2));  // already over
}

TEST_CASE("Engine: abort of the running run stops it within a second, bench safe", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  const auto ids = rig.enqueue(fast_plan_json(3, 60.0), {"SN-1"});  // a soak resting 60 s between sweeps
  REQUIRE(rig.notes.wait_for_count(ids[0], "sweep.result", 1, kWait));
  REQUIRE(rig.engine.progress().value().run_id == ids[0]);
  const auto asked = std::chrono::steady_clock::now();
  REQUIRE(rig.engine.abort(ids[0]));
  REQUIRE(rig.notes.wait_for_state(ids[0], "aborted", kWait));
  REQUIRE(std::chrono::steady_clock::now() - asked < 1s);
  REQUIRE(rig.notes.states(ids[0]).back().at("reason") == "aborted by request");
  REQUIRE(rig.fake.in_safe_state());
}

TEST_CASE("Engine: stop() aborts the run in progress and leaves the bench safe", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  const auto ids = rig.enqueue(fast_plan_json(3, 60.0), {"SN-1"});
  REQUIRE(rig.notes.wait_for_count(ids[0], "sweep.result", 1, kWait));
  rig.engine.stop();
  REQUIRE(rig.notes.story(ids[0]).back() == "run.state:aborted");
  REQUIRE(rig.fake.in_safe_state());
  REQUIRE(rig.notes.event_codes().back() == "shutdown");
}

TEST_CASE("Engine: a stored plan it cannot run ends in error and does not block the queue", "[engine]") {
  EngineRig rig;
  const auto broken = rig.leave_queued({{"name", "broken"}});  // no dut, source, load, ...
  const auto good = rig.leave_queued(fast_plan_json());
  rig.engine.start();
  REQUIRE(rig.notes.wait_for_state(good, "passed", kWait));
  const auto states = rig.notes.states(broken);
  REQUIRE(states.size() == 1);
  require_run_state_fields(states);
  REQUIRE(states[0].at("state") == "error");
  REQUIRE_THAT(states[0].at("reason").get<std::string>(), Catch::Contains("plan \"broken\" of run"));
}

TEST_CASE("Engine: enqueue refuses a plan over the bench's maxima and a slot without a switch", "[engine]") {
  EngineRig rig;
  rig.engine.start();
  nlohmann::json hot = fast_plan_json();
  hot["source"]["amplitude_volts_peak"] = 150;  // max_source_volts_peak is 100
  REQUIRE_THROWS_AS(rig.enqueue(hot, {"SN-1"}), ConfigError);
  REQUIRE_THROWS_AS(rig.engine.enqueue(parse_plan(fast_plan_json(), "p"), "p", {{"SN-1", 1}}, "tester", ""),
                    ConfigError);
  REQUIRE_THROWS_AS(rig.enqueue(fast_plan_json(), {""}), ConfigError);
  REQUIRE(rig.notes.states(1).empty());  // nothing was queued
}

TEST_CASE("Engine notifies from start() on: on the caller's thread, then at once from its own", "[engine]") {
  // Why zoutd builds its control server before engine.start(): a run left queued by a
  // daemon that stopped starts as soon as the engine thread does, and notifies from there
  // while the thread that called start() is still setting up.
  EngineRig rig;
  const auto left = rig.leave_queued(fast_plan_json());
  const auto caller = std::this_thread::get_id();
  rig.engine.start();
  const auto during_start = rig.notes.entries();
  REQUIRE_FALSE(during_start.empty());
  REQUIRE(during_start.front().params.at("code") == "startup");
  REQUIRE(during_start.front().thread == caller);

  REQUIRE(rig.notes.wait_for_state(left, "passed", kWait));
  for (const auto& e : rig.notes.entries()) {
    if (e.method == "run.state") REQUIRE(e.thread != caller);  // nobody asked: the engine's thread
  }
}
