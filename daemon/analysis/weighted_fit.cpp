#include "weighted_fit.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>
#include <vector>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

namespace {

// Binomial coefficient for small arguments (degree is small).
double binomial(int n, int k) {
  double result = 1.0;
  for (int i = 1; i <= k; ++i) result = result * (n - k + i) / i;
  return result;
}

// c_x = T · c_u with T[j][k] = C(k, j) · (−centre)^(k−j) / scale^k for j <= k, because
// Σ_k b_k ((x − centre)/scale)^k expands into powers of x.
Eigen::MatrixXd basis_change(Eigen::Index p, double centre, double scale) {
  Eigen::MatrixXd t = Eigen::MatrixXd::Zero(p, p);
  for (Eigen::Index k = 0; k < p; ++k) {
    const double inv_scale_k = std::pow(scale, -static_cast<double>(k));
    for (Eigen::Index j = 0; j <= k; ++j) {
      t(j, k) = binomial(static_cast<int>(k), static_cast<int>(j)) *
                std::pow(-centre, static_cast<double>(k - j)) * inv_scale_k;
    }
  }
  return t;
}

}  // namespace

std::size_t count_distinct(std::span<const double> x) {
  std::vector<double> sorted(x.begin(), x.end());
  std::sort(sorted.begin(), sorted.end());
  return static_cast<std::size_t>(std::unique(sorted.begin(), sorted.end()) - sorted.begin());
}

Eigen::VectorXd PolynomialFit::basis(double x) const {
  const double u = (x - centre_) / scale_;
  Eigen::VectorXd b(coefficients_u_.size());
  double power = 1.0;
  for (Eigen::Index k = 0; k < b.size(); ++k) {
    b[k] = power;
    power *= u;
  }
  return b;
}

Eigen::VectorXd PolynomialFit::basis_slope(double x) const {
  const double u = (x - centre_) / scale_;
  Eigen::VectorXd b = Eigen::VectorXd::Zero(coefficients_u_.size());
  double power = 1.0;  // u^(k-1)
  for (Eigen::Index k = 1; k < b.size(); ++k) {
    b[k] = static_cast<double>(k) * power / scale_;
    power *= u;
  }
  return b;
}

double PolynomialFit::value(double x) const { return basis(x).dot(coefficients_u_); }

double PolynomialFit::slope(double x) const { return basis_slope(x).dot(coefficients_u_); }

std::optional<double> PolynomialFit::value_standard_error(double x) const {
  if (!covariance_u_) return std::nullopt;
  const Eigen::VectorXd b = basis(x);
  return std::sqrt(std::max(0.0, b.dot(*covariance_u_ * b)));
}

std::optional<double> PolynomialFit::slope_standard_error(double x) const {
  if (!covariance_u_) return std::nullopt;
  const Eigen::VectorXd b = basis_slope(x);
  return std::sqrt(std::max(0.0, b.dot(*covariance_u_ * b)));
}

Eigen::VectorXd PolynomialFit::coefficients() const {
  return basis_change(coefficients_u_.size(), centre_, scale_) * coefficients_u_;
}

std::optional<Eigen::MatrixXd> PolynomialFit::covariance() const {
  if (!covariance_u_) return std::nullopt;
  const Eigen::MatrixXd t = basis_change(coefficients_u_.size(), centre_, scale_);
  return Eigen::MatrixXd(t * *covariance_u_ * t.transpose());
}

LinearModelFit fit_linear_model(const Eigen::MatrixXd& design, std::span<const double> y,
                                std::span<const double> weights, WeightKind kind) {
  const auto rows = static_cast<std::size_t>(design.rows());
  require_same_size(rows, y.size(), "fit_linear_model: design rows", "y");
  require_same_size(rows, weights.size(), "fit_linear_model: design rows", "weights");
  if (!design.allFinite()) {
    throw std::invalid_argument("fit_linear_model: the design matrix has non-finite entries");
  }
  require_all_finite(y, "fit_linear_model: y");
  for (std::size_t i = 0; i < weights.size(); ++i) {
    require_positive(weights[i], "fit_linear_model: weights[" + std::to_string(i) + "]");
  }
  const Eigen::Index n = design.rows();
  const Eigen::Index p = design.cols();
  if (p < 1 || n < p) {
    throw std::invalid_argument("fit_linear_model: " + std::to_string(p) +
                                " parameters need at least as many points, got " +
                                std::to_string(n));
  }

  Eigen::MatrixXd a(n, p);
  Eigen::VectorXd b(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double sw = std::sqrt(weights[static_cast<std::size_t>(i)]);
    a.row(i) = sw * design.row(i);
    b[i] = sw * y[static_cast<std::size_t>(i)];
  }
  const Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(a);
  if (qr.rank() < p) {
    throw std::invalid_argument("fit_linear_model: the design is rank-deficient (rank " +
                                std::to_string(qr.rank()) + " < " + std::to_string(p) + ")");
  }
  LinearModelFit fit;
  fit.point_count = rows;
  fit.coefficients = qr.solve(b);
  fit.chi_squared = (a * fit.coefficients - b).squaredNorm();

  // (AᵀA)⁻¹ = P R⁻¹ R⁻ᵀ Pᵀ with A P = Q R.
  const Eigen::MatrixXd r = qr.matrixR().topLeftCorner(p, p).template triangularView<Eigen::Upper>();
  const Eigen::MatrixXd r_inv =
      r.template triangularView<Eigen::Upper>().solve(Eigen::MatrixXd::Identity(p, p));
  const Eigen::MatrixXd unscaled =
      qr.colsPermutation() * (r_inv * r_inv.transpose()) * qr.colsPermutation().transpose();
  if (kind == WeightKind::absolute) {
    fit.covariance = unscaled;
  } else if (n > p) {
    fit.covariance = unscaled * (fit.chi_squared / static_cast<double>(n - p));
  }
  return fit;
}

PolynomialFit fit_polynomial(std::span<const double> x, std::span<const double> y,
                             std::span<const double> weights, int degree, WeightKind kind) {
  require_same_size(x.size(), y.size(), "fit_polynomial: x", "y");
  require_same_size(x.size(), weights.size(), "fit_polynomial: x", "weights");
  require_all_finite(x, "fit_polynomial: x");
  require_all_finite(y, "fit_polynomial: y");
  for (std::size_t i = 0; i < weights.size(); ++i) {
    require_positive(weights[i], "fit_polynomial: weights[" + std::to_string(i) + "]");
  }
  if (degree < 0) {
    throw std::invalid_argument("fit_polynomial: degree must be >= 0 (" +
                                std::to_string(degree) + ")");
  }
  const auto p = static_cast<std::size_t>(degree) + 1;
  const std::size_t distinct = count_distinct(x);
  if (distinct < p) {
    throw std::invalid_argument("fit_polynomial: a degree-" + std::to_string(degree) +
                                " polynomial needs at least " + std::to_string(p) +
                                " distinct x values, got " + std::to_string(distinct));
  }

  PolynomialFit fit;
  fit.kind_ = kind;
  fit.point_count_ = x.size();
  const auto [lo, hi] = std::minmax_element(x.begin(), x.end());
  fit.centre_ = 0.5 * (*lo + *hi);
  fit.scale_ = (*hi > *lo) ? 0.5 * (*hi - *lo) : 1.0;

  const auto n = static_cast<Eigen::Index>(x.size());
  Eigen::MatrixXd design(n, static_cast<Eigen::Index>(p));
  for (Eigen::Index i = 0; i < n; ++i) {
    const double u = (x[static_cast<std::size_t>(i)] - fit.centre_) / fit.scale_;
    double power = 1.0;
    for (Eigen::Index k = 0; k < design.cols(); ++k) {
      design(i, k) = power;
      power *= u;
    }
  }
  LinearModelFit linear = fit_linear_model(design, y, weights, kind);
  fit.coefficients_u_ = std::move(linear.coefficients);
  fit.covariance_u_ = std::move(linear.covariance);
  fit.chi_squared_ = linear.chi_squared;
  return fit;
}

PolynomialFit fit_line(std::span<const double> x, std::span<const double> y,
                       std::span<const double> weights, WeightKind kind) {
  return fit_polynomial(x, y, weights, 1, kind);
}

PolynomialFit fit_line_unweighted(std::span<const double> x, std::span<const double> y) {
  const std::vector<double> unit(x.size(), 1.0);
  return fit_polynomial(x, y, unit, 1, WeightKind::relative);
}

}  // namespace zout::analysis
