#pragma once
// The linear region of the I–V curve. Past the diode knee the cascade's output falls
// linearly with load current; that slope is the capacitive source resistance of the
// Cockcroft–Walton model (cascade_model.h), R = −dV/dI, found here by a weighted straight
// line over the higher-current points.
//   Points used: current >= min_amps; default: the upper half of the distinct non-zero
//   currents (at least the two highest).
//   Weights: 1/σ² (WeightKind::absolute) when every point used carries volts_sigma, else unit
//   weights with the covariance scaled by the residual variance (WeightKind::relative).

#include <cstddef>
#include <optional>
#include <span>

#include "daemon/analysis/computed.h"
#include "daemon/analysis/iv_point.h"

namespace zout::analysis {

struct LinearRegionOptions {
  std::optional<double> min_amps;  // default: see above
};

struct LinearRegionFit {
  Estimate source_ohms;        // −slope
  Estimate intercept_volts;    // the line's value at 0 A (not V_oc: the curve bends below)
  double from_amps = 0.0;      // lowest and highest current used
  double to_amps = 0.0;
  std::size_t points_used = 0;
};

// Throws std::invalid_argument for invalid points (require_valid_points) or a negative or
// non-finite min_amps; missing when fewer than 2 distinct currents qualify.
Computed<LinearRegionFit> linear_region_fit(std::span<const IvPoint> points,
                                            const LinearRegionOptions& options = {});

}  // namespace zout::analysis
