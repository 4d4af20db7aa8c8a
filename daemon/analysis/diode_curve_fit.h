#pragma once
// Whole-curve fit of a cascade's I–V points to a lumped diode term plus the cascade's
// resistance:
//     V(I) = V₀ − R·I − m·V_T·ln(1 + I/I₀),   V_T = k·T/q
// (the logarithm is the Shockley diode equation solved for the voltage, with I₀ standing for
// the lumped diodes' saturation current and m for their combined emission coefficient).
// Fitted by Levenberg–Marquardt (levenberg_marquardt.h) over (V₀, R, m·V_T, ln I₀), started
// from the best point of a grid over ln I₀ where the other three enter linearly.
//
// Identifiability. Each parameter is reported only when the data supports it:
//   * full model: converged, Jacobian well conditioned (reciprocal condition number of the
//     column-normalised Jacobian >= 1e-8), I₀ determined within a factor e (standard error
//     of ln I₀ <= 1), m > 2 standard errors above 0 → all four;
//   * otherwise, when the data has no currents near the knee (I₀ far below the lowest
//     non-zero current, so only V₀ − m·V_T·ln I₀ is determined), the reduced model
//     V = c − R·I − m·V_T·ln I over the non-zero currents → R and m; V₀ and I₀ not identifiable;
//   * otherwise (no bend at all) a straight line → V₀ and R; m and I₀ not identifiable.
// Weights: 1/σ² (absolute covariance) when every point carries volts_sigma, else unit weights
// with the covariance scaled by the residual variance χ²/(N − p).
//
// Throws std::invalid_argument for invalid points (require_valid_points) or a non-positive
// temperature; too few points give a missing result with the reason.

#include <cstddef>
#include <span>
#include <string>

#include "daemon/analysis/computed.h"
#include "daemon/analysis/iv_point.h"

namespace zout::analysis {

// k·T/q with the exact SI 2019 values of k and q.
double thermal_volts(double temperature_kelvin);

struct DiodeCurveOptions {
  double temperature_kelvin = 298.15;  // for V_T
  int max_iterations = 200;
};

enum class DiodeCurveModel {
  full,      // all four parameters
  no_knee,   // V = c − R·I − m·V_T·ln I
  straight,  // V = V₀ − R·I
};

struct DiodeCurveFit {
  DiodeCurveModel model = DiodeCurveModel::full;
  Computed<Estimate> v0_volts = Computed<Estimate>::missing("not fitted");
  Computed<Estimate> series_ohms = Computed<Estimate>::missing("not fitted");     // R
  Computed<Estimate> emission_coefficient = Computed<Estimate>::missing("not fitted");  // m
  Computed<Estimate> knee_amps = Computed<Estimate>::missing("not fitted");       // I₀
  double thermal_volts = 0.0;
  double rms_residual_volts = 0.0;  // sqrt(Σ r²/N), unweighted, of the model used
  std::size_t points_used = 0;
  int iterations = 0;  // of Levenberg–Marquardt on the full model
  std::string note;    // why the full model was not used; empty when it was
};

// Needs at least 5 points and 4 distinct currents for the full model (the fallbacks need 4
// points and 3 distinct non-zero currents, or 3 points and 2 distinct currents).
Computed<DiodeCurveFit> fit_diode_curve(std::span<const IvPoint> points,
                                        const DiodeCurveOptions& options = {});

}  // namespace zout::analysis
