#include "run_executor.h"

#include <fmt/format.h>

#include <algorithm>
#include <thread>

#include "daemon/engine/engine_errors.h"
#include "daemon/engine/run_state_notice.h"
#include "daemon/engine/sweep_evaluation.h"
#include "daemon/store/utc_time.h"
#include "drivers/scpi/instrument_error.h"
#include "drivers/transport/io_error.h"

namespace zout {
namespace {

using store::EventLevel;
using store::RunState;

WallTime now() { return std::chrono::system_clock::now(); }

// The event code of an I/O failure: "io.timeout", "io.disconnected", "io.protocol_error".
std::string io_event_code(const IoError& e) {
  std::string code = std::string("io.") + to_string(e.kind());
  std::replace(code.begin(), code.end(), ' ', '_');
  return code;
}

nlohmann::json point_json(std::int64_t run_id, int sweep_index, const Plan& plan, const MeasuredPoint& p,
                          std::int64_t point_id) {
  nlohmann::json j = {{"run_id", run_id},
                      {"point_id", point_id},
                      {"sweep", sweep_index + 1},
                      {"sweep_count", plan.repeat.count},
                      {"step", p.step_index + 1},
                      {"step_count", static_cast<int>(plan.load.steps.size())},
                      {"dc_volts", p.dc_volts},
                      {"load_amps", p.load_amps},
                      {"settle_s", p.settle_s},
                      {"settled", p.settled},
                      {"at", store::format_utc(p.taken_at)}};
  if (plan.load.mode == LoadStepMode::current) {
    j["set_amps"] = plan.load.steps[static_cast<std::size_t>(p.step_index)];
  } else {
    j["set_ohms"] = plan.load.steps[static_cast<std::size_t>(p.step_index)];
  }
  j["ripple_pp_volts"] = p.ripple_pp_volts ? nlohmann::json(*p.ripple_pp_volts) : nlohmann::json();
  return j;
}

}  // namespace

void RunExecutor::set_state(std::int64_t run_id, RunState state, const std::string& reason) {
  const auto at = now();
  s_.store.set_run_state(run_id, state, at);
  s_.notify("run.state", run_state_params(run_id, state, at, reason));
}

void RunExecutor::update_progress(const std::function<void(RunProgress&)>& change) {
  if (s_.progress == nullptr || s_.progress_mutex == nullptr) return;
  std::lock_guard lock(*s_.progress_mutex);
  change(*s_.progress);
}

void RunExecutor::wait_or_abort(std::chrono::duration<double> wait) {
  const auto until = std::chrono::steady_clock::now() + std::chrono::duration_cast<std::chrono::nanoseconds>(wait);
  while (std::chrono::steady_clock::now() < until) {
    if (s_.abort_requested()) throw RunAborted("abort requested");
    std::this_thread::sleep_for(std::min<std::chrono::nanoseconds>(
        std::chrono::milliseconds(50), until - std::chrono::steady_clock::now()));
  }
}

void RunExecutor::configure_bench(const Plan& plan, std::int64_t run_id, PointMeasurer& measurer) {
  Source& source = s_.bench.source();
  source.select_sine();
  source.set_frequency_hz(plan.source.frequency_hz);
  source.set_amplitude_volts_peak(plan.source.amplitude_volts_peak);
  source.set_offset_volts(plan.source.offset_volts);
  measurer.configure_meter();
  s_.bench.load().select_mode(plan.load.mode == LoadStepMode::current ? LoadMode::constant_current
                                                                      : LoadMode::constant_resistance);
  // Error-queue entries after configuring mean a setting was not taken: the run cannot trust
  // the bench (DEVELOPERS.md, "Run lifecycle").
  const auto errors = s_.bench.drain_all_errors();
  if (!errors.empty()) {
    std::string all;
    for (const auto& line : errors) all += (all.empty() ? "" : "; ") + line;
    event(EventLevel::error, "engine", "configure.instrument_error", "instruments reported errors after configuring: " + all,
          run_id);
    throw InstrumentError(ErrorEntry{-1, all}, "instruments reported errors after configuring: " + all);
  }
}

void RunExecutor::apply_step(const Plan& plan, std::size_t step_index) {
  const double value = plan.load.steps[step_index];
  if (plan.load.mode == LoadStepMode::current) {
    s_.bench.load().set_current_amps(value);
  } else {
    s_.bench.load().set_resistance_ohms(value);
  }
}

void RunExecutor::bring_up(const Plan& plan, std::int64_t run_id, PointMeasurer& measurer, std::size_t step_index) {
  configure_bench(plan, run_id, measurer);
  s_.bench.source().set_output(true);
  apply_step(plan, step_index);
  s_.bench.load().set_input(true);
}

bool RunExecutor::may_retry(int attempts, int& failures_left) const {
  return --failures_left >= 0 && attempts < static_cast<int>(s_.recovery.backoff.size());
}

void RunExecutor::recover(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index, int& attempts,
                          int& failures_left) {
  const auto& backoff = s_.recovery.backoff;
  for (;;) {
    wait_or_abort(backoff[std::min<std::size_t>(static_cast<std::size_t>(attempts), backoff.size() - 1)]);
    ++attempts;
    try {
      for (const auto& role : s_.bench.roles()) s_.bench.reconnect(role);
      if (ticket.slot && s_.bench.panel_switch()) s_.bench.panel_switch()->close_slot(*ticket.slot);
      bring_up(ticket.plan, ticket.run_id, measurer, step_index);
      event(EventLevel::info, "engine", "reconnect",
            fmt::format("bench reconnected and reconfigured; repeating step {}", step_index + 1), ticket.run_id);
      return;
    } catch (const IoError& e) {
      // Reconnecting can fail too; each failure spends the same budgets.
      event(EventLevel::warning, "engine", "reconnect.failed", e.what(), ticket.run_id);
      if (!may_retry(attempts, failures_left)) throw;
    }
  }
}

void RunExecutor::with_recovery(const RunTicket& ticket, PointMeasurer& measurer, std::size_t step_index,
                                int& failures_left, const std::function<void(bool recovered)>& action) {
  int attempts = 0;
  for (bool recovered = false;; recovered = true) {
    try {
      action(recovered);
      return;
    } catch (const IoError& e) {
      event(EventLevel::warning, "engine", io_event_code(e), e.what(), ticket.run_id);
      if (!may_retry(attempts, failures_left)) throw;
    }
    recover(ticket, measurer, step_index, attempts, failures_left);
  }
}

void RunExecutor::set_up(const RunTicket& ticket, PointMeasurer& measurer, int& failures_left) {
  // Safe state first, then configure; only then drive on and load on (DEVELOPERS.md, "Run lifecycle").
  const auto unsafe = s_.bench.enter_safe_state();
  if (!unsafe.empty()) throw IoError(IoErrorKind::open_failed, "cannot reach safe state: " + unsafe.front());
  if (ticket.slot) {
    if (!s_.bench.panel_switch()) throw std::runtime_error("the run names a slot but the bench has no switch");
    s_.bench.panel_switch()->close_slot(*ticket.slot);
  }
  // Setting up is recovered like a step: after a recovery the bench is already up.
  with_recovery(ticket, measurer, 0, failures_left, [&](bool recovered) {
    if (!recovered) bring_up(ticket.plan, ticket.run_id, measurer, 0);
  });
}

std::int64_t RunExecutor::commit_point(const Plan& plan, std::int64_t sweep_id, const MeasuredPoint& point) {
  const auto step = static_cast<std::size_t>(point.step_index);
  store::PointRecord record;
  record.sweep_id = sweep_id;
  record.step_index = point.step_index;
  if (plan.load.mode == LoadStepMode::current) {
    record.set_load_amps = plan.load.steps[step];
  } else {
    record.set_load_ohms = plan.load.steps[step];
  }
  record.measured_load_amps = point.load_amps;
  record.dc_volts = point.dc_volts;
  record.ripple_rms_volts = point.ripple_rms_volts;
  record.ripple_pp_volts = point.ripple_pp_volts;
  record.settle_s = point.settle_s;
  record.settled = point.settled;
  record.step_started_at = point.step_started_at;
  record.taken_at = point.taken_at;
  std::vector<store::ReadingRecord> readings;
  for (const auto& r : point.readings) readings.push_back({s_.instrument_ids.at(r.role), r.kind, r.value, r.taken_at});
  return s_.store.commit_point(record, readings);
}

std::vector<MeasuredPoint> RunExecutor::measure_sweep(const RunTicket& ticket, PointMeasurer& measurer,
                                                      int sweep_index, std::int64_t sweep_id, int& failures_left) {
  const Plan& plan = ticket.plan;
  std::vector<MeasuredPoint> points;
  for (std::size_t step = 0; step < plan.load.steps.size(); ++step) {
    update_progress([&](RunProgress& p) {
      p.sweep_index = sweep_index;
      p.step_index = static_cast<int>(step);
    });
    // The first step of the first sweep was set before the load input went on.
    const bool step_applied = sweep_index == 0 && step == 0;
    MeasuredPoint point;
    with_recovery(ticket, measurer, step, failures_left, [&](bool recovered) {
      if (!recovered && !step_applied) apply_step(plan, step);  // after a recovery the step is set
      point = measurer.measure(static_cast<int>(step), std::chrono::steady_clock::now(), now());
    });
    const auto point_id = commit_point(plan, sweep_id, point);
    if (!point.settled) {
      event(EventLevel::warning, "engine", "settle.timeout",
            fmt::format("step {} did not settle within {:g} s; point kept and marked", step + 1, plan.settle.max_s),
            ticket.run_id);
    }
    const auto params = point_json(ticket.run_id, sweep_index, plan, point, point_id);
    update_progress([&](RunProgress& p) { p.latest_point = params; });
    s_.notify("point", params);
    points.push_back(std::move(point));
  }
  return points;
}

RunExecutor::Outcome RunExecutor::run_sweeps(const RunTicket& ticket, PointMeasurer& measurer, int& failures_left) {
  const Plan& plan = ticket.plan;
  const auto run_id = ticket.run_id;
  std::vector<analysis::SoakSample> history;
  bool all_passed = true;
  std::vector<std::string> failures;
  const auto first_sweep_start = std::chrono::steady_clock::now();
  for (int sweep_index = 0; sweep_index < plan.repeat.count; ++sweep_index) {
    const auto sweep_start = std::chrono::steady_clock::now();
    const auto sweep_id = s_.store.start_sweep(run_id, sweep_index, now());
    const auto points = measure_sweep(ticket, measurer, sweep_index, sweep_id, failures_left);
    s_.store.end_sweep(sweep_id, now());

    const double since_start_s = std::chrono::duration<double>(sweep_start - first_sweep_start).count();
    SweepEvaluation evaluation = evaluate_sweep(plan, points, history, since_start_s);
    evaluation.record.sweep_id = sweep_id;
    evaluation.record.sweep = sweep_index + 1;
    s_.store.record_sweep_result(evaluation.record);
    s_.notify("sweep.result", evaluation.notification(run_id));
    if (!evaluation.passed) {
      all_passed = false;
      for (const auto& r : evaluation.record.verdict_reasons) {
        failures.push_back(fmt::format("sweep {}: {}", sweep_index + 1, r));
      }
    }
    for (const auto& alarm : evaluation.alarms) {
      event(EventLevel::warning, "engine", "drift.alarm", alarm, run_id);
      if (plan.repeat.fail_on_drift_alarm) {
        all_passed = false;
        failures.push_back(fmt::format("sweep {}: drift alarm: {}", sweep_index + 1, alarm));
      }
    }
    if (!all_passed && plan.repeat.fail_on_drift_alarm && !evaluation.alarms.empty()) break;
    if (sweep_index + 1 < plan.repeat.count) {
      const auto next = sweep_start + std::chrono::duration_cast<std::chrono::nanoseconds>(
                                          std::chrono::duration<double>(plan.repeat.interval_s));
      if (next > std::chrono::steady_clock::now()) {
        // Between soak sweeps the drive stays on; the load rests at the first step (a fault
        // there is recovered like a step's).
        with_recovery(ticket, measurer, 0, failures_left, [&](bool recovered) {
          if (!recovered) apply_step(plan, 0);
        });
        wait_or_abort(next - std::chrono::steady_clock::now());
      }
    }
  }
  Outcome outcome{all_passed ? RunState::passed : RunState::failed, ""};
  for (const auto& f : failures) outcome.reason += (outcome.reason.empty() ? "" : "; ") + f;
  return outcome;
}

RunExecutor::Outcome RunExecutor::stopped_early(std::int64_t run_id) {
  try {
    throw;
  } catch (const RunAborted&) {
    return {RunState::aborted, "aborted by request"};
  } catch (const SafetyTrip& e) {
    // Safe state first, then the records.
    const auto unsafe = s_.bench.enter_safe_state();
    event(EventLevel::error, "engine", "safety.trip", std::string(e.what()) + "; bench put in safe state", run_id);
    for (const auto& line : unsafe) event(EventLevel::error, "engine", "safe_state.failed", line, run_id);
    return {RunState::error, e.what()};
  } catch (const IoError& e) {
    Outcome outcome{RunState::interrupted, fmt::format("instrument fault past the retry budget: {}", e.what())};
    event(EventLevel::error, "engine", "run.interrupted", outcome.reason, run_id);
    return outcome;
  } catch (const InstrumentError& e) {
    return {RunState::error, e.what()};
  } catch (const std::exception& e) {
    event(EventLevel::error, "engine", "run.error", e.what(), run_id);
    return {RunState::error, e.what()};
  }
}

void RunExecutor::finish(std::int64_t run_id, const Outcome& outcome) {
  // Always end in safe state (DEVELOPERS.md, "Run lifecycle").
  for (const auto& line : s_.bench.enter_safe_state()) {
    event(EventLevel::error, "engine", "safe_state.failed", line, run_id);
  }
  try {
    set_state(run_id, outcome.state, outcome.reason);
  } catch (const std::exception& e) {
    event(EventLevel::error, "engine", "store.failed", e.what(), run_id);
  }
}

RunState RunExecutor::execute(const RunTicket& ticket) {
  const Plan& plan = ticket.plan;
  update_progress([&](RunProgress& p) {
    p = RunProgress{};
    p.run_id = ticket.run_id;
    p.sweep_count = plan.repeat.count;
    p.step_count = static_cast<int>(plan.load.steps.size());
  });
  set_state(ticket.run_id, RunState::running, "");

  PointMeasurer measurer(s_.bench, plan, s_.config.safety, s_.abort_requested);
  int failures_left = s_.recovery.run_budget;
  Outcome outcome;
  try {
    set_up(ticket, measurer, failures_left);
    outcome = run_sweeps(ticket, measurer, failures_left);
  } catch (const std::exception&) {
    outcome = stopped_early(ticket.run_id);
  }
  finish(ticket.run_id, outcome);
  return outcome.state;
}

}  // namespace zout
