#include "daemon/analysis/verdict.h"

#include <cmath>
#include <stdexcept>

#include "daemon/analysis/input_checks.h"
#include "daemon/text/quantity_names.h"
#include "daemon/text/si_text.h"

namespace zout::analysis {

namespace {

enum class Side { min, max, max_magnitude };

// A figure as its reasons name it: the quantity, its unit, and the significant digits of a
// measured value.
struct Figure {
  const char* name;
  const char* unit;
  int digits;
};

constexpr Figure v_oc{text::quantity::v_oc, "V", 4};
constexpr Figure z_out{text::quantity::z_out, "Ω", 3};
constexpr Figure ripple_pp{text::quantity::ripple_pp, "V", 3};
constexpr Figure effective_capacitance{text::quantity::effective_capacitance, "F", 3};
constexpr Figure diode_drop{text::quantity::diode_drop, "V", 3};
constexpr Figure v_oc_drift{text::quantity::v_oc_drift, "V/h", 3};
constexpr Figure z_out_drift{text::quantity::z_out_drift, "Ω/h", 3};
constexpr Figure ripple_drift{text::quantity::ripple_drift, "V/h", 3};

// `measured` with the figure's digits, or more where that would read the same as `limit`
// ("225.3 kΩ > 225 kΩ max", not "225 kΩ > 225 kΩ max").
std::string measured_text(double measured, double limit, const Figure& figure) {
  int digits = figure.digits;
  while (digits < 12 && measured != limit &&
         text::si_text(measured, figure.unit, digits) == text::si_text(limit, figure.unit, digits)) {
    ++digits;
  }
  return text::si_text(measured, figure.unit, digits);
}

void check(Verdict& verdict, const Figure& figure, const char* limit_name, const std::optional<double>& limit,
           const Computed<double>& value, Side side) {
  if (!limit) return;
  LimitCheck c;
  c.name = limit_name;
  c.limit = *limit;
  const std::string side_word = side == Side::min ? "min" : "max";
  const std::string limit_text = text::si_text_compact(*limit, figure.unit);
  if (!value) {
    c.reason = std::string(figure.name) + " not computed: " + value.reason() + " (" + side_word + " " + limit_text + ")";
  } else if (!std::isfinite(value.value())) {
    c.measured = value.value();
    c.reason = std::string(figure.name) + " is not finite (" + side_word + " " + limit_text + ")";
  } else {
    const double v = value.value();
    c.measured = v;
    const std::string bound = limit_text + " " + side_word;
    switch (side) {
      case Side::min:
        c.passed = v >= *limit;
        c.reason = std::string(figure.name) + " " + measured_text(v, *limit, figure) + (c.passed ? " >= " : " < ") + bound;
        break;
      case Side::max:
        c.passed = v <= *limit;
        c.reason = std::string(figure.name) + " " + measured_text(v, *limit, figure) + (c.passed ? " <= " : " > ") + bound;
        break;
      case Side::max_magnitude:
        c.passed = std::abs(v) <= *limit;
        c.reason = "|" + std::string(figure.name) + "| " + measured_text(std::abs(v), *limit, figure) +
                   (c.passed ? " <= " : " > ") + bound;
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
  require_limit(limits.v_oc_min_volts, "v_oc_min_volts", false);
  require_limit(limits.v_oc_max_volts, "v_oc_max_volts", false);
  require_limit(limits.z_out_max_ohms, "z_out_max_ohms", true);
  require_limit(limits.ripple_pp_max_volts, "ripple_pp_max_volts", true);
  require_limit(limits.effective_capacitance_min_farads, "effective_capacitance_min_farads", true);
  require_limit(limits.diode_drop_max_volts, "diode_drop_max_volts", false);
  require_limit(limits.v_oc_drift_max_volts_per_hour, "v_oc_drift_max_volts_per_hour", true);
  require_limit(limits.z_out_drift_max_ohms_per_hour, "z_out_drift_max_ohms_per_hour", true);
  require_limit(limits.ripple_drift_max_volts_per_hour, "ripple_drift_max_volts_per_hour", true);
  if (limits.v_oc_min_volts && limits.v_oc_max_volts && *limits.v_oc_min_volts > *limits.v_oc_max_volts) {
    throw std::invalid_argument("limits.v_oc_min_volts (" + format_number(*limits.v_oc_min_volts) +
                                ") > limits.v_oc_max_volts (" + format_number(*limits.v_oc_max_volts) + ")");
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
  check(v, v_oc, "v_oc_min_volts", limits.v_oc_min_volts, f.v_oc_volts, Side::min);
  check(v, v_oc, "v_oc_max_volts", limits.v_oc_max_volts, f.v_oc_volts, Side::max);
  check(v, z_out, "z_out_max_ohms", limits.z_out_max_ohms, f.z_out_ohms, Side::max);
  check(v, ripple_pp, "ripple_pp_max_volts", limits.ripple_pp_max_volts, f.ripple_pp_volts_at_rated, Side::max);
  check(v, effective_capacitance, "effective_capacitance_min_farads", limits.effective_capacitance_min_farads,
        f.effective_capacitance_farads, Side::min);
  check(v, diode_drop, "diode_drop_max_volts", limits.diode_drop_max_volts, f.diode_drop_volts, Side::max);
  return v;
}

Verdict judge_drift(const DriftFigures& f, const Limits& limits) {
  validate_limits(limits);
  Verdict v;
  check(v, v_oc_drift, "v_oc_drift_max_volts_per_hour", limits.v_oc_drift_max_volts_per_hour, f.v_oc_volts_per_hour,
        Side::max_magnitude);
  check(v, z_out_drift, "z_out_drift_max_ohms_per_hour", limits.z_out_drift_max_ohms_per_hour, f.z_out_ohms_per_hour,
        Side::max_magnitude);
  check(v, ripple_drift, "ripple_drift_max_volts_per_hour", limits.ripple_drift_max_volts_per_hour,
        f.ripple_pp_volts_per_hour, Side::max_magnitude);
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
