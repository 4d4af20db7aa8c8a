#pragma once
// Pass/fail of a unit against the plan's limits. Every limit the plan sets is checked and
// leaves a reason a person reads, passed or not, with the figure's name, SI prefixes and
// units (daemon/text): "Z_out 239 kΩ > 225 kΩ max", "V_oc 381.9 V < 383 V min". The measured
// value gets more digits where it would otherwise read the same as the limit. The verdict
// passes only when every check passes; a figure that could not be computed fails each of its
// limits with that reason ("Z_out not computed: <why> (max 225 kΩ)"). A limit the plan leaves
// out is not checked. Equality passes (a max is inclusive, so is a min).

#include <optional>
#include <string>
#include <vector>

#include "daemon/analysis/computed.h"

namespace zout::analysis {

// The plan's limits, spelled as the plan file's keys (plan.limits.<name>): each optional (an
// absent one is not checked), SI units as named.
struct Limits {
  std::optional<double> v_oc_min_volts;
  std::optional<double> v_oc_max_volts;
  std::optional<double> z_out_max_ohms;
  std::optional<double> ripple_pp_max_volts;  // at the rated load
  std::optional<double> effective_capacitance_min_farads;
  std::optional<double> diode_drop_max_volts;
  // Soak drift, on the magnitude of the per-hour slope.
  std::optional<double> v_oc_drift_max_volts_per_hour;
  std::optional<double> z_out_drift_max_ohms_per_hour;
  std::optional<double> ripple_drift_max_volts_per_hour;
};

// Throws std::invalid_argument naming the limit when one is not finite, a drift limit or a
// maximum that must be positive is <= 0, or v_oc_min_volts > v_oc_max_volts.
void validate_limits(const Limits& limits);

// The figures of one sweep that limits apply to.
struct SweepFigures {
  Computed<double> v_oc_volts = Computed<double>::missing("not computed");
  Computed<double> z_out_ohms = Computed<double>::missing("not computed");
  Computed<double> ripple_pp_volts_at_rated = Computed<double>::missing("not computed");
  Computed<double> effective_capacitance_farads = Computed<double>::missing("not computed");
  Computed<double> diode_drop_volts = Computed<double>::missing("not computed");
};

// The per-hour drift slopes of a soak.
struct DriftFigures {
  Computed<double> v_oc_volts_per_hour = Computed<double>::missing("not computed");
  Computed<double> z_out_ohms_per_hour = Computed<double>::missing("not computed");
  Computed<double> ripple_pp_volts_per_hour = Computed<double>::missing("not computed");
};

struct LimitCheck {
  std::string name;          // the limit's name as in Limits, e.g. "z_out_max_ohms"
  double limit = 0.0;
  std::optional<double> measured;
  bool passed = false;
  std::string reason;        // e.g. "Z_out 412 kΩ > 350 kΩ max"
};

struct Verdict {
  bool passed = true;        // true when there is no check at all
  std::vector<LimitCheck> checks;

  // The reasons of the failed checks, joined with "; " (empty when passed).
  std::string failure_summary() const;
};

// Checks the sweep limits (not the drift limits). validate_limits first.
Verdict judge_sweep(const SweepFigures& figures, const Limits& limits);
// Checks the drift limits only. validate_limits first.
Verdict judge_drift(const DriftFigures& figures, const Limits& limits);
// Both verdicts' checks; passes when both pass.
Verdict combine(const Verdict& a, const Verdict& b);

}  // namespace zout::analysis
