#include "fixed_dwell_detector.h"

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

FixedDwellDetector::FixedDwellDetector(double dwell_s, double max_s)
    : SettlingDetector(max_s), dwell_s_(dwell_s) {
  require_non_negative(dwell_s, "settle dwell_s");
}

std::optional<double> FixedDwellDetector::settled_value(double time_s, double volts) {
  if (time_s >= dwell_s_ && dwell_s_ <= max_s()) return volts;
  return std::nullopt;
}

}  // namespace zout::analysis
