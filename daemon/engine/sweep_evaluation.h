#pragma once
// Turns one sweep's points into its analysis (DEVELOPERS.md, "Analysis") and judges it: every figure for
// the store's sweep_result, the verdict with one reason per failed limit, and for a soak the
// drift of V_oc, Z_out and ripple over the sweeps so far with control-band alarms.

#include <string>
#include <vector>

#include <nlohmann/json_fwd.hpp>

#include "daemon/analysis/drift.h"
#include "daemon/analysis/verdict.h"
#include "daemon/engine/point_measurer.h"
#include "daemon/plan/plan.h"
#include "daemon/store/store_records.h"

namespace zout {

struct SweepEvaluation {
  store::SweepResultRecord record;  // sweep_id and sweep left 0 for the caller to fill; reasons in record.verdict_reasons
  bool passed = false;
  std::vector<std::string> alarms;  // soak: the newest sweep's values outside their control band

  // The sweep.result notification: the record as the store writes it as JSON
  // (store::sweep_result_json: every figure by its column, verdict, verdict_reasons), with
  // run_id and alarms.
  nlohmann::json notification(std::int64_t run_id) const;
};

// Evaluates the sweep whose points are `points` (in step order), taken `seconds_since_start`
// after the run's first sweep. `history` holds the soak samples of the earlier sweeps of
// this run; this sweep's sample is appended. Drift figures appear once the soak has enough
// sweeps; the verdict then includes the plan's drift limits.
SweepEvaluation evaluate_sweep(const Plan& plan, const std::vector<MeasuredPoint>& points,
                               std::vector<analysis::SoakSample>& history, double seconds_since_start);

}  // namespace zout
