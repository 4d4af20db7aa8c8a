#pragma once
// The run's measured figures beside the Cockcroft–Walton model's predictions for the same
// cascade and drive (daemon/analysis/cascade_model.h; Kuffel, Zaengl & Kuffel, High Voltage
// Engineering: Fundamentals, §2.2): V_oc, Z_out, droop and ripple at the rated load.

#include <optional>
#include <string>
#include <vector>

#include "daemon/report/run_record.h"

namespace zout::report {

// The cascade and its drive as the plan gives them.
struct CascadeDrive {
  int stages = 0;
  double capacitance_farads = 0.0;
  double frequency_hz = 0.0;
  double amplitude_volts_peak = 0.0;
};

// From the run's plan; empty when the plan did not load.
std::optional<CascadeDrive> cascade_drive(const RunRecord& record);

// The model's output voltage at load current I: V_oc,model − ΔV(I) (cascade_model.h).
double model_output_volts(const CascadeDrive& drive, double load_amps);

struct ComparisonRow {
  std::string quantity;  // "V_oc", "Z_out", "droop at rated load", "ripple pp at rated load"
  std::string key;       // JSON name: v_oc_volts, z_out_ohms, droop_rated_volts, ripple_rated_pp_volts
  std::string unit;      // V or Ω (the figure's unit, store/sweep_figures.h)
  std::optional<double> measured;
  std::optional<double> model;
  // 100·(measured − model)/model; empty when either is missing or the model is 0.
  std::optional<double> difference_percent;
};

// Measured figures come from the latest sweep_result (the measured droop is V_oc minus the mean
// DC output of that sweep's points at the current nearest the rated load, within 5 %). Model
// figures are computed from the plan's cascade at the result's rated load (the plan's when the
// result has none); when the plan did not load, the model figures stored with the result.
std::vector<ComparisonRow> compare_with_model(const RunRecord& record);

// Mean DC output of the latest analysed sweep's points at the current nearest `amps`, when one
// lies within 5 % of it.
std::optional<double> mean_volts_near(const RunRecord& record, double amps);

}  // namespace zout::report
