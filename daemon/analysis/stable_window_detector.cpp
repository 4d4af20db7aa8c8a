#include "stable_window_detector.h"

#include <algorithm>
#include <stdexcept>
#include <string>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

StableWindowDetector::StableWindowDetector(std::size_t window_readings, double tolerance_volts,
                                           double max_s)
    : SettlingDetector(max_s), window_readings_(window_readings), tolerance_volts_(tolerance_volts) {
  if (window_readings < 2) {
    throw std::invalid_argument("settle window_readings must be >= 2 (" +
                                std::to_string(window_readings) + ")");
  }
  require_positive(tolerance_volts, "settle tolerance_volts");
}

std::optional<double> StableWindowDetector::settled_value(double /*time_s*/, double volts) {
  window_.push_back(volts);
  if (window_.size() > window_readings_) window_.pop_front();
  if (window_.size() < window_readings_) return std::nullopt;
  const auto [lo, hi] = std::minmax_element(window_.begin(), window_.end());
  if (*hi - *lo > tolerance_volts_) return std::nullopt;
  double sum = 0.0;
  for (double v : window_) sum += v;
  return sum / static_cast<double>(window_.size());
}

double StableWindowDetector::give_up_value(double latest_volts) const {
  return latest_volts;
}

}  // namespace zout::analysis
