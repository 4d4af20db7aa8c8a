#include "levenberg_marquardt.h"

#include <algorithm>
#include <cmath>

namespace zout::analysis {

LevenbergMarquardtResult levenberg_marquardt(const LeastSquaresModel& model,
                                             const Eigen::VectorXd& start,
                                             const LevenbergMarquardtOptions& options) {
  LevenbergMarquardtResult result;
  result.parameters = start;
  Eigen::VectorXd r;
  Eigen::MatrixXd j;
  if (!model.evaluate(start, r, j) || !r.allFinite() || !j.allFinite()) {
    result.reason = "the starting point is outside the model's domain";
    return result;
  }
  double ss = r.squaredNorm();
  const Eigen::Index n = r.size();
  const Eigen::Index p = start.size();
  double lambda = 1e-3;

  for (int iteration = 1; iteration <= options.max_iterations; ++iteration) {
    result.iterations = iteration;
    // Marquardt scaling: D = sqrt(diag(JᵀJ)), floored so a zero column cannot make it singular.
    Eigen::VectorXd d = j.colwise().norm().transpose();
    const double d_max = std::max(d.maxCoeff(), 1e-300);
    for (Eigen::Index k = 0; k < p; ++k) d[k] = std::max(d[k], 1e-12 * d_max);

    bool accepted = false;
    while (!accepted) {
      Eigen::MatrixXd a(n + p, p);
      a.topRows(n) = j;
      a.bottomRows(p) = (std::sqrt(lambda) * d).asDiagonal();
      Eigen::VectorXd b = Eigen::VectorXd::Zero(n + p);
      b.head(n) = -r;
      const Eigen::VectorXd step = a.colPivHouseholderQr().solve(b);
      const Eigen::VectorXd trial = result.parameters + step;

      Eigen::VectorXd r_trial;
      Eigen::MatrixXd j_trial;
      const bool ok = step.allFinite() && model.evaluate(trial, r_trial, j_trial) &&
                      r_trial.allFinite() && j_trial.allFinite();
      const double ss_trial = ok ? r_trial.squaredNorm() : HUGE_VAL;
      if (ok && ss_trial <= ss) {
        const double decrease = ss - ss_trial;
        bool small_step = true;
        for (Eigen::Index k = 0; k < p; ++k) {
          const double size = std::abs(result.parameters[k]) + 1e-300;
          if (std::abs(step[k]) > options.relative_tolerance * size) small_step = false;
        }
        result.parameters = trial;
        r = r_trial;
        j = j_trial;
        ss = ss_trial;
        lambda = std::max(lambda / 10.0, 1e-15);
        accepted = true;
        if (decrease <= options.relative_tolerance * ss || small_step) {
          result.converged = true;
          break;
        }
      } else {
        lambda *= 10.0;
        if (lambda > 1e16) {
          // No step, however short, lowers the sum of squares: a minimum to working precision.
          result.converged = true;
          break;
        }
      }
    }
    if (result.converged) break;
  }
  result.sum_of_squares = ss;
  result.jacobian = j;
  if (!result.converged) {
    result.reason = "no convergence in " + std::to_string(options.max_iterations) + " iterations";
  }
  return result;
}

}  // namespace zout::analysis
