#pragma once
// Output impedance, open-circuit voltage and chord impedance from a sweep's I–V points.
//
// A cascade's I–V curve bends sharply near zero current (the diodes), so the impedance is
// taken locally: a weighted least-squares polynomial around the operating current I_op over
// the points at the distinct currents nearest to it (all points at each, so repeated readings
// count), quadratic when the window holds >= 4 points at >= 3 distinct currents, a line
// otherwise; Z_out = −dV/dI at I_op.
//   Weights: tricube kernel w = (1 − (d/b)³)³ on the distance d = |I − I_op|, with bandwidth
//   b = bandwidth_factor × the largest d in the window (so every point in the window counts),
//   times 1/σ² when every point in the window carries volts_sigma.
//   Standard errors: the kernel makes the weights relative, so the covariance is scaled by the
//   residual variance χ²/(N − p) (WeightKind::relative). A window with N == p has no
//   standard error.
//
// Input points are checked with require_valid_points (std::invalid_argument); data that does
// not support a figure gives a Computed without value and the reason.

#include <cstddef>
#include <limits>
#include <optional>
#include <span>

#include "daemon/analysis/computed.h"
#include "daemon/analysis/iv_point.h"

namespace zout::analysis {

struct ImpedanceOptions {
  // Where to take Z_out; default: the smallest non-zero current among the points.
  std::optional<double> operating_amps;
  // Points above this current are never used by the local fits (plan: impedance.fit_max_amps).
  double fit_max_amps = std::numeric_limits<double>::infinity();
  // The local fit uses the points at this many distinct currents nearest the operating
  // current (>= 2; of two currents equally far, the lower first). Small windows keep the
  // quadratic's bias low where the curve bends.
  std::size_t window_currents = 4;
  // Kernel bandwidth relative to the farthest point of the window (> 1).
  double bandwidth_factor = 1.5;
  // Points with current_amps <= this are "zero-current" points for V_oc.
  double zero_current_amps = 0.0;
};

struct ImpedanceFit {
  double operating_amps = 0.0;
  Estimate z_out_ohms;      // −dV/dI at operating_amps
  Estimate volts;           // fitted V(operating_amps)
  int degree = 0;           // 2 quadratic, 1 linear
  std::size_t points_used = 0;
  double window_low_amps = 0.0;   // the currents spanned by the window
  double window_high_amps = 0.0;
};

// Z_out at the operating current by the local fit described above.
Computed<ImpedanceFit> output_impedance(std::span<const IvPoint> points,
                                        const ImpedanceOptions& options = {});

struct OpenCircuit {
  Estimate volts;
  // True: the mean of the zero-current points (weighted by 1/σ² when all carry σ; standard
  // error of that mean, or σ of the single point, or none). False: no zero-current point, so
  // the local fit around I = 0 evaluated there (an extrapolation from the lowest currents).
  bool from_zero_current_points = false;
  std::size_t points_used = 0;
};

// V_oc: from the zero-current points, else from the local fit at I = 0.
Computed<OpenCircuit> open_circuit_volts(std::span<const IvPoint> points,
                                         const ImpedanceOptions& options = {});

// Chord impedance to the rated load: (V_oc − V(I_r))/I_r, with V(I_r) and I_r the means over
// the points at the current nearest rated_amps; missing when no point lies within 5 % of
// rated_amps. The standard error propagates those of V_oc and of the points' mean when known.
Computed<Estimate> chord_impedance_ohms(const Estimate& open_circuit_volts,
                                        std::span<const IvPoint> points, double rated_amps);

}  // namespace zout::analysis
