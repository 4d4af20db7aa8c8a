#include "drift.h"

#include <cmath>
#include <stdexcept>
#include <string>

#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/student_t.h"
#include "daemon/analysis/weighted_fit.h"

namespace zout::analysis {

namespace {

constexpr double seconds_per_hour = 3600.0;

void check_options(const DriftOptions& options) {
  require_finite(options.confidence, "drift confidence");
  if (!(options.confidence > 0.0 && options.confidence < 1.0)) {
    throw std::invalid_argument("drift confidence must be in (0, 1) (" +
                                format_number(options.confidence) + ")");
  }
  if (options.baseline_count < 2) {
    throw std::invalid_argument("drift baseline_count must be >= 2 (" +
                                std::to_string(options.baseline_count) + ")");
  }
  require_positive(options.multiplier, "drift multiplier");
}

}  // namespace

Computed<DriftSlope> drift_per_hour(std::span<const double> times_s, std::span<const double> values,
                                    double confidence) {
  require_same_size(times_s.size(), values.size(), "drift_per_hour: times_s", "values");
  require_all_finite(times_s, "drift_per_hour: times_s");
  require_all_finite(values, "drift_per_hour: values");
  require_finite(confidence, "drift_per_hour: confidence");
  if (!(confidence > 0.0 && confidence < 1.0)) {
    throw std::invalid_argument("drift_per_hour: confidence must be in (0, 1) (" +
                                format_number(confidence) + ")");
  }
  const std::size_t distinct = count_distinct(times_s);
  if (values.size() < 3 || distinct < 2) {
    return Computed<DriftSlope>::missing("drift: needs at least 3 sweeps at 2 distinct times, got " +
                                         std::to_string(values.size()) + " sweeps at " +
                                         std::to_string(distinct) + " times");
  }
  std::vector<double> hours;
  for (double t : times_s) hours.push_back(t / seconds_per_hour);
  const PolynomialFit line = fit_line_unweighted(hours, values);
  const double slope = line.coefficients()[1];
  const double se = std::sqrt((*line.covariance())(1, 1));
  const double t = student_t_quantile(0.5 * (1.0 + confidence),
                                      static_cast<double>(values.size() - 2));
  DriftSlope result;
  result.per_hour = Estimate{slope, se};
  result.ci_low_per_hour = slope - t * se;
  result.ci_high_per_hour = slope + t * se;
  result.confidence = confidence;
  result.points = values.size();
  return Computed<DriftSlope>::of(result);
}

Computed<ControlBand> control_band(std::span<const double> values, std::size_t baseline_count,
                                   double multiplier) {
  require_all_finite(values, "control_band: values");
  require_positive(multiplier, "control_band: multiplier");
  if (baseline_count < 2) {
    throw std::invalid_argument("control_band: baseline_count must be >= 2 (" +
                                std::to_string(baseline_count) + ")");
  }
  if (values.size() < baseline_count) {
    return Computed<ControlBand>::missing("control band: needs " + std::to_string(baseline_count) +
                                          " baseline sweeps, have " + std::to_string(values.size()));
  }
  const double k = static_cast<double>(baseline_count);
  double mean = 0.0;
  for (std::size_t i = 0; i < baseline_count; ++i) mean += values[i] / k;
  double ss = 0.0;
  for (std::size_t i = 0; i < baseline_count; ++i) ss += (values[i] - mean) * (values[i] - mean);
  ControlBand band;
  band.mean = mean;
  band.sigma = std::sqrt(ss / (k - 1.0));
  band.lower = mean - multiplier * band.sigma;
  band.upper = mean + multiplier * band.sigma;
  band.baseline_points = baseline_count;
  return Computed<ControlBand>::of(band);
}

std::vector<std::size_t> outside_band(std::span<const double> values, const ControlBand& band) {
  require_all_finite(values, "outside_band: values");
  std::vector<std::size_t> out;
  for (std::size_t i = 0; i < values.size(); ++i) {
    if (values[i] < band.lower || values[i] > band.upper) out.push_back(i);
  }
  return out;
}

SeriesDrift analyze_series(std::span<const double> times_s, std::span<const double> values,
                           const DriftOptions& options) {
  check_options(options);
  SeriesDrift result;
  result.slope = drift_per_hour(times_s, values, options.confidence);
  result.band = control_band(values, options.baseline_count, options.multiplier);
  if (result.band) {
    result.out_of_band = outside_band(values, result.band.value());
    result.alarm = !result.out_of_band.empty();
  }
  return result;
}

SoakDrift soak_drift(std::span<const SoakSample> sweeps, const DriftOptions& options) {
  check_options(options);
  const auto series = [&](std::optional<double> SoakSample::*member) {
    std::vector<double> t;
    std::vector<double> v;
    std::vector<std::size_t> sweep_index;
    for (std::size_t i = 0; i < sweeps.size(); ++i) {
      if (sweeps[i].*member) {
        t.push_back(sweeps[i].time_s);
        v.push_back(*(sweeps[i].*member));
        sweep_index.push_back(i);
      }
    }
    SeriesDrift drift = analyze_series(t, v, options);
    for (std::size_t& i : drift.out_of_band) i = sweep_index[i];
    return drift;
  };
  SoakDrift result;
  result.v_oc_volts = series(&SoakSample::v_oc_volts);
  result.z_out_ohms = series(&SoakSample::z_out_ohms);
  result.ripple_pp_volts = series(&SoakSample::ripple_pp_volts);
  return result;
}

}  // namespace zout::analysis
