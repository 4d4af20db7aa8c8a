#pragma once
// Everything the store holds about one run, loaded read-only for `zout report` and
// `zout export`: the store's own history of the run (store/read_records.h: summary, sweeps
// with their results, points with their raw readings, events) and the plan checked as zoutd
// checks it. Absent figures are std::nullopt, exactly as NULL in the store.

#include <nlohmann/json.hpp>

#include <cstdint>
#include <filesystem>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "daemon/plan/plan.h"
#include "daemon/store/read_records.h"

namespace zout::report {

// The run asked for is not in the database: "no run 42 in /path/zout.db".
class RunNotFound : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

struct RunRecord {
  std::filesystem::path database_path;
  store::RunSummary header;
  std::string plan_json;          // plan.content_json as stored
  nlohmann::json plan_document;   // the same, parsed
  std::optional<Plan> plan;       // the plan checked as zoutd checks it; empty when it does not load
  std::string plan_error;         // why `plan` is empty
  std::vector<store::StoredSweep> sweeps;  // by sweep number
  std::vector<store::StoredPoint> points;  // by sweep, then step
  std::vector<store::StoredEvent> events;  // by time

  // The result of the highest-numbered analysed sweep; nullptr when none.
  const store::SweepResultRecord* latest_result() const;
  // Every sweep's result, by sweep number (sweeps without one are skipped).
  std::vector<const store::SweepResultRecord*> sweep_results() const;
  // The points of sweep number `sweep` (from 1).
  std::vector<const store::StoredPoint*> points_of_sweep(int sweep) const;
  std::size_t reading_count() const;
  bool is_soak() const { return header.kind == store::RunKind::soak; }
};

// Opens `database_path` read-only and loads run `run_id` as of one moment. Throws RunNotFound
// when the run is not there, store::StoreError (naming the file) when the database cannot be
// opened or read.
RunRecord load_run_record(const std::filesystem::path& database_path, std::int64_t run_id);

}  // namespace zout::report
