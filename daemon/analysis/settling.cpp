#include "settling.h"

#include <stdexcept>
#include <string>

#include "daemon/analysis/fixed_dwell_detector.h"
#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/predictive_detector.h"
#include "daemon/analysis/stable_window_detector.h"

namespace zout::analysis {

const char* to_string(SettleStatus status) {
  switch (status) {
    case SettleStatus::keep_going: return "keep_going";
    case SettleStatus::settled: return "settled";
    case SettleStatus::gave_up: return "gave_up";
  }
  return "?";
}

SettlingDetector::SettlingDetector(double max_s) : max_s_(max_s) {
  require_positive(max_s, "settle max_s");
}

SettleDecision SettlingDetector::add_reading(double time_s, double volts) {
  if (finished_) {
    throw std::logic_error("settling detector: a reading after the decision was made");
  }
  require_finite(time_s, "settle reading time_s");
  require_finite(volts, "settle reading volts");
  if (have_reading_ && !(time_s > last_time_s_)) {
    throw std::invalid_argument("settle reading time_s must increase (" + format_number(time_s) +
                                " after " + format_number(last_time_s_) + ")");
  }
  have_reading_ = true;
  last_time_s_ = time_s;

  if (const std::optional<double> value = settled_value(time_s, volts)) {
    finished_ = true;
    return SettleDecision{SettleStatus::settled, *value};
  }
  if (time_s >= max_s_) {
    finished_ = true;
    return SettleDecision{SettleStatus::gave_up, give_up_value(volts)};
  }
  return SettleDecision{SettleStatus::keep_going, volts};
}

std::unique_ptr<SettlingDetector> make_settling_detector(const SettleSettings& settings) {
  switch (settings.method) {
    case SettleSettings::Method::fixed:
      return std::make_unique<FixedDwellDetector>(settings.dwell_s, settings.max_s);
    case SettleSettings::Method::window:
      return std::make_unique<StableWindowDetector>(settings.window_readings,
                                                    settings.tolerance_volts, settings.max_s);
    case SettleSettings::Method::predictive: {
      PredictiveDetector::Options options;
      options.tolerance_volts = settings.tolerance_volts;
      options.max_s = settings.max_s;
      options.fit_readings = settings.fit_readings;
      options.min_fit_readings = settings.min_fit_readings;
      return std::make_unique<PredictiveDetector>(options);
    }
  }
  throw std::invalid_argument("settle method is not one of fixed, window, predictive");
}

}  // namespace zout::analysis
