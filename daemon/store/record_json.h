#pragma once
// The store's read records as JSON, for the control socket and `--json` output. Times are
// ISO-8601 UTC text, absent values null, words as the schema spells them (run_state.h,
// store_records.h); sweep figures by their column names (sweep_figures.h).

#include <nlohmann/json_fwd.hpp>

#include "daemon/store/read_records.h"

namespace zout::store {

// run_id, station, serial, model, plan_name, kind, state, final, queued_at, started_at,
// ended_at, operator, note, slot, sweeps; then the latest result beside them as in the
// run_summary view: result_sweep, result_computed_at, fit_points, every figure by its column
// name, verdict and verdict_reasons (nulls and [] when no sweep has been analysed yet).
nlohmann::json run_summary_json(const RunSummary& run);

// point_id, sweep_id, sweep and step (from 1), set_load_amps, set_load_ohms,
// measured_load_amps, load_amps, dc_volts, ripple_rms_volts, ripple_pp_volts, settle_s,
// settled, step_started_at, taken_at; with `with_readings`, also "readings": each reading's
// seq, instrument_id, instrument_role, kind, value and taken_at, in the order taken.
nlohmann::json stored_point_json(const StoredPoint& point, bool with_readings);

// event_id, at, level, source, code, message, run_id (or null).
nlohmann::json stored_event_json(const StoredEvent& event);

}  // namespace zout::store
