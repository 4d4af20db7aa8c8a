#pragma once
// The bench's safety maxima are hard (DEVELOPERS.md, "Safety"): a plan that could exceed them is refused
// before any instrument is touched. Checks are conservative: the ideal cascade output
// 2n·(V_pk + |offset|) bounds what the unit can reach.

#include <string>
#include <vector>

#include "daemon/plan/bench_config.h"
#include "daemon/plan/plan.h"

namespace zout {

// Every way `plan` could exceed `safety`, one sentence each naming the plan's JSON path
// and the bench limit; empty when the plan is safe on this bench.
std::vector<std::string> safety_violations(const Plan& plan, const SafetyLimits& safety);

// Throws ConfigError listing every violation, prefixed by `origin` (the plan's file).
void require_safe(const Plan& plan, const SafetyLimits& safety, const std::string& origin);

}  // namespace zout
