#pragma once
// A small Levenberg–Marquardt solver for nonlinear least squares: minimise ‖r(p)‖² where
// r is the vector of (already weighted) residuals. Marquardt's scaling: the damping term is
// λ·diag(JᵀJ), so the method is invariant to the units of the parameters (Marquardt 1963,
// "An algorithm for least-squares estimation of nonlinear parameters"). The step is solved
// from the augmented system [J; √λ·D] δ = [−r; 0] by QR, not by forming JᵀJ.

#include <Eigen/Dense>

#include <functional>
#include <string>

namespace zout::analysis {

struct LeastSquaresModel {
  // Fills residuals r(p) (length N) and the Jacobian ∂r/∂p (N × P). May return false when p
  // is outside the model's domain (the step is then rejected and the damping raised).
  std::function<bool(const Eigen::VectorXd& parameters, Eigen::VectorXd& residuals,
                     Eigen::MatrixXd& jacobian)>
      evaluate;
};

struct LevenbergMarquardtOptions {
  int max_iterations = 200;
  // Converged when a successful step lowers ‖r‖² by less than this fraction and every
  // parameter moves by less than this fraction of its size (plus a tiny absolute floor).
  double relative_tolerance = 1e-12;
};

struct LevenbergMarquardtResult {
  Eigen::VectorXd parameters;
  double sum_of_squares = 0.0;  // ‖r‖² at parameters
  Eigen::MatrixXd jacobian;     // at parameters
  int iterations = 0;
  bool converged = false;
  std::string reason;  // why not converged; empty when converged
};

// Starts from `start`, which must be inside the model's domain (else the result is not
// converged with that reason).
LevenbergMarquardtResult levenberg_marquardt(const LeastSquaresModel& model,
                                             const Eigen::VectorXd& start,
                                             const LevenbergMarquardtOptions& options = {});

}  // namespace zout::analysis
