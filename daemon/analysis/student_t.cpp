#include "student_t.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

namespace {

// The continued fraction of A&S 26.5.8 (valid and fast for x < (a+1)/(a+b+2)), modified Lentz.
double beta_fraction(double a, double b, double x) {
  constexpr double tiny = 1e-300;
  constexpr double eps = std::numeric_limits<double>::epsilon();
  double c = 1.0;
  double d = 1.0 - (a + b) * x / (a + 1.0);
  if (std::abs(d) < tiny) d = tiny;
  d = 1.0 / d;
  double f = d;
  for (int m = 1; m <= 10000; ++m) {
    const double dm = static_cast<double>(m);
    // Even step: d_{2m} = m(b − m)x / ((a + 2m − 1)(a + 2m)).
    double numerator = dm * (b - dm) * x / ((a + 2.0 * dm - 1.0) * (a + 2.0 * dm));
    d = 1.0 + numerator * d;
    if (std::abs(d) < tiny) d = tiny;
    c = 1.0 + numerator / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    f *= d * c;
    // Odd step: d_{2m+1} = −(a + m)(a + b + m)x / ((a + 2m)(a + 2m + 1)).
    numerator = -(a + dm) * (a + b + dm) * x / ((a + 2.0 * dm) * (a + 2.0 * dm + 1.0));
    d = 1.0 + numerator * d;
    if (std::abs(d) < tiny) d = tiny;
    c = 1.0 + numerator / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    const double delta = d * c;
    f *= delta;
    if (std::abs(delta - 1.0) < eps) return f;
  }
  return f;  // not reached for the arguments this library uses
}

}  // namespace

double regularized_incomplete_beta(double a, double b, double x) {
  require_positive(a, "incomplete beta a");
  require_positive(b, "incomplete beta b");
  require_finite(x, "incomplete beta x");
  if (x < 0.0 || x > 1.0) {
    throw std::invalid_argument("incomplete beta x must be in [0, 1] (" + format_number(x) + ")");
  }
  if (x == 0.0) return 0.0;
  if (x == 1.0) return 1.0;
  // x^a (1−x)^b / B(a, b), in logarithms.
  const double log_front = std::lgamma(a + b) - std::lgamma(a) - std::lgamma(b) +
                           a * std::log(x) + b * std::log1p(-x);
  const double front = std::exp(log_front);
  if (x < (a + 1.0) / (a + b + 2.0)) return front * beta_fraction(a, b, x) / a;
  return 1.0 - front * beta_fraction(b, a, 1.0 - x) / b;
}

double student_t_cdf(double t, double degrees_of_freedom) {
  require_finite(t, "t");
  require_positive(degrees_of_freedom, "degrees_of_freedom");
  const double nu = degrees_of_freedom;
  const double tail = 0.5 * regularized_incomplete_beta(0.5 * nu, 0.5, nu / (nu + t * t));
  return t >= 0.0 ? 1.0 - tail : tail;
}

double student_t_quantile(double p, double degrees_of_freedom) {
  require_finite(p, "p");
  require_positive(degrees_of_freedom, "degrees_of_freedom");
  if (!(p > 0.0 && p < 1.0)) {
    throw std::invalid_argument("p must be in (0, 1) (" + format_number(p) + ")");
  }
  if (p == 0.5) return 0.0;
  const double nu = degrees_of_freedom;
  const double target = 2.0 * std::min(p, 1.0 - p);  // = I_x(ν/2, ½), increasing in x
  double lo = 0.0;
  double hi = 1.0;
  for (int i = 0; i < 1100 && hi > lo; ++i) {
    const double mid = 0.5 * (lo + hi);
    if (mid <= lo || mid >= hi) break;
    if (regularized_incomplete_beta(0.5 * nu, 0.5, mid) < target) {
      lo = mid;
    } else {
      hi = mid;
    }
  }
  const double x = 0.5 * (lo + hi);
  const double t = std::sqrt(nu * (1.0 - x) / x);
  return p > 0.5 ? t : -t;
}

}  // namespace zout::analysis
