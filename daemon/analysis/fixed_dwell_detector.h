#pragma once
// Fixed dwell: settled at the first reading taken at or after dwell_s; the value is that
// reading. A dwell longer than max_s gives up at max_s.

#include <optional>

#include "daemon/analysis/settling.h"

namespace zout::analysis {

class FixedDwellDetector final : public SettlingDetector {
 public:
  // dwell_s >= 0, max_s > 0, both finite (std::invalid_argument otherwise).
  FixedDwellDetector(double dwell_s, double max_s);

 private:
  std::optional<double> settled_value(double time_s, double volts) override;
  double dwell_s_;
};

}  // namespace zout::analysis
