#pragma once
// Student's t distribution, computed rather than tabled.
//   regularized_incomplete_beta: I_x(a, b) by its continued fraction (Abramowitz & Stegun,
//   Handbook of Mathematical Functions, 26.5.8), evaluated with the modified Lentz method,
//   using I_x(a, b) = 1 − I_{1−x}(b, a) where the fraction converges slowly.
//   student_t_cdf: P(T <= t) = 1 − ½·I_{ν/(ν+t²)}(ν/2, ½) for t >= 0 (A&S 26.7.1 with 26.5.27),
//   symmetric for t < 0.
//   student_t_quantile: the t with P(T <= t) = p, by bisection on x = ν/(ν+t²) in
//   I_x(ν/2, ½) = 2·min(p, 1−p) — I_x is monotone in x, so the root is bracketed and found to
//   the last bit.
// Arguments out of range (a, b, ν <= 0; x outside [0, 1]; p outside (0, 1); non-finite)
// throw std::invalid_argument.

namespace zout::analysis {

double regularized_incomplete_beta(double a, double b, double x);
double student_t_cdf(double t, double degrees_of_freedom);
double student_t_quantile(double p, double degrees_of_freedom);

}  // namespace zout::analysis
