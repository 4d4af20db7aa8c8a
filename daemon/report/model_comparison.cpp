#include "model_comparison.h"

#include <algorithm>
#include <cmath>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/rated_step.h"
#include "daemon/store/sweep_figures.h"
#include "daemon/text/quantity_names.h"

namespace zout::report {
namespace {

std::optional<double> rated_load_amps(const RunRecord& record) {
  if (const auto* result = record.latest_result(); result && result->rated_load_amps) return result->rated_load_amps;
  if (!record.plan) return std::nullopt;
  if (record.plan->load.rated_amps) return record.plan->load.rated_amps;
  if (record.plan->load.mode == LoadStepMode::current && !record.plan->load.steps.empty()) {
    return *std::max_element(record.plan->load.steps.begin(), record.plan->load.steps.end());
  }
  return std::nullopt;
}

std::optional<double> difference_percent(const std::optional<double>& measured, const std::optional<double>& model) {
  if (!measured || !model || *model == 0.0) return std::nullopt;
  return 100.0 * (*measured - *model) / *model;
}

}  // namespace

std::optional<CascadeDrive> cascade_drive(const RunRecord& record) {
  if (!record.plan) return std::nullopt;
  return CascadeDrive{record.plan->dut.stages, record.plan->dut.capacitance_farads, record.plan->source.frequency_hz,
                      record.plan->source.amplitude_volts_peak};
}

double model_output_volts(const CascadeDrive& drive, double load_amps) {
  return analysis::ideal_open_circuit_volts(drive.stages, drive.amplitude_volts_peak) -
         analysis::predicted_sag_volts(drive.stages, load_amps, drive.frequency_hz, drive.capacitance_farads);
}

std::optional<double> mean_volts_near(const RunRecord& record, double amps) {
  const auto* result = record.latest_result();
  if (!result || !(amps > 0.0)) return std::nullopt;
  double sum = 0.0;
  int count = 0;
  for (const auto* p : record.points_of_sweep(result->sweep)) {
    if (p->load_amps && analysis::is_rated_load(*p->load_amps, amps)) {
      sum += p->point.dc_volts;
      ++count;
    }
  }
  return count ? std::optional<double>(sum / count) : std::nullopt;
}

std::vector<ComparisonRow> compare_with_model(const RunRecord& record) {
  const auto* result = record.latest_result();
  const auto drive = cascade_drive(record);
  const auto rated = rated_load_amps(record);
  const auto measured = [&](std::optional<double> store::SweepResultRecord::*field) {
    return result ? result->*field : std::nullopt;
  };

  std::optional<double> model_v_oc = measured(&store::SweepResultRecord::model_v_oc_volts);
  std::optional<double> model_z_out = measured(&store::SweepResultRecord::model_z_out_ohms);
  std::optional<double> model_droop = measured(&store::SweepResultRecord::model_droop_rated_volts);
  std::optional<double> model_ripple = measured(&store::SweepResultRecord::model_ripple_rated_pp_volts);
  if (drive) {
    model_v_oc = analysis::ideal_open_circuit_volts(drive->stages, drive->amplitude_volts_peak);
    model_z_out = analysis::model_source_ohms(drive->stages, drive->frequency_hz, drive->capacitance_farads);
    model_droop = model_ripple = std::nullopt;
    if (rated) {
      model_droop = analysis::predicted_sag_volts(drive->stages, *rated, drive->frequency_hz, drive->capacitance_farads);
      model_ripple =
          analysis::predicted_ripple_pp_volts(drive->stages, *rated, drive->frequency_hz, drive->capacitance_farads);
    }
  }

  std::optional<double> measured_droop;
  const auto v_oc = measured(&store::SweepResultRecord::v_oc_volts);
  if (v_oc && rated) {
    if (const auto v_rated = mean_volts_near(record, *rated)) measured_droop = *v_oc - *v_rated;
  }

  std::vector<ComparisonRow> rows;
  // Each row's unit is its figure's, from the store's figure table.
  const auto add = [&](const std::string& quantity, const char* key, const char* figure, std::optional<double> m,
                       std::optional<double> model) {
    rows.push_back({quantity, key, std::string(store::sweep_figure_named(figure)->unit), m, model,
                    difference_percent(m, model)});
  };
  add(text::quantity::v_oc, "v_oc_volts", "v_oc_volts", v_oc, model_v_oc);
  add(text::quantity::z_out, "z_out_ohms", "z_out_ohms", measured(&store::SweepResultRecord::z_out_ohms), model_z_out);
  add("droop at rated load", "droop_rated_volts", "model_droop_rated_volts", measured_droop, model_droop);
  add(std::string(text::quantity::ripple_pp) + " at rated load", "ripple_rated_pp_volts", "ripple_rated_pp_volts",
      measured(&store::SweepResultRecord::ripple_rated_pp_volts), model_ripple);
  return rows;
}

}  // namespace zout::report
