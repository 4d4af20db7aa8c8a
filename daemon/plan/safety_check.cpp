#include "safety_check.h"

#include <fmt/format.h>

#include <cmath>

#include "daemon/plan/config_error.h"

namespace zout {

std::vector<std::string> safety_violations(const Plan& plan, const SafetyLimits& safety) {
  std::vector<std::string> found;
  const double drive_peak_volts = plan.source.amplitude_volts_peak + std::abs(plan.source.offset_volts);
  if (drive_peak_volts > safety.max_source_volts_peak) {
    found.push_back(fmt::format(
        "plan.source.amplitude_volts_peak: drive {:g} V peak (amplitude + |offset|) exceeds the bench's "
        "safety.max_source_volts_peak {:g} V",
        drive_peak_volts, safety.max_source_volts_peak));
  }
  // An n-stage cascade can never exceed 2n times its peak drive (common practice bound).
  const double ideal_output_volts = 2.0 * plan.dut.stages * drive_peak_volts;
  if (ideal_output_volts > safety.max_output_volts) {
    found.push_back(fmt::format(
        "plan.source.amplitude_volts_peak: the ideal no-load output 2·{}·{:g} = {:g} V exceeds the bench's "
        "safety.max_output_volts {:g} V",
        plan.dut.stages, drive_peak_volts, ideal_output_volts, safety.max_output_volts));
  }
  for (std::size_t i = 0; i < plan.load.steps.size(); ++i) {
    const double step = plan.load.steps[i];
    if (plan.load.mode == LoadStepMode::current && step > safety.max_load_amps) {
      found.push_back(fmt::format("plan.load.steps_amps[{}]: {:g} A exceeds the bench's safety.max_load_amps {:g} A",
                                  i, step, safety.max_load_amps));
    }
    if (plan.load.mode == LoadStepMode::resistance && ideal_output_volts / step > safety.max_load_amps) {
      found.push_back(fmt::format(
          "plan.load.steps_ohms[{}]: {:g} Ω could draw up to {:g} A, over the bench's safety.max_load_amps {:g} A", i,
          step, ideal_output_volts / step, safety.max_load_amps));
    }
  }
  if (plan.limits.v_oc_max_volts &&
      *plan.limits.v_oc_max_volts > safety.max_output_volts) {
    found.push_back(fmt::format(
        "plan.limits.v_oc_max_volts: {:g} V is above the bench's safety.max_output_volts {:g} V: a passing unit "
        "would trip safe state",
        *plan.limits.v_oc_max_volts, safety.max_output_volts));
  }
  return found;
}

void require_safe(const Plan& plan, const SafetyLimits& safety, const std::string& origin) {
  const auto found = safety_violations(plan, safety);
  if (found.empty()) return;
  std::string message = fmt::format("{}: refused: the plan exceeds this bench's safety maxima", origin);
  for (const auto& line : found) message += "\n  " + line;
  throw ConfigError(message);
}

}  // namespace zout
