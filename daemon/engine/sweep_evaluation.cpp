#include "sweep_evaluation.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/sweep_analysis.h"
#include "daemon/store/sweep_figures.h"
#include "daemon/text/quantity_names.h"
#include "daemon/text/si_text.h"

namespace zout {
namespace {

std::optional<double> opt(const analysis::Computed<double>& c) {
  return c.has_value() ? std::optional<double>(c.value()) : std::nullopt;
}

std::optional<double> opt(const analysis::Computed<analysis::Estimate>& c) {
  return c.has_value() ? std::optional<double>(c.value().value) : std::nullopt;
}


}  // namespace

SweepEvaluation evaluate_sweep(const Plan& plan, const std::vector<MeasuredPoint>& points,
                               std::vector<analysis::SoakSample>& history, double seconds_since_start) {
  std::vector<analysis::SweepPoint> sweep_points;
  for (const auto& p : points) {
    analysis::SweepPoint sp;
    sp.set_amps = plan.load.mode == LoadStepMode::current ? plan.load.steps[static_cast<std::size_t>(p.step_index)]
                                                          : std::max(p.load_amps, 0.0);
    sp.measured_amps = std::max(p.load_amps, 0.0);
    sp.dc_volts = p.dc_volts;
    sp.dc_volts_sigma = p.dc_sigma_volts;
    sp.ac_rms_volts = p.ripple_rms_volts;
    sweep_points.push_back(sp);
  }
  analysis::SweepParameters parameters;
  parameters.stages = plan.dut.stages;
  parameters.capacitance_farads = plan.dut.capacitance_farads;
  parameters.frequency_hz = plan.source.frequency_hz;
  parameters.amplitude_volts_peak = plan.source.amplitude_volts_peak;
  parameters.operating_amps = plan.impedance.operating_amps;
  parameters.fit_max_amps = plan.impedance.fit_max_amps;
  parameters.rated_amps = plan.load.rated_amps;
  parameters.limits = plan.limits;
  const analysis::SweepResult result = analysis::analyze_sweep(sweep_points, parameters);

  SweepEvaluation out;
  auto& r = out.record;
  r.computed_at = std::chrono::system_clock::now();
  if (result.v_oc) r.v_oc_volts = result.v_oc->volts.value;
  if (result.z_out) {
    r.z_out_ohms = result.z_out->z_out_ohms.value;
    r.z_out_stderr_ohms = result.z_out->z_out_ohms.standard_error;
    r.fit_points = static_cast<int>(result.z_out->points_used);
  }
  r.z_chord_ohms = opt(result.chord_z_ohms);
  if (result.linear_region) {
    r.cascade_r_ohms = result.linear_region->source_ohms.value;
    r.cascade_r_stderr_ohms = result.linear_region->source_ohms.standard_error;
  }
  r.effective_capacitance_farads = opt(result.effective_capacitance_farads);
  r.diode_drop_volts = opt(result.mean_diode_drop_volts);
  if (result.diode_curve) {
    r.diode_m = opt(result.diode_curve->emission_coefficient);
    r.diode_i0_amps = opt(result.diode_curve->knee_amps);
  }
  if (result.rated_amps > 0) {
    r.rated_load_amps = result.rated_amps;
    r.model_droop_rated_volts = analysis::predicted_sag_volts(plan.dut.stages, result.rated_amps,
                                                              plan.source.frequency_hz, plan.dut.capacitance_farads);
    r.model_ripple_rated_pp_volts = analysis::predicted_ripple_pp_volts(
        plan.dut.stages, result.rated_amps, plan.source.frequency_hz, plan.dut.capacitance_farads);
  }
  // Both ripple figures come from the same points, those of the rated step (analysis/rated_step.h).
  r.ripple_rated_pp_volts = opt(result.ripple_pp_volts_at_rated);
  r.ripple_rated_rms_volts = opt(result.ripple_rms_volts_at_rated);
  r.model_v_oc_volts = analysis::ideal_open_circuit_volts(plan.dut.stages, plan.source.amplitude_volts_peak);
  r.model_z_out_ohms = result.model_source_ohms;

  // Soak: this sweep joins the series; drift and control bands over all sweeps so far.
  history.push_back({seconds_since_start, r.v_oc_volts, r.z_out_ohms, r.ripple_rated_pp_volts});
  analysis::Verdict verdict = result.verdict;
  if (plan.is_soak()) {
    analysis::DriftOptions options;
    options.baseline_count = static_cast<std::size_t>(plan.repeat.baseline_sweeps);
    options.multiplier = plan.repeat.band_sigma;
    const auto drift = analysis::soak_drift(history, options);
    const auto slope = [](const analysis::SeriesDrift& s) {
      return s.slope ? std::optional<double>(s.slope->per_hour.value) : std::nullopt;
    };
    const auto slope_stderr = [](const analysis::SeriesDrift& s) {
      return s.slope ? s.slope->per_hour.standard_error : std::nullopt;
    };
    r.v_oc_drift_volts_per_hour = slope(drift.v_oc_volts);
    r.v_oc_drift_stderr_volts_per_hour = slope_stderr(drift.v_oc_volts);
    r.z_out_drift_ohms_per_hour = slope(drift.z_out_ohms);
    r.z_out_drift_stderr_ohms_per_hour = slope_stderr(drift.z_out_ohms);
    r.ripple_drift_volts_per_hour = slope(drift.ripple_pp_volts);
    r.ripple_drift_stderr_volts_per_hour = slope_stderr(drift.ripple_pp_volts);

    const std::size_t newest = history.size() - 1;
    const auto check_band = [&](const analysis::SeriesDrift& s, const std::string& name, const char* unit,
                                std::optional<double> value) {
      if (!s.band || !value) return;
      if (*value < s.band->lower || *value > s.band->upper) {
        out.alarms.push_back(fmt::format("{} {} outside its control band [{}, {}] (mean ± {:g}σ of the first {} "
                                         "sweeps) at sweep {}",
                                         name, text::si_text(*value, unit), text::si_text(s.band->lower, unit),
                                         text::si_text(s.band->upper, unit), plan.repeat.band_sigma,
                                         s.band->baseline_points, newest + 1));
      }
    };
    if (history.size() > static_cast<std::size_t>(plan.repeat.baseline_sweeps)) {
      check_band(drift.v_oc_volts, text::quantity::v_oc, "V", r.v_oc_volts);
      check_band(drift.z_out_ohms, text::quantity::z_out, "Ω", r.z_out_ohms);
      check_band(drift.ripple_pp_volts, std::string(text::quantity::ripple_pp) + " at rated load", "V",
                 r.ripple_rated_pp_volts);
    }
    analysis::DriftFigures figures;
    if (drift.v_oc_volts.slope) figures.v_oc_volts_per_hour = analysis::Computed<double>::of(drift.v_oc_volts.slope->per_hour.value);
    if (drift.z_out_ohms.slope) figures.z_out_ohms_per_hour = analysis::Computed<double>::of(drift.z_out_ohms.slope->per_hour.value);
    if (drift.ripple_pp_volts.slope) figures.ripple_pp_volts_per_hour = analysis::Computed<double>::of(drift.ripple_pp_volts.slope->per_hour.value);
    // Drift limits are judged once the soak is complete enough to estimate a slope.
    const bool last_sweep = static_cast<int>(history.size()) == plan.repeat.count;
    if (last_sweep) verdict = analysis::combine(verdict, analysis::judge_drift(figures, parameters.limits));
  }

  out.passed = verdict.passed;
  r.verdict = verdict.passed ? store::Verdict::pass : store::Verdict::fail;
  for (const auto& check : verdict.checks) {
    if (!check.passed) r.verdict_reasons.push_back(check.reason);
  }
  return out;
}

nlohmann::json SweepEvaluation::notification(std::int64_t run_id) const {
  nlohmann::json params = store::sweep_result_json(record);
  params["run_id"] = run_id;
  params["alarms"] = alarms;
  return params;
}

}  // namespace zout
