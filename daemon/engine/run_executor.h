#pragma once
// Runs one queued run from start to its final state, as the explicit lifecycle (DEVELOPERS.md, "Run lifecycle"):
//   running → safe state → configure (error queues checked) → drive on → sweeps of steps
//   (settle, measure, commit each point with its readings, notify) → analysis per sweep
//   → verdict → safe state.
// The bench is left in safe state whatever happens (normal end, abort, fault, safety trip).
// I/O failures are recovered by reconnecting with backoff and repeating the step; past the
// budget the run ends `interrupted`.

#include <atomic>
#include <functional>
#include <map>
#include <mutex>
#include <string>

#include <nlohmann/json.hpp>

#include "daemon/engine/bench_connection.h"
#include "daemon/engine/event_log.h"
#include "daemon/engine/point_measurer.h"
#include "daemon/engine/recovery_policy.h"
#include "daemon/engine/run_progress.h"
#include "daemon/engine/run_ticket.h"
#include "daemon/plan/bench_config.h"
#include "daemon/store/store_writer.h"

namespace zout {

struct RunServices {
  store::StoreWriter& store;
  BenchConnection& bench;
  const BenchConfig& config;
  RecoveryPolicy recovery;
  std::int64_t station_id = 0;
  std::map<std::string, std::int64_t> instrument_ids;  // role -> instrument row
  Notify notify;
  EventLog& events;
  std::function<bool()> abort_requested;
  // Updated as the run moves; read by run.get from another thread under `progress_mutex`.
  RunProgress* progress = nullptr;
  std::mutex* progress_mutex = nullptr;
};

class RunExecutor {
 public:
  explicit RunExecutor(RunServices services) : s_(std::move(services)) {}

  // Executes the run (which must be `queued` in the store) and returns its final state.
  store::RunState execute(const RunTicket& ticket);


 private:
  void event(store::EventLevel level, const std::string& source, const std::string& code,
             const std::string& message, std::optional<std::int64_t> run_id) {
    s_.events.record(level, source, code, message, run_id);
  }
  // Source, meter (through the measurer) and load mode, then the error queues: entries there
  // throw InstrumentError.
  void configure_bench(const Plan& plan, std::int64_t run_id, PointMeasurer& measurer);
  void apply_step(const Plan& plan, std::size_t step_index);
  // Sets the step's load (unless `step_applied`: already set) and measures its point; on an
  // I/O fault reconnects, reconfigures and repeats the step within the budgets.
  MeasuredPoint measure_with_recovery(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index,
                                      int& failures_left, bool step_applied);
  void recover(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index, int attempt);
  void set_state(std::int64_t run_id, store::RunState state, const std::string& reason);
  void wait_or_abort(std::chrono::duration<double> wait);
  void update_progress(const std::function<void(RunProgress&)>& change);

  RunServices s_;
};

}  // namespace zout
