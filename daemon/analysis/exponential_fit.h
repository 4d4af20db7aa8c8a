#pragma once
// Least-squares fit of an exponential approach V(t) = V∞ + A·e^(−(t − t₀)/τ) to readings
// (t₀ = the first reading's time, so A is the deviation from V∞ at that reading).
//
// Method: variable projection (Golub & Pereyra 1973): for a fixed rate 1/τ the model is
// linear in V∞ and A, so the sum of squares is minimised over ln(1/τ) alone — a grid from
// τ = 100·span (an almost straight drift) to τ = smallest spacing/50 (a step before the
// second reading), then golden-section search — and the result polished by
// Levenberg–Marquardt on all three parameters.
// Covariance: unit weights, scaled by the residual variance χ²/(N − 3). When the optimum sits
// at either end of the τ range the data does not determine τ; the fit says which end, and the
// standard errors of V∞ and A are then those with τ held fixed.

#include <cstddef>
#include <span>

#include "daemon/analysis/computed.h"

namespace zout::analysis {

struct ExponentialApproach {
  enum class Bound {
    none,     // τ determined by the data
    slowest,  // τ at its upper end: the readings are a straight drift; V∞ is far extrapolation
    fastest,  // τ at its lower end: the readings were flat from the second one on
  };
  Estimate final_volts;      // V∞
  Estimate amplitude_volts;  // A, the deviation at reference_time_s
  Estimate time_constant_s;  // τ (no standard error at a bound)
  double reference_time_s = 0.0;
  double rms_residual_volts = 0.0;  // sqrt(χ²/N)
  std::size_t points = 0;
  Bound bound = Bound::none;

  // A·e^(−(t − t₀)/τ): the model's deviation from V∞ at time t.
  double deviation_volts(double time_s) const;
};

// times_s strictly increasing and finite; volts finite; same length; at least 4 readings.
// Throws std::invalid_argument otherwise (the message names the argument).
ExponentialApproach fit_exponential_approach(std::span<const double> times_s,
                                             std::span<const double> volts);

}  // namespace zout::analysis
