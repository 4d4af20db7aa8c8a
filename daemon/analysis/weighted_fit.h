#pragma once
// Weighted linear least squares of a polynomial y = c0 + c1·x + … + cd·x^d, with the
// parameter covariance. The fit minimises χ² = Σ w_i (y_i − f(x_i))².
//
// Numerics: the fit is solved by column-pivoting Householder QR on the centred and scaled
// variable u = (x − centre)/scale, which keeps the design well conditioned when x is a
// current of some 1e-4 A and x² of 1e-8 A²; coefficients and covariance are mapped back to x
// exactly (a linear change of basis). Values and slopes at a point are evaluated in u.

#include <Eigen/Dense>

#include <cstddef>
#include <optional>
#include <span>

namespace zout::analysis {

enum class WeightKind {
  // w_i = 1/σ_i² with σ_i the known standard uncertainty of y_i. Covariance = (XᵀWX)⁻¹,
  // not scaled by the residuals. This is the convention of GSL's gsl_fit_wlinear and
  // gsl_multifit_wlinear.
  absolute,
  // Weights are only relative (unit weights, kernel weights, σ known up to a factor).
  // Covariance = (XᵀWX)⁻¹ · χ²/(N − p): the common variance is estimated from the residuals.
  // Needs N > p; with N == p the fit is exact and there is no covariance.
  relative,
};

// A general weighted linear model y ≈ X·c (the columns of X are the basis functions at
// each point), solved by column-pivoting Householder QR.
struct LinearModelFit {
  Eigen::VectorXd coefficients;
  // Under the weight convention; empty when relative with N == p.
  std::optional<Eigen::MatrixXd> covariance;
  double chi_squared = 0.0;  // Σ w_i r_i²
  std::size_t point_count = 0;
};

// design: N × p, y and weights: length N, finite, weights > 0. Throws std::invalid_argument
// when the input is malformed, N < p, or the design is rank-deficient (the message says so).
LinearModelFit fit_linear_model(const Eigen::MatrixXd& design, std::span<const double> y,
                                std::span<const double> weights, WeightKind kind);

class PolynomialFit {
 public:
  int degree() const { return static_cast<int>(coefficients_u_.size()) - 1; }
  std::size_t point_count() const { return point_count_; }
  // N − p.
  std::size_t degrees_of_freedom() const { return point_count_ - coefficients_u_.size(); }
  // Σ w_i r_i².
  double chi_squared() const { return chi_squared_; }
  WeightKind weight_kind() const { return kind_; }

  // Coefficients c0..cd of the polynomial in the caller's x.
  Eigen::VectorXd coefficients() const;
  // Their covariance, under the weight convention; empty when relative with N == p.
  std::optional<Eigen::MatrixXd> covariance() const;

  // f(x) and f'(x), and their standard errors (empty when there is no covariance).
  double value(double x) const;
  double slope(double x) const;
  std::optional<double> value_standard_error(double x) const;
  std::optional<double> slope_standard_error(double x) const;

 private:
  friend PolynomialFit fit_polynomial(std::span<const double>, std::span<const double>,
                                      std::span<const double>, int, WeightKind);
  Eigen::VectorXd basis(double x) const;        // [1, u, u², …]
  Eigen::VectorXd basis_slope(double x) const;  // d/dx of the basis

  double centre_ = 0.0;
  double scale_ = 1.0;
  Eigen::VectorXd coefficients_u_;
  std::optional<Eigen::MatrixXd> covariance_u_;
  double chi_squared_ = 0.0;
  std::size_t point_count_ = 0;
  WeightKind kind_ = WeightKind::relative;
};

// Fits a polynomial of the given degree (>= 0). x, y, weights: same length, finite,
// weights > 0. Throws std::invalid_argument when the input is malformed or when there are
// fewer distinct x values than degree + 1 (the polynomial is then not determined).
PolynomialFit fit_polynomial(std::span<const double> x, std::span<const double> y,
                             std::span<const double> weights, int degree, WeightKind kind);

// A straight line y = c0 + c1·x (fit_polynomial with degree 1).
PolynomialFit fit_line(std::span<const double> x, std::span<const double> y,
                       std::span<const double> weights, WeightKind kind);

// Ordinary (unweighted) least-squares line: unit weights, covariance scaled by the residual
// variance (WeightKind::relative).
PolynomialFit fit_line_unweighted(std::span<const double> x, std::span<const double> y);

// The number of distinct values in x (exact comparison).
std::size_t count_distinct(std::span<const double> x);

}  // namespace zout::analysis
