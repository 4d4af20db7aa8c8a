#pragma once
// Predictive settling: fits the exponential approach V(t) = V∞ + A·e^(−t/τ) to the recent
// readings (exponential_fit.h) and stops as soon as the fit says the output is within the
// tolerance of V∞, rather than after an extra confirmation window. The value is V∞.
//
// Rule, checked at each reading once min_fit_readings are in hand, on a fit over the latest
// fit_readings readings (by default every reading since the step, up to 100):
//   * τ is determined (the fit is not at its slow end, where the readings are a straight
//     drift and V∞ an open-ended extrapolation);
//   * residuals: the readings scatter about the fit by no more than the tolerance
//     (rms residual <= tolerance_volts), so the exponential describes them;
//   * |A·e^(−(t−t₀)/τ)| + z·SE(V∞) <= tolerance_volts: the model's deviation now, plus z
//     standard errors of the final value, is inside the band.
// Risk of stopping before the output enters the band: it comes from τ being misjudged, and
// that depends on how many time constants the fit window spans. Measured on synthetic
// approaches with Gaussian noise of a tenth of the tolerance (tests/reference/
// analysis_settling_reference_test.cpp): with the window spanning the whole approach (the
// default) no stop came before entry, and stops came within three reading intervals after
// it; with a window of only ~1 τ (10 readings at τ/10) a fifth of the runs stopped early, by
// up to about one τ, with V∞ off by up to ~1.2 × the tolerance. Keep fit_readings × reading
// interval above ~3 τ. Noise-free, it stops at
// the first reading inside the band.

#include <cstddef>
#include <deque>
#include <optional>

#include "daemon/analysis/settling.h"

namespace zout::analysis {

class PredictiveDetector final : public SettlingDetector {
 public:
  struct Options {
    double tolerance_volts = 0.01;  // > 0
    double max_s = 30.0;            // > 0
    std::size_t fit_readings = 100;  // >= min_fit_readings
    std::size_t min_fit_readings = 5;  // >= 4 (three parameters and one degree of freedom)
    double confidence_z = 2.0;      // >= 0
  };

  explicit PredictiveDetector(const Options& options);

 private:
  std::optional<double> settled_value(double time_s, double volts) override;
  double give_up_value(double latest_volts) const override;

  Options options_;
  std::deque<double> times_;
  std::deque<double> volts_;
  std::optional<double> last_final_volts_;
};

}  // namespace zout::analysis
