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

}  // namespace zout::store
