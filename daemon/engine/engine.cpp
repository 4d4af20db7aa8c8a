#include "engine.h"

#include <fmt/format.h>

#include "daemon/engine/bench_connection.h"
#include "daemon/engine/run_state_notice.h"
#include "daemon/plan/bounded_json.h"
#include "daemon/plan/config_error.h"
#include "daemon/plan/safety_check.h"
#include "daemon/store/store_error.h"
#include "daemon/store/utc_time.h"
#include "drivers/transport/io_error.h"

namespace zout {
namespace {

using store::EventLevel;
using store::RunState;

WallTime now() { return std::chrono::system_clock::now(); }

}  // namespace

Engine::Engine(BenchConfig bench, Notify notify, RecoveryPolicy recovery, BenchFactory make_bench)
    : bench_(std::move(bench)),
      notify_(std::move(notify)),
      recovery_(std::move(recovery)),
      make_bench_(make_bench ? std::move(make_bench) : BenchFactory([](const BenchConfig& config) {
        return std::make_unique<BenchConnection>(config);
      })) {}

Engine::~Engine() { stop(); }

void Engine::start() {
  engine_store_ = std::make_unique<store::StoreWriter>(bench_.database_path);
  control_store_ = std::make_unique<store::StoreWriter>(bench_.database_path);
  station_id_ = engine_store_->record_station(bench_.station, now());
  engine_events_ = std::make_unique<EventLog>(*engine_store_, notify_, station_id_);
  control_events_ = std::make_unique<EventLog>(*control_store_, notify_, station_id_);

  const int interrupted = engine_store_->interrupt_running_runs(now());
  if (interrupted > 0) {
    engine_events_->record(EventLevel::warning, "engine", "startup.interrupted",
                           fmt::format("{} run(s) found running at start-up marked interrupted", interrupted));
  }
  engine_events_->record(EventLevel::info, "engine", "startup",
                         fmt::format("zoutd started for station {} with database {}", bench_.station,
                                     bench_.database_path));
  connection_ = make_bench_(bench_);
  ensure_bench_connected(std::nullopt);
  thread_ = std::thread([this] { loop(); });
}

void Engine::stop() {
  if (stopping_.exchange(true)) {
    if (thread_.joinable()) thread_.join();
    return;
  }
  abort_run_id_ = running_run_id_.load();
  {
    std::lock_guard lock(wake_mutex_);
    wake_flag_ = true;
  }
  wake_.notify_all();
  if (thread_.joinable()) thread_.join();
  if (connection_) {
    for (const auto& line : connection_->enter_safe_state()) {
      if (engine_events_) engine_events_->record(EventLevel::error, "engine", "safe_state.failed", line);
    }
  }
  if (engine_events_) engine_events_->record(EventLevel::info, "engine", "shutdown", "zoutd stopped; bench in safe state");
}

bool Engine::ensure_bench_connected(std::optional<std::int64_t> run_id) {
  try {
    const auto found = connection_->connect();
    nlohmann::json list = nlohmann::json::array();
    for (const auto& instrument : found) {
      for (const auto& entry : instrument.stale_errors) {
        engine_events_->record(EventLevel::warning, instrument.role, "error_queue.stale",
                               fmt::format("{},\"{}\" was in the error queue when connecting", entry.code,
                                           entry.message),
                               run_id);
      }
      store::InstrumentRecord record{station_id_,
                                     instrument.role,
                                     instrument.address,
                                     instrument.identity.manufacturer,
                                     instrument.identity.model,
                                     instrument.identity.serial_number,
                                     instrument.identity.firmware};
      instrument_ids_[instrument.role] = engine_store_->record_instrument(record, now());
      list.push_back({{"role", instrument.role},
                      {"address", instrument.address},
                      {"manufacturer", instrument.identity.manufacturer},
                      {"model", instrument.identity.model},
                      {"serial_number", instrument.identity.serial_number},
                      {"firmware", instrument.identity.firmware}});
    }
    const auto unsafe = connection_->enter_safe_state();
    std::lock_guard lock(describe_mutex_);
    instruments_json_ = list;
    connected_ = unsafe.empty();
    connection_error_ = unsafe.empty() ? "" : unsafe.front();
    if (!unsafe.empty()) throw IoError(IoErrorKind::disconnected, "cannot reach safe state: " + unsafe.front());
    return true;
  } catch (const std::exception& e) {
    {
      std::lock_guard lock(describe_mutex_);
      connected_ = false;
      connection_error_ = e.what();
    }
    engine_events_->record(EventLevel::error, "engine", "bench.unreachable", e.what(), run_id);
    // Whatever answered must still be made safe.
    connection_->enter_safe_state();
    return false;
  }
}

std::optional<RunTicket> Engine::next_ticket() {
  for (;;) {
    const auto queued = engine_store_->next_queued_run(station_id_);
    if (!queued) return std::nullopt;
    RunTicket ticket;
    ticket.run_id = queued->run_id;
    ticket.plan_origin = fmt::format("plan \"{}\" of run {}", queued->plan_name, ticket.run_id);
    ticket.unit_serial = queued->serial;
    ticket.slot = queued->slot;
    ticket.operator_name = queued->operator_name;
    ticket.note = queued->note;
    try {
      ticket.plan = parse_plan(parse_bounded_json(queued->plan_json), ticket.plan_origin);
      return ticket;
    } catch (const std::exception& e) {
      // A stored plan this version cannot run must not block the queue behind it.
      engine_store_->set_run_state(ticket.run_id, RunState::error, now());
      engine_events_->record(EventLevel::error, "engine", "run.refused", e.what(), ticket.run_id);
      notify_("run.state", run_state_params(ticket.run_id, RunState::error, now(), e.what()));
    }
  }
}

void Engine::loop() {
  while (!stopping_) {
    std::optional<RunTicket> ticket;
    try {
      ticket = next_ticket();
    } catch (const std::exception& e) {
      engine_events_->record(EventLevel::error, "engine", "queue.unreadable", e.what());
    }
    if (!ticket) {
      std::unique_lock lock(wake_mutex_);
      wake_.wait_for(lock, std::chrono::seconds(1), [this] { return wake_flag_; });
      wake_flag_ = false;
      continue;
    }
    const std::int64_t run_id = ticket->run_id;
    running_run_id_ = run_id;
    try {
      // The bench may have changed since the run was queued: check the plan again.
      require_safe(ticket->plan, bench_.safety, ticket->plan_origin);
      // A passing fault (a dropped link, a garbled reply) gets a few tries before the bench
      // counts as unreachable.
      bool connected = false;
      for (int attempt = 0; attempt < recovery_.connect_attempts && !connected && !stopping_; ++attempt) {
        if (attempt > 0) std::this_thread::sleep_for(recovery_.connect_retry_pause);
        connected = ensure_bench_connected(run_id);
      }
      if (!connected) {
        const auto at = now();
        engine_store_->set_run_state(run_id, RunState::running, at);
        engine_store_->set_run_state(run_id, RunState::interrupted, at);
        notify_("run.state", run_state_params(run_id, RunState::interrupted, at, "bench unreachable"));
        // Do not spin through the queue while the bench is away.
        std::unique_lock lock(wake_mutex_);
        wake_.wait_for(lock, recovery_.unreachable_pause, [this] { return stopping_.load(); });
      } else {
        RunServices services{*engine_store_, *connection_, bench_, recovery_, station_id_, instrument_ids_,
                             notify_,        *engine_events_,
                             [this, run_id] { return stopping_ || abort_run_id_.load() == run_id; },
                             &progress_,     &progress_mutex_};
        RunExecutor(services).execute(*ticket);
      }
    } catch (const std::exception& e) {
      engine_events_->record(EventLevel::error, "engine", "run.refused", e.what(), run_id);
      try {
        const auto at = now();
        engine_store_->set_run_state(run_id, RunState::error, at);
        notify_("run.state", run_state_params(run_id, RunState::error, at, e.what()));
      } catch (const std::exception&) {
        // Already final (aborted while queued): nothing to do.
      }
    }
    running_run_id_ = 0;
    {
      std::lock_guard lock(progress_mutex_);
      progress_ = RunProgress{};
    }
  }
}

std::vector<std::int64_t> Engine::enqueue(const Plan& plan, const std::string& plan_origin,
                                          const std::vector<UnitRequest>& units, const std::string& operator_name,
                                          const std::string& note) {
  if (units.empty()) throw ConfigError(plan_origin + ": no unit given");
  require_safe(plan, bench_.safety, plan_origin);
  for (const auto& unit : units) {
    if (unit.serial.empty()) throw ConfigError(plan_origin + ": a unit serial is empty");
    if (unit.slot && !bench_.panel_switch) {
      throw ConfigError(fmt::format("unit {} names slot {}, but bench {} has no switch", unit.serial, *unit.slot,
                                    bench_.file_path));
    }
    if (unit.slot && *unit.slot < 1) throw ConfigError(fmt::format("unit {}: slot must be 1 or more", unit.serial));
  }
  std::vector<std::int64_t> ids;
  {
    std::lock_guard lock(control_mutex_);
    const auto at = now();
    const auto plan_id = control_store_->record_plan(plan.name, plan.canonical_json, at);
    for (const auto& unit : units) {
      const auto unit_id = control_store_->record_unit(unit.serial, plan.dut.model, at);
      store::NewRun run{unit_id, plan_id, station_id_, plan.is_soak() ? store::RunKind::soak : store::RunKind::production,
                        RunState::queued, at, operator_name, note, unit.slot};
      const auto run_id = control_store_->create_run(run);
      ids.push_back(run_id);
      notify_("run.state", run_state_params(run_id, RunState::queued, at, ""));
    }
  }
  {
    std::lock_guard lock(wake_mutex_);
    wake_flag_ = true;
  }
  wake_.notify_all();
  return ids;
}

bool Engine::abort(std::int64_t run_id) {
  if (running_run_id_.load() == run_id) {
    abort_run_id_ = run_id;
    return true;
  }
  std::lock_guard lock(control_mutex_);
  const auto at = now();
  try {
    control_store_->set_run_state(run_id, RunState::aborted, at);
  } catch (const store::StoreError&) {
    // Not queued (already over, unknown) — or it just started: try the running path again.
    if (running_run_id_.load() == run_id) {
      abort_run_id_ = run_id;
      return true;
    }
    return false;
  }
  control_events_->record(EventLevel::info, "engine", "run.aborted", "aborted while queued", run_id);
  notify_("run.state", run_state_params(run_id, RunState::aborted, at, "aborted while queued"));
  return true;
}

nlohmann::json Engine::describe_bench() const {
  std::lock_guard lock(describe_mutex_);
  nlohmann::json out = {{"station", bench_.station},
                        {"bench_file", bench_.file_path},
                        {"database", bench_.database_path},
                        {"connected", connected_},
                        {"instruments", instruments_json_},
                        {"safety",
                         {{"max_output_volts", bench_.safety.max_output_volts},
                          {"max_load_amps", bench_.safety.max_load_amps},
                          {"max_source_volts_peak", bench_.safety.max_source_volts_peak}}}};
  if (!connection_error_.empty()) out["error"] = connection_error_;
  return out;
}

std::optional<RunProgress> Engine::progress() const {
  if (running_run_id_.load() == 0) return std::nullopt;
  std::lock_guard lock(progress_mutex_);
  return progress_;
}

}  // namespace zout
