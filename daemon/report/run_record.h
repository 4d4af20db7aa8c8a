#pragma once
// Everything the store holds about one run, loaded read-only for `zout report` and
// `zout export`: the run_summary row (plus slot and note), the plan, every point with its raw
// readings (iv_curve order: sweep_index, step_index), every sweep_result row, the soak trend
// and the run's events. Absent figures are std::nullopt, exactly as NULL in the store.

#include <nlohmann/json.hpp>

#include <cstdint>
#include <filesystem>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "daemon/plan/plan.h"

namespace zout::report {

// The run asked for is not in the database: "no run 42 in /path/zout.db".
class RunNotFound : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

struct RunHeader {
  std::int64_t run_id = 0;
  std::string station;
  std::string serial;
  std::string model;
  std::string plan_name;
  std::string kind;   // production | soak
  std::string state;  // queued | running | passed | failed | aborted | interrupted | error
  std::string queued_at;
  std::optional<std::string> started_at;
  std::optional<std::string> ended_at;
  std::string operator_name;
  std::string note;
  std::optional<std::int64_t> slot;
  std::int64_t sweeps = 0;
};

struct RunReading {
  std::int64_t seq = 0;
  std::int64_t instrument_id = 0;
  std::string instrument_role;  // source | meter | load | switch
  std::string kind;             // dc_volts, ac_rms_volts, load_amps, ...
  double value = 0.0;
  std::string taken_at;
};

struct RunPoint {
  std::int64_t point_id = 0;
  std::int64_t sweep_id = 0;
  std::int64_t sweep_index = 0;
  std::int64_t step_index = 0;
  std::optional<double> load_amps;  // measured when the load reported it, else the set value
  std::optional<double> set_load_amps;
  std::optional<double> set_load_ohms;
  std::optional<double> measured_load_amps;
  double dc_volts = 0.0;
  std::optional<double> ripple_rms_volts;
  std::optional<double> ripple_pp_volts;
  double settle_s = 0.0;
  bool settled = true;
  std::string step_started_at;
  std::string taken_at;
  std::vector<RunReading> readings;  // in the order taken (seq)
};

// One sweep_result row, every column of schema/001_tables.sql.
struct SweepResultRow {
  std::int64_t sweep_id = 0;
  std::int64_t sweep_index = 0;
  std::string computed_at;
  std::int64_t fit_points = 0;
  std::optional<double> v_oc_volts;
  std::optional<double> z_out_ohms;
  std::optional<double> z_out_stderr_ohms;
  std::optional<double> z_chord_ohms;
  std::optional<double> cascade_r_ohms;
  std::optional<double> cascade_r_stderr_ohms;
  std::optional<double> effective_capacitance_farads;
  std::optional<double> diode_drop_volts;
  std::optional<double> diode_m;
  std::optional<double> diode_i0_amps;
  std::optional<double> rated_load_amps;
  std::optional<double> ripple_rated_rms_volts;
  std::optional<double> ripple_rated_pp_volts;
  std::optional<double> model_v_oc_volts;
  std::optional<double> model_z_out_ohms;
  std::optional<double> model_droop_rated_volts;
  std::optional<double> model_ripple_rated_pp_volts;
  std::optional<double> v_oc_drift_volts_per_hour;
  std::optional<double> v_oc_drift_stderr_volts_per_hour;
  std::optional<double> z_out_drift_ohms_per_hour;
  std::optional<double> z_out_drift_stderr_ohms_per_hour;
  std::optional<double> ripple_drift_volts_per_hour;
  std::optional<double> ripple_drift_stderr_volts_per_hour;
  std::optional<std::string> verdict;  // pass | fail
  std::vector<std::string> verdict_reasons;
};

// One soak_trend row: a sweep of a soak run and its figures.
struct SoakTrendRow {
  std::int64_t sweep_index = 0;
  std::string sweep_started_at;
  std::optional<double> elapsed_s;  // since the run started
  std::optional<double> v_oc_volts;
  std::optional<double> z_out_ohms;
  std::optional<double> ripple_rated_pp_volts;
  std::optional<double> ripple_rated_rms_volts;
  std::optional<std::string> verdict;
};

struct RunEvent {
  std::int64_t event_id = 0;
  std::string at;
  std::string level;  // info | warning | error
  std::string source;
  std::string code;
  std::string message;
};

struct RunRecord {
  std::filesystem::path database_path;
  RunHeader header;
  std::string plan_json;          // plan.content_json as stored
  nlohmann::json plan_document;   // the same, parsed
  std::optional<Plan> plan;       // the plan checked as zoutd checks it; empty when it does not load
  std::string plan_error;         // why `plan` is empty
  std::vector<RunPoint> points;
  std::vector<SweepResultRow> sweep_results;  // by sweep_index
  std::vector<SoakTrendRow> soak_trend;       // by sweep_index; empty for a production run
  std::vector<RunEvent> events;               // by time

  // The sweep_result of the highest sweep_index that has one; nullptr when none.
  const SweepResultRow* latest_result() const;
  // The points of one sweep.
  std::vector<const RunPoint*> points_of_sweep(std::int64_t sweep_index) const;
  std::size_t reading_count() const;
};

// Opens `database_path` read-only and loads run `run_id`. Throws RunNotFound when the run is
// not there, store::StoreError (naming the file) when the database cannot be opened or read.
RunRecord load_run_record(const std::filesystem::path& database_path, std::int64_t run_id);

}  // namespace zout::report
