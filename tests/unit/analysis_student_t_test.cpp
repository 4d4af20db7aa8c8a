// Unit tests for daemon/analysis/student_t.h against closed forms: ν = 1 (Cauchy) and ν = 2
// have elementary quantiles, and I_x(a, 1) = x^a, I_x(1, b) = 1 − (1 − x)^b.

#include <catch2/catch.hpp>

#include <cmath>
#include <stdexcept>

#include "daemon/analysis/student_t.h"

using namespace zout::analysis;

TEST_CASE("incomplete beta closed forms", "[analysis]") {
  for (double x : {0.01, 0.2, 0.5, 0.7, 0.99}) {
    CHECK(regularized_incomplete_beta(2.5, 1.0, x) == Approx(std::pow(x, 2.5)).epsilon(1e-12));
    CHECK(regularized_incomplete_beta(1.0, 3.0, x) == Approx(1.0 - std::pow(1.0 - x, 3.0)).epsilon(1e-12));
  }
  CHECK(regularized_incomplete_beta(2.0, 3.0, 0.0) == 0.0);
  CHECK(regularized_incomplete_beta(2.0, 3.0, 1.0) == 1.0);
  CHECK_THROWS_WITH(regularized_incomplete_beta(2.0, 3.0, 1.5), Catch::Contains("x must be in [0, 1]"));
  CHECK_THROWS_AS(regularized_incomplete_beta(0.0, 3.0, 0.5), std::invalid_argument);
}

TEST_CASE("t quantiles for 1 and 2 degrees of freedom", "[analysis]") {
  const double pi = std::acos(-1.0);
  for (double p : {0.6, 0.9, 0.975, 0.995}) {
    CHECK(student_t_quantile(p, 1.0) == Approx(std::tan(pi * (p - 0.5))).epsilon(1e-10));
    CHECK(student_t_quantile(p, 2.0) ==
          Approx((2.0 * p - 1.0) / std::sqrt(2.0 * p * (1.0 - p))).epsilon(1e-10));
  }
}

TEST_CASE("t quantile and cdf invert each other and are symmetric", "[analysis]") {
  for (double nu : {3.0, 7.5, 30.0, 200.0}) {
    for (double p : {0.05, 0.3, 0.8, 0.975}) {
      const double t = student_t_quantile(p, nu);
      CHECK(student_t_cdf(t, nu) == Approx(p).epsilon(1e-12));
      CHECK(student_t_quantile(1.0 - p, nu) == Approx(-t).epsilon(1e-10));
    }
  }
  CHECK(student_t_quantile(0.5, 4.0) == 0.0);
  CHECK_THROWS_WITH(student_t_quantile(1.0, 4.0), Catch::Contains("p must be in (0, 1)"));
  CHECK_THROWS_WITH(student_t_quantile(0.9, 0.0), Catch::Contains("degrees_of_freedom must be > 0"));
}
