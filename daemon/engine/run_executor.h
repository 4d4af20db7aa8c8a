#pragma once
// Runs one queued run from start to its final state, as the explicit lifecycle (DEVELOPERS.md, "Run lifecycle"):
//   running → safe state → configure (error queues checked) → drive on → sweeps of steps
//   (settle, measure, commit each point with its readings, notify) → analysis per sweep
//   → verdict → safe state.
// The bench is left in safe state whatever happens (normal end, abort, fault, safety trip).
// I/O failures are recovered by reconnecting with backoff and repeating the step; past the
// budget the run ends `interrupted`.

#include <cstdint>
#include <functional>
#include <map>
#include <mutex>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "daemon/engine/bench.h"
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
  Bench& bench;
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
  struct Outcome {
    store::RunState state = store::RunState::error;
    std::string reason;  // empty when there is none
  };

  // The three phases of execute(). set_up: safe state, the slot, then the bench configured
  // with the drive on and the load on at the first step (recovered like a step).
  void set_up(const RunTicket& ticket, PointMeasurer& measurer, int& failures_left);
  // Every sweep with its points, analysis and verdict: passed or failed, with the reasons.
  Outcome run_sweeps(const RunTicket& ticket, PointMeasurer& measurer, int& failures_left);
  // Safe state, then the final state recorded and notified (a store failure is an event).
  void finish(std::int64_t run_id, const Outcome& outcome);
  // Inside a catch block: the final state for the exception in flight, with its events.
  Outcome stopped_early(std::int64_t run_id);

  // Measures one sweep's steps, committing and notifying each point.
  std::vector<MeasuredPoint> measure_sweep(const RunTicket& ticket, PointMeasurer& measurer, int sweep_index,
                                           std::int64_t sweep_id, int& failures_left);
  // The point and its raw readings in the store; returns the point row.
  std::int64_t commit_point(const Plan& plan, std::int64_t sweep_id, const MeasuredPoint& point);

  void event(store::EventLevel level, const std::string& source, const std::string& code,
             const std::string& message, std::optional<std::int64_t> run_id) {
    s_.events.record(level, source, code, message, run_id);
  }
  // Source, meter (through the measurer) and load mode, then the error queues: entries there
  // throw InstrumentError.
  void configure_bench(const Plan& plan, std::int64_t run_id, PointMeasurer& measurer);
  void apply_step(const Plan& plan, std::size_t step_index);
  // configure_bench, drive on, the step's load, load input on.
  void bring_up(const Plan& plan, std::int64_t run_id, PointMeasurer& measurer, std::size_t step_index);

  // The one recovery rule. Runs `action(recovered)`; on an IoError records it and calls
  // recover(), then runs the action again with recovered = true (the bench was brought up
  // at `step_index` by then). Every failure, of the action or of a reconnect, spends the
  // same budgets; past them the IoError propagates (the run ends `interrupted`).
  void with_recovery(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index, int& failures_left,
                     const std::function<void(bool recovered)>& action);
  // Waits the backoff, reconnects every role, closes the slot and brings the bench up at
  // `step_index`; repeats while that fails and the budgets allow, rethrows past them.
  void recover(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index, int& attempts,
               int& failures_left);
  // Spends one failure of the run's budget; false when it, or the step's `attempts`
  // reconnects so far, leave no further try.
  bool may_retry(int attempts, int& failures_left) const;

  void set_state(std::int64_t run_id, store::RunState state, const std::string& reason);
  void wait_or_abort(std::chrono::duration<double> wait);
  void update_progress(const std::function<void(RunProgress&)>& change);

  RunServices s_;
};

}  // namespace zout
