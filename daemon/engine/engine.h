#pragma once
// The daemon's engine: one bench, one run at a time, the rest waiting in a queue that lives
// in the store (runs in state `queued`), so it survives a restart (DEVELOPERS.md, "Run lifecycle").
//
// Threads: the engine runs runs on its own thread; enqueue/abort/describe/progress are
// called from the control server's thread. Each thread has its own store connection (SQLite
// in WAL mode serialises the writes); the store's state is the truth about the queue.

#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "daemon/engine/bench.h"
#include "daemon/engine/event_log.h"
#include "daemon/engine/recovery_policy.h"
#include "daemon/engine/run_executor.h"
#include "daemon/engine/run_progress.h"
#include "daemon/plan/bench_config.h"
#include "daemon/plan/plan.h"
#include "daemon/store/store_writer.h"

namespace zout {

struct UnitRequest {
  std::string serial;
  std::optional<int> slot;
};

class Engine {
 public:
  // `notify` is called from start() on the calling thread and, once start() has begun the
  // engine thread, from that thread at any time until stop() returns (a run queued before
  // a restart starts at once): whatever it reaches must be ready before start() and outlive
  // stop(). `make_bench` builds the bench from the bench file when start() runs; empty means
  // BenchConnection (SCPI over the file's links).
  Engine(BenchConfig bench, Notify notify, RecoveryPolicy recovery = {}, BenchFactory make_bench = {});
  ~Engine();

  // Start-up (DEVELOPERS.md, "Run lifecycle"): opens the store (migrating it), marks runs left `running` as
  // `interrupted` with an event, connects the bench and puts it in safe state (an
  // unreachable bench is an event, not a failure: it is retried before each run), then
  // starts the engine thread, which picks up queued runs.
  void start();
  // Aborts the run in progress, leaves the bench in safe state and joins the thread.
  void stop();

  // Validates `plan` against the bench (safety maxima) before anything is recorded, then
  // queues one run per unit; returns the run ids in order. Throws ConfigError when refused.
  std::vector<std::int64_t> enqueue(const Plan& plan, const std::string& plan_origin,
                                    const std::vector<UnitRequest>& units, const std::string& operator_name,
                                    const std::string& note);

  // Aborts a queued run at once, or the running one (safe state within a second).
  // Returns false when the run is neither queued nor running.
  bool abort(std::int64_t run_id);

  // Instruments, identities and connection state, for bench.describe.
  nlohmann::json describe_bench() const;
  // The run in progress, if any.
  std::optional<RunProgress> progress() const;

  const BenchConfig& bench() const { return bench_; }

 private:
  void loop();
  std::optional<RunTicket> next_ticket();
  bool ensure_bench_connected(std::optional<std::int64_t> run_id);

  BenchConfig bench_;
  Notify notify_;
  RecoveryPolicy recovery_;
  BenchFactory make_bench_;

  std::unique_ptr<store::StoreWriter> engine_store_;   // engine thread only (and start())
  std::unique_ptr<EventLog> engine_events_;
  std::unique_ptr<store::StoreWriter> control_store_;  // control thread only, under control_mutex_
  std::unique_ptr<EventLog> control_events_;
  std::mutex control_mutex_;
  std::int64_t station_id_ = 0;

  std::unique_ptr<Bench> connection_;  // engine thread only (and start(), stop())
  std::map<std::string, std::int64_t> instrument_ids_;
  mutable std::mutex describe_mutex_;
  nlohmann::json instruments_json_ = nlohmann::json::array();
  bool connected_ = false;
  std::string connection_error_;

  mutable std::mutex progress_mutex_;
  RunProgress progress_;
  std::atomic<std::int64_t> running_run_id_{0};
  std::atomic<std::int64_t> abort_run_id_{0};

  std::mutex wake_mutex_;
  std::condition_variable wake_;
  bool wake_flag_ = false;
  std::atomic<bool> stopping_{false};
  std::thread thread_;
};

}  // namespace zout
