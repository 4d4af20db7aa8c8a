#pragma once
// What the store's readers give back: a run as run_summary shows it, the next queued run, and
// a run's whole history (its sweeps with their results, its points with their raw readings,
// its events). They are built from the records the writer takes (store_records.h), so each
// domain concept has one record; what is added here is only what the store itself assigns
// (ids, sequence numbers, the instrument's role, the numbers people count with).

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "daemon/store/run_state.h"
#include "daemon/store/store_records.h"

namespace zout::store {

// One run as the run_summary view shows it, with its latest analysed sweep.
struct RunSummary {
  std::int64_t run_id = 0;
  std::string station;
  std::string serial;
  std::string model;
  std::string plan_name;
  RunKind kind = RunKind::production;
  RunState state = RunState::queued;
  TimePoint queued_at;
  std::optional<TimePoint> started_at;
  std::optional<TimePoint> ended_at;
  std::string operator_name;
  std::string note;
  std::optional<int> slot;
  int sweeps = 0;                                  // sweeps started so far
  std::optional<SweepResultRecord> latest_result;  // the result of the highest-numbered analysed sweep
};

// Which runs a listing returns; newest first.
struct RunFilter {
  std::optional<RunState> state;
  std::string serial;  // empty: every unit
  int limit = 50;
};

// The oldest queued run of a station, with what the engine needs to run it.
struct QueuedRun {
  std::int64_t run_id = 0;
  std::string plan_name;
  std::string plan_json;  // canonical JSON as stored
  std::string serial;
  std::optional<int> slot;
  std::string operator_name;
  std::string note;
};

struct StoredReading {
  int seq = 0;                  // order taken within the point, from 0
  std::string instrument_role;  // source | meter | load | switch
  ReadingRecord reading;
};

struct StoredPoint {
  std::int64_t point_id = 0;
  int sweep = 0;  // from 1
  int step = 0;   // from 1 (point.step_index + 1)
  PointRecord point;
  // The load current the analysis uses: measured when the load reported it, else the set value.
  std::optional<double> load_amps;
  std::vector<StoredReading> readings;  // in the order taken
};

struct StoredSweep {
  std::int64_t sweep_id = 0;
  int sweep = 0;  // from 1
  TimePoint started_at;
  std::optional<TimePoint> ended_at;
  double elapsed_s = 0.0;  // from the run's start to this sweep's start
  std::optional<SweepResultRecord> result;
};

struct StoredEvent {
  std::int64_t event_id = 0;
  EventRecord event;
};

// Everything the store holds about one run, read as of one moment.
struct RunHistory {
  RunSummary summary;
  std::string plan_json;             // plan.content_json as stored
  std::vector<StoredSweep> sweeps;   // by sweep number
  std::vector<StoredPoint> points;   // by sweep, then step
  std::vector<StoredEvent> events;   // by time
};

}  // namespace zout::store
