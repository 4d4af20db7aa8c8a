#pragma once
// The plain records StoreWriter takes: what the engine knows about a run, a point, a reading,
// a sweep's analysis and an event. Fields carry SI units in their names; an absent figure is
// std::nullopt (stored as NULL), never NaN.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/store/run_state.h"
#include "daemon/store/utc_time.h"

namespace zout::store {

enum class RunKind { production, soak };
enum class EventLevel { info, warning, error };
enum class Verdict { pass, fail };

// The words the schema uses ("production", "warning", "pass", ...); run states: run_state.h.
std::string_view to_string(RunKind kind);
std::string_view to_string(EventLevel level);
std::string_view to_string(Verdict verdict);
// The value a schema word names; nullopt for any other text.
std::optional<RunKind> run_kind_named(std::string_view word);
std::optional<EventLevel> event_level_named(std::string_view word);
std::optional<Verdict> verdict_named(std::string_view word);

// One instrument as its *IDN? reply describes it (IEEE 488.2: four fields).
struct InstrumentRecord {
  std::int64_t station_id = 0;
  std::string role;     // source | meter | load | switch
  std::string address;  // URI, e.g. tcp://127.0.0.1:5601
  std::string manufacturer;
  std::string model;
  std::string serial_number;
  std::string firmware;
};

struct NewRun {
  std::int64_t unit_id = 0;
  std::int64_t plan_id = 0;
  std::int64_t station_id = 0;
  RunKind kind = RunKind::production;
  RunState state = RunState::queued;  // queued or running
  TimePoint at;                       // queued at (and started at, when running)
  std::string operator_name;
  std::string note;
  std::optional<int> slot = std::nullopt;  // fixture position (1, 2, ...) when the fixture holds several units
};

// One settled load step. Exactly one of set_load_amps (CC mode) and set_load_ohms (CR mode).
struct PointRecord {
  std::int64_t sweep_id = 0;
  int step_index = 0;
  std::optional<double> set_load_amps;
  std::optional<double> set_load_ohms;
  std::optional<double> measured_load_amps;
  double dc_volts = 0;
  std::optional<double> ripple_rms_volts;
  std::optional<double> ripple_pp_volts;
  double settle_s = 0;
  bool settled = true;  // false when settling ran out of time
  TimePoint step_started_at;
  TimePoint taken_at;
};

// One raw value from one instrument, in the SI unit its kind names ("dc_volts", "load_amps").
struct ReadingRecord {
  std::int64_t instrument_id = 0;
  std::string kind;
  double value = 0;
  TimePoint taken_at;
};

// Every figure of one sweep's analysis (DEVELOPERS.md, "Analysis"); absent figures stay nullopt. The figures are listed
// once, with their columns and units, in sweep_figures.h: the INSERT, the SELECT, the JSON and
// the report all walk that table.
struct SweepResultRecord {
  std::int64_t sweep_id = 0;
  int sweep = 0;  // the sweep's number in its run, from 1; filled when read back (the writer goes by sweep_id)
  TimePoint computed_at;
  int fit_points = 0;
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
  std::optional<Verdict> verdict;
  std::vector<std::string> verdict_reasons;  // one plain sentence per failed limit
};

struct EventRecord {
  TimePoint at;
  EventLevel level = EventLevel::info;
  std::string source;  // what raised it: "engine", "meter", "load", ...
  std::string code;    // short lower-case word(s): "reconnect", "safety.trip"
  std::string message;
  std::optional<std::int64_t> run_id;
  std::optional<std::int64_t> station_id;
};

}  // namespace zout::store
