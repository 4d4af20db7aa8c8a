#pragma once
// Stable window: settled when the latest k readings agree within the tolerance, i.e.
// max − min <= tolerance_volts; the value is their mean.
// On an exponential approach with time constant τ a window spanning W agrees within
// tolerance once the deviation at its first reading is about tolerance·e^(W/τ)/(e^(W/τ) − 1),
// so for W of a few τ it stops about W after the output enters the ±tolerance band of the
// final value; for W < τ·ln 2 it can stop before entry (the window is too short to see the
// trend). Pick k so the window spans several time constants.

#include <cstddef>
#include <deque>
#include <optional>

#include "daemon/analysis/settling.h"

namespace zout::analysis {

class StableWindowDetector final : public SettlingDetector {
 public:
  // window_readings >= 2; tolerance_volts > 0; max_s > 0 (std::invalid_argument otherwise).
  StableWindowDetector(std::size_t window_readings, double tolerance_volts, double max_s);

 private:
  std::optional<double> settled_value(double time_s, double volts) override;
  double give_up_value(double latest_volts) const override;

  std::size_t window_readings_;
  double tolerance_volts_;
  std::deque<double> window_;
};

}  // namespace zout::analysis
