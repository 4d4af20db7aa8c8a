#include "predictive_detector.h"

#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

#include "daemon/analysis/exponential_fit.h"
#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

PredictiveDetector::PredictiveDetector(const Options& options)
    : SettlingDetector(options.max_s), options_(options) {
  require_positive(options.tolerance_volts, "settle tolerance_volts");
  require_non_negative(options.confidence_z, "settle confidence_z");
  if (options.min_fit_readings < 4) {
    throw std::invalid_argument("settle min_fit_readings must be >= 4 (" +
                                std::to_string(options.min_fit_readings) + ")");
  }
  if (options.fit_readings < options.min_fit_readings) {
    throw std::invalid_argument("settle fit_readings (" + std::to_string(options.fit_readings) +
                                ") must be >= min_fit_readings (" +
                                std::to_string(options.min_fit_readings) + ")");
  }
}

std::optional<double> PredictiveDetector::settled_value(double time_s, double volts) {
  times_.push_back(time_s);
  volts_.push_back(volts);
  if (times_.size() > options_.fit_readings) {
    times_.pop_front();
    volts_.pop_front();
  }
  if (times_.size() < options_.min_fit_readings) return std::nullopt;

  const std::vector<double> t(times_.begin(), times_.end());
  const std::vector<double> v(volts_.begin(), volts_.end());
  const ExponentialApproach fit = fit_exponential_approach(t, v);
  if (fit.bound == ExponentialApproach::Bound::slowest) {
    last_final_volts_.reset();
    return std::nullopt;
  }
  last_final_volts_ = fit.final_volts.value;
  if (!fit.final_volts.standard_error) return std::nullopt;
  if (fit.rms_residual_volts > options_.tolerance_volts) return std::nullopt;
  const double deviation = std::abs(fit.deviation_volts(time_s));
  const double margin = options_.confidence_z * *fit.final_volts.standard_error;
  if (deviation + margin <= options_.tolerance_volts) return fit.final_volts.value;
  return std::nullopt;
}

double PredictiveDetector::give_up_value(double latest_volts) const {
  return last_final_volts_.value_or(latest_volts);
}

}  // namespace zout::analysis
