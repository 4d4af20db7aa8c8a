#include "daemon/analysis/verdict.h"

#include <cmath>
#include <stdexcept>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

namespace {

enum class Side { min, max, max_magnitude };

// "v_oc_volts" + "_min" etc.; drift limits are named in full.
void check(Verdict& verdict, const std::string& figure, const std::string& limit_name,
           const std::optional<double>& limit, const Computed<double>& value, Side side) {
  if (!limit) return;
  LimitCheck c;
  c.name = limit_name;
  c.limit = *limit;
  const std::string bound = (side == Side::min ? "min " : "max ") + format_number(*limit);
  if (!value) {
    c.reason = figure + " not computed: " + value.reason() + " (" + bound + ")";
  } else if (!std::isfinite(value.value())) {
    c.measured = value.value();
    c.reason = figure + " is not finite (" + bound + ")";
  } else {
    const double v = value.value();
    c.measured = v;
    switch (side) {
      case Side::min:
        c.passed = v >= *limit;
        c.reason = figure + " " + format_number(v) + (c.passed ? " >= " : " < ") + bound;
        break;
      case Side::max:
        c.passed = v <= *limit;
        c.reason = figure + " " + format_number(v) + (c.passed ? " <= " : " > ") + bound;
        break;
      case Side::max_magnitude:
        c.passed = std::abs(v) <= *limit;
        c.reason = "|" + figure + "| " + format_number(std::abs(v)) + (c.passed ? " <= " : " > ") +
                   bound;
        break;
    }
  }
  verdict.passed = verdict.passed && c.passed;
  verdict.checks.push_back(std::move(c));
}

void require_limit(const std::optional<double>& limit, const char* name, bool positive) {
  if (!limit) return;
  if (positive) {
    require_positive(*limit, std::string("limits.") + name);
  } else {
    require_finite(*limit, std::string("limits.") + name);
  }
}

}  // namespace

void validate_limits(const Limits& limits) {
  require_limit(limits.v_oc_volts_min, "v_oc_volts_min", false);
  require_limit(limits.v_oc_volts_max, "v_oc_volts_max", false);
  require_limit(limits.z_out_ohms_max, "z_out_ohms_max", true);
  require_limit(limits.ripple_pp_volts_max, "ripple_pp_volts_max", true);
  require_limit(limits.effective_capacitance_farads_min, "effective_capacitance_farads_min", true);
  require_limit(limits.diode_drop_volts_max, "diode_drop_volts_max", false);
  require_limit(limits.v_oc_drift_volts_per_hour_max, "v_oc_drift_volts_per_hour_max", true);
  require_limit(limits.z_out_drift_ohms_per_hour_max, "z_out_drift_ohms_per_hour_max", true);
  require_limit(limits.ripple_drift_volts_per_hour_max, "ripple_drift_volts_per_hour_max", true);
  if (limits.v_oc_volts_min && limits.v_oc_volts_max &&
      *limits.v_oc_volts_min > *limits.v_oc_volts_max) {
    throw std::invalid_argument("limits.v_oc_volts_min (" + format_number(*limits.v_oc_volts_min) +
                                ") > limits.v_oc_volts_max (" +
                                format_number(*limits.v_oc_volts_max) + ")");
  }
}

std::string Verdict::failure_summary() const {
  std::string out;
  for (const LimitCheck& c : checks) {
    if (c.passed) continue;
    if (!out.empty()) out += "; ";
    out += c.reason;
  }
  return out;
}

Verdict judge_sweep(const SweepFigures& f, const Limits& limits) {
  validate_limits(limits);
  Verdict v;
  check(v, "v_oc_volts", "v_oc_volts_min", limits.v_oc_volts_min, f.v_oc_volts, Side::min);
  check(v, "v_oc_volts", "v_oc_volts_max", limits.v_oc_volts_max, f.v_oc_volts, Side::max);
  check(v, "z_out_ohms", "z_out_ohms_max", limits.z_out_ohms_max, f.z_out_ohms, Side::max);
  check(v, "ripple_pp_volts", "ripple_pp_volts_max", limits.ripple_pp_volts_max,
        f.ripple_pp_volts_at_rated, Side::max);
  check(v, "effective_capacitance_farads", "effective_capacitance_farads_min",
        limits.effective_capacitance_farads_min, f.effective_capacitance_farads, Side::min);
  check(v, "diode_drop_volts", "diode_drop_volts_max", limits.diode_drop_volts_max,
        f.diode_drop_volts, Side::max);
  return v;
}

Verdict judge_drift(const DriftFigures& f, const Limits& limits) {
  validate_limits(limits);
  Verdict v;
  check(v, "v_oc_drift_volts_per_hour", "v_oc_drift_volts_per_hour_max",
        limits.v_oc_drift_volts_per_hour_max, f.v_oc_volts_per_hour, Side::max_magnitude);
  check(v, "z_out_drift_ohms_per_hour", "z_out_drift_ohms_per_hour_max",
        limits.z_out_drift_ohms_per_hour_max, f.z_out_ohms_per_hour, Side::max_magnitude);
  check(v, "ripple_drift_volts_per_hour", "ripple_drift_volts_per_hour_max",
        limits.ripple_drift_volts_per_hour_max, f.ripple_pp_volts_per_hour, Side::max_magnitude);
  return v;
}

Verdict combine(const Verdict& a, const Verdict& b) {
  Verdict v;
  v.passed = a.passed && b.passed;
  v.checks = a.checks;
  v.checks.insert(v.checks.end(), b.checks.begin(), b.checks.end());
  return v;
}

}  // namespace zout::analysis
