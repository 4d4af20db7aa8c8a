#pragma once
// One sweep's points and the plan's parameters → every figure of the analysis, as the struct
// the store saves (sweep_result). Pure: the caller supplies the points, nothing is read or
// written here.
//
// Which current the fits use: the load's own reading (measured_amps) when present, else the
// set step; a zero step counts as exactly 0 A (any reading there is the load's offset).
// Figures and where they come from:
//   v_oc              impedance.h open_circuit_volts (the zero step(s), else the fit at 0 A)
//   z_out             impedance.h output_impedance at operating_amps (default: smallest
//                     non-zero step), points above fit_max_amps unused
//   chord_z_ohms      impedance.h chord_impedance_ohms to the rated load
//   linear_region     source_resistance.h; effective capacitance from its R (cascade_model.h)
//   diode_curve       diode_curve_fit.h over all points
//   mean diode drop   cascade_model.h from V_oc and the drive amplitude
//   per point         ripple (exact from samples, else 2√3·AC RMS: ripple.h), the model's sag
//                     and ripple at the step, the measured sag V_oc − V
//   verdict           verdict.h judge_sweep against the plan's limits
// Invalid input throws std::invalid_argument naming the field ("points[3].dc_volts is not
// finite (nan)", "stages must be >= 1 (0)"); figures the data cannot support are missing with
// the reason.

#include <cstddef>
#include <limits>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "daemon/analysis/computed.h"
#include "daemon/analysis/diode_curve_fit.h"
#include "daemon/analysis/impedance.h"
#include "daemon/analysis/source_resistance.h"
#include "daemon/analysis/verdict.h"

namespace zout::analysis {

struct SweepPoint {
  double set_amps = 0.0;                // the plan's load step, >= 0
  std::optional<double> measured_amps;  // the load's own current reading, >= 0
  double dc_volts = 0.0;                // mean DC output
  double dc_volts_sigma = 0.0;          // standard error of dc_volts; 0 = unknown
  std::optional<double> ac_rms_volts;   // AC true RMS of the output, >= 0
  std::vector<double> ripple_samples_volts;  // sampled output over >= 1 ripple cycle; may be empty
};

struct SweepParameters {
  // The unit (plan: dut, source).
  int stages = 1;
  double capacitance_farads = 0.0;
  double frequency_hz = 0.0;
  double amplitude_volts_peak = 0.0;
  // Impedance (plan: impedance).
  std::optional<double> operating_amps;  // default: the smallest non-zero step
  double fit_max_amps = std::numeric_limits<double>::infinity();
  std::size_t window_currents = 4;
  // Rated load for the chord impedance and the ripple limit; default: the largest step.
  std::optional<double> rated_amps;
  // Start of the linear region; default: upper half of the steps (source_resistance.h).
  std::optional<double> linear_min_amps;
  double temperature_kelvin = 298.15;  // for the diode curve's V_T
  Limits limits;
};

enum class RippleMethod { sampled, sawtooth_from_rms, none };
// "sampled", "sawtooth_from_rms", "none".
const char* to_string(RippleMethod method);

struct PointResult {
  double set_amps = 0.0;
  double current_amps = 0.0;  // the current the fits used
  double dc_volts = 0.0;
  RippleMethod ripple_method = RippleMethod::none;
  Computed<double> ripple_pp_volts = Computed<double>::missing("no ripple reading");
  double predicted_sag_volts = 0.0;        // Cockcroft–Walton ΔV at current_amps
  double predicted_ripple_pp_volts = 0.0;  // Cockcroft–Walton δV at current_amps
  Computed<double> measured_sag_volts = Computed<double>::missing("no V_oc");  // V_oc − dc_volts
};

struct SweepResult {
  std::vector<PointResult> points;
  Computed<OpenCircuit> v_oc = Computed<OpenCircuit>::missing("not computed");
  Computed<ImpedanceFit> z_out = Computed<ImpedanceFit>::missing("not computed");
  double rated_amps = 0.0;  // 0 when the sweep has no non-zero step
  Computed<Estimate> chord_z_ohms = Computed<Estimate>::missing("not computed");
  double model_source_ohms = 0.0;  // Cockcroft–Walton R for the plan's C
  Computed<LinearRegionFit> linear_region = Computed<LinearRegionFit>::missing("not computed");
  Computed<Estimate> effective_capacitance_farads = Computed<Estimate>::missing("not computed");
  Computed<DiodeCurveFit> diode_curve = Computed<DiodeCurveFit>::missing("not computed");
  Computed<double> mean_diode_drop_volts = Computed<double>::missing("not computed");
  Computed<double> ripple_pp_volts_at_rated = Computed<double>::missing("not computed");
  // The AC RMS behind it: the mean over the same points (the rated step, rated_step.h).
  Computed<double> ripple_rms_volts_at_rated = Computed<double>::missing("not computed");
  SweepFigures figures;  // what the limits apply to
  Verdict verdict;       // judge_sweep(figures, limits)
};

SweepResult analyze_sweep(std::span<const SweepPoint> points, const SweepParameters& parameters);

}  // namespace zout::analysis
