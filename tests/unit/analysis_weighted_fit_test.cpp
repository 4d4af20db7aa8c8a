// Unit tests for daemon/analysis/weighted_fit.h: exact recovery, covariance conventions,
// standard errors at a point, and the errors on malformed input.

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "daemon/analysis/weighted_fit.h"

using namespace zout::analysis;

TEST_CASE("fit_polynomial recovers an exact quadratic in microamp units", "[analysis]") {
  // V = 12 − 25e3·I + 4e7·I² over 0..300 µA: badly scaled powers, exact data.
  std::vector<double> x, y, w;
  for (int k = 0; k <= 12; ++k) {
    const double i = 25e-6 * k;
    x.push_back(i);
    y.push_back(12.0 - 25e3 * i + 4e7 * i * i);
    w.push_back(1.0 + k);
  }
  const PolynomialFit fit = fit_polynomial(x, y, w, 2, WeightKind::relative);
  const Eigen::VectorXd c = fit.coefficients();
  CHECK(c[0] == Approx(12.0).epsilon(1e-12));
  CHECK(c[1] == Approx(-25e3).epsilon(1e-10));
  CHECK(c[2] == Approx(4e7).epsilon(1e-8));
  CHECK(fit.slope(100e-6) == Approx(-25e3 + 2 * 4e7 * 100e-6).epsilon(1e-10));
  CHECK(fit.value(100e-6) == Approx(12.0 - 2.5 + 0.4).epsilon(1e-12));
  CHECK(fit.degrees_of_freedom() == 10);
  CHECK(fit.chi_squared() < 1e-20);
}

TEST_CASE("relative covariance is the absolute one scaled by chi2/(N-p)", "[analysis]") {
  const std::vector<double> x{0, 1, 2, 3, 4, 5, 6};
  const std::vector<double> y{1.1, 2.9, 5.2, 6.8, 9.3, 10.9, 13.2};
  const std::vector<double> w{1, 2, 1, 3, 1, 2, 1};
  const PolynomialFit a = fit_line(x, y, w, WeightKind::absolute);
  const PolynomialFit r = fit_line(x, y, w, WeightKind::relative);
  REQUIRE(a.covariance());
  REQUIRE(r.covariance());
  const double scale = a.chi_squared() / 5.0;
  for (int i = 0; i < 2; ++i) {
    for (int j = 0; j < 2; ++j) {
      CHECK((*r.covariance())(i, j) == Approx((*a.covariance())(i, j) * scale).epsilon(1e-12));
    }
  }
  // The same coefficients either way.
  CHECK(a.coefficients()[1] == Approx(r.coefficients()[1]).epsilon(1e-14));
}

TEST_CASE("standard errors at a point follow the covariance in the caller's x", "[analysis]") {
  const std::vector<double> x{10, 11, 12, 13, 14, 15};
  const std::vector<double> y{3.0, 3.9, 5.2, 5.8, 7.1, 8.0};
  const std::vector<double> w(6, 1.0);
  const PolynomialFit fit = fit_polynomial(x, y, w, 2, WeightKind::relative);
  const Eigen::MatrixXd cov = *fit.covariance();
  const double at = 12.5;
  const Eigen::Vector3d g(1.0, at, at * at);
  const Eigen::Vector3d gs(0.0, 1.0, 2.0 * at);
  CHECK(*fit.value_standard_error(at) == Approx(std::sqrt(g.dot(cov * g))).epsilon(1e-8));
  CHECK(*fit.slope_standard_error(at) == Approx(std::sqrt(gs.dot(cov * gs))).epsilon(1e-8));
  const Eigen::VectorXd c = fit.coefficients();
  CHECK(fit.slope(at) == Approx(c[1] + 2 * c[2] * at).epsilon(1e-10));
}

TEST_CASE("an exact fit with relative weights has no covariance", "[analysis]") {
  const std::vector<double> x{0, 1};
  const std::vector<double> y{1, 3};
  const std::vector<double> w{1, 1};
  const PolynomialFit fit = fit_line(x, y, w, WeightKind::relative);
  CHECK_FALSE(fit.covariance().has_value());
  CHECK_FALSE(fit.slope_standard_error(0.5).has_value());
  CHECK(fit.slope(0.0) == Approx(2.0));
  // With absolute weights the covariance exists: (XᵀWX)⁻¹ of two unit-weight points.
  const PolynomialFit abs_fit = fit_line(x, y, w, WeightKind::absolute);
  REQUIRE(abs_fit.covariance());
  CHECK((*abs_fit.covariance())(1, 1) == Approx(2.0));
}

TEST_CASE("fit_polynomial rejects malformed input by name", "[analysis]") {
  const std::vector<double> x{0, 1, 2, 3};
  const std::vector<double> y{0, 1, 4, 9};
  const std::vector<double> w{1, 1, 1, 1};
  const std::vector<double> short_y{0, 1, 4};
  CHECK_THROWS_WITH(fit_polynomial(x, short_y, w, 1, WeightKind::relative),
                    Catch::Contains("x has 4 values but y has 3"));
  const std::vector<double> nan_y{0, 1, std::numeric_limits<double>::quiet_NaN(), 9};
  CHECK_THROWS_WITH(fit_polynomial(x, nan_y, w, 1, WeightKind::relative),
                    Catch::Contains("y[2] is not finite"));
  const std::vector<double> zero_w{1, 0, 1, 1};
  CHECK_THROWS_WITH(fit_polynomial(x, y, zero_w, 1, WeightKind::relative),
                    Catch::Contains("weights[1] must be > 0"));
  const std::vector<double> same_x{1, 1, 2, 2};
  CHECK_THROWS_WITH(fit_polynomial(same_x, y, w, 2, WeightKind::relative),
                    Catch::Contains("at least 3 distinct x values, got 2"));
  CHECK_THROWS_AS(fit_polynomial(x, y, w, -1, WeightKind::relative), std::invalid_argument);
}

TEST_CASE("fit_linear_model solves a general basis and refuses a rank-deficient one", "[analysis]") {
  Eigen::MatrixXd design(5, 2);
  std::vector<double> y;
  for (int i = 0; i < 5; ++i) {
    design(i, 0) = std::sin(i);
    design(i, 1) = std::exp(0.3 * i);
    y.push_back(2.0 * std::sin(i) - 0.5 * std::exp(0.3 * i));
  }
  const std::vector<double> w(5, 1.0);
  const LinearModelFit fit = fit_linear_model(design, y, w, WeightKind::relative);
  CHECK(fit.coefficients[0] == Approx(2.0).epsilon(1e-12));
  CHECK(fit.coefficients[1] == Approx(-0.5).epsilon(1e-12));

  Eigen::MatrixXd collinear(5, 2);
  for (int i = 0; i < 5; ++i) {
    collinear(i, 0) = i;
    collinear(i, 1) = 2.0 * i;
  }
  CHECK_THROWS_WITH(fit_linear_model(collinear, y, w, WeightKind::relative),
                    Catch::Contains("rank-deficient"));
}

TEST_CASE("count_distinct counts exact values", "[analysis]") {
  const std::vector<double> x{3, 1, 3, 2, 1};
  CHECK(count_distinct(x) == 3);
  CHECK(count_distinct(std::vector<double>{}) == 0);
}
