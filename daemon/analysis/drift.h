#pragma once
// Drift of a soak run: how a sweep figure (V_oc, Z_out, ripple) moves over hours.
//   Slope: ordinary least squares of value against sweep time, reported per hour, with a
//   two-sided confidence interval slope ± t_{(1+c)/2, N−2}·SE (Student t, student_t.h).
//   Control band: Shewhart individuals chart (common practice) — the mean ± multiplier·s of the
//   first baseline_count values (s: sample standard deviation, N − 1); a value outside the band
//   is flagged.
// Invalid input (mismatched lengths, non-finite values, confidence outside (0, 1),
// baseline_count < 2, multiplier <= 0) throws std::invalid_argument; too little data gives a
// missing figure with the reason.

#include <cstddef>
#include <optional>
#include <span>
#include <vector>

#include "daemon/analysis/computed.h"

namespace zout::analysis {

struct DriftSlope {
  Estimate per_hour;          // unit of the value per hour
  double ci_low_per_hour = 0.0;
  double ci_high_per_hour = 0.0;
  double confidence = 0.95;
  std::size_t points = 0;
};

// Needs at least 3 values at 2 or more distinct times.
Computed<DriftSlope> drift_per_hour(std::span<const double> times_s, std::span<const double> values,
                                    double confidence = 0.95);

struct ControlBand {
  double mean = 0.0;
  double sigma = 0.0;  // sample standard deviation of the baseline
  double lower = 0.0;  // mean − multiplier·sigma
  double upper = 0.0;  // mean + multiplier·sigma
  std::size_t baseline_points = 0;
};

// From the first baseline_count values; missing when there are fewer.
Computed<ControlBand> control_band(std::span<const double> values, std::size_t baseline_count,
                                   double multiplier = 3.0);

// Indices of the values outside [lower, upper].
std::vector<std::size_t> outside_band(std::span<const double> values, const ControlBand& band);

struct DriftOptions {
  double confidence = 0.95;
  std::size_t baseline_count = 5;  // k: sweeps that set the control band
  double multiplier = 3.0;         // band half-width in baseline standard deviations
};

// One figure's series over a soak.
struct SeriesDrift {
  Computed<DriftSlope> slope = Computed<DriftSlope>::missing("no data");
  Computed<ControlBand> band = Computed<ControlBand>::missing("no data");
  std::vector<std::size_t> out_of_band;  // indices into the series given
  bool alarm = false;                    // any value out of band
};

SeriesDrift analyze_series(std::span<const double> times_s, std::span<const double> values,
                           const DriftOptions& options = {});

// A sweep's figures as the soak sees them; a figure the sweep could not compute is empty and
// left out of that series.
struct SoakSample {
  double time_s = 0.0;  // sweep time since the run started
  std::optional<double> v_oc_volts;
  std::optional<double> z_out_ohms;
  std::optional<double> ripple_pp_volts;
};

// Per figure; out_of_band holds indices into sweeps.
struct SoakDrift {
  SeriesDrift v_oc_volts;
  SeriesDrift z_out_ohms;
  SeriesDrift ripple_pp_volts;
};

SoakDrift soak_drift(std::span<const SoakSample> sweeps, const DriftOptions& options = {});

}  // namespace zout::analysis
