// Reference checks of the analysis fits against GSL, the GNU Scientific Library (Debian
// libgsl-dev; test-only): gsl_fit_wlinear, gsl_fit_linear, gsl_multifit_wlinear,
// gsl_multifit_nlinear (trust-region Levenberg–Marquardt), gsl_sf_beta_inc and
// gsl_cdf_tdist_Pinv.
//
// Covariance conventions, matched explicitly:
//   gsl_fit_wlinear and gsl_multifit_wlinear return (XᵀWX)⁻¹, not scaled by the residuals —
//     our WeightKind::absolute; our WeightKind::relative is that times χ²/(N − p).
//   gsl_fit_linear (unweighted) scales by the residual variance — our fit_line_unweighted.
//   gsl_multifit_nlinear_covar returns (JᵀJ)⁻¹ of the weighted Jacobian — times χ²/(N − p)
//     for our relative weights.

#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <vector>

#include <gsl/gsl_blas.h>
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_fit.h>
#include <gsl/gsl_multifit.h>
#include <gsl/gsl_multifit_nlinear.h>
#include <gsl/gsl_sf_gamma.h>

#include "daemon/analysis/diode_curve_fit.h"
#include "daemon/analysis/exponential_fit.h"
#include "daemon/analysis/student_t.h"
#include "daemon/analysis/weighted_fit.h"

using namespace zout::analysis;

namespace {

constexpr double tight = 1e-9;  // relative agreement for the linear fits

// A noisy I–V-like data set: currents in amps, volts with scatter, varied weights.
struct Data {
  std::vector<double> x, y, w;
};

Data iv_data(unsigned seed) {
  Data d;
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, 0.01);
  std::uniform_real_distribution<double> weight(0.5, 4.0);
  for (int k = 0; k < 15; ++k) {
    const double i = 20e-6 * k;
    d.x.push_back(i);
    d.y.push_back(12.0 - 22e3 * i - 1.5e7 * i * i + 3e10 * i * i * i + noise(rng));
    d.w.push_back(weight(rng));
  }
  return d;
}

// GSL's weighted polynomial fit of the given degree: coefficients, covariance, chi².
struct GslPoly {
  std::vector<double> c;
  std::vector<std::vector<double>> cov;
  double chisq = 0.0;
};

GslPoly gsl_poly(const Data& d, int degree) {
  const std::size_t n = d.x.size();
  const std::size_t p = static_cast<std::size_t>(degree) + 1;
  gsl_matrix* x = gsl_matrix_alloc(n, p);
  gsl_vector* y = gsl_vector_alloc(n);
  gsl_vector* w = gsl_vector_alloc(n);
  gsl_vector* c = gsl_vector_alloc(p);
  gsl_matrix* cov = gsl_matrix_alloc(p, p);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t k = 0; k < p; ++k) gsl_matrix_set(x, i, k, std::pow(d.x[i], static_cast<double>(k)));
    gsl_vector_set(y, i, d.y[i]);
    gsl_vector_set(w, i, d.w[i]);
  }
  GslPoly out;
  gsl_multifit_linear_workspace* work = gsl_multifit_linear_alloc(n, p);
  gsl_multifit_wlinear(x, w, y, c, cov, &out.chisq, work);
  for (std::size_t k = 0; k < p; ++k) {
    out.c.push_back(gsl_vector_get(c, k));
    out.cov.emplace_back();
    for (std::size_t j = 0; j < p; ++j) out.cov.back().push_back(gsl_matrix_get(cov, k, j));
  }
  gsl_multifit_linear_free(work);
  gsl_matrix_free(x);
  gsl_vector_free(y);
  gsl_vector_free(w);
  gsl_vector_free(c);
  gsl_matrix_free(cov);
  return out;
}

}  // namespace

TEST_CASE("weighted line agrees with gsl_fit_wlinear", "[analysis]") {
  // Source: GSL reference manual, "Linear regression with a constant term" (gsl_fit_wlinear).
  const Data d = iv_data(1);
  double c0, c1, cov00, cov01, cov11, chisq;
  gsl_fit_wlinear(d.x.data(), 1, d.w.data(), 1, d.y.data(), 1, d.x.size(), &c0, &c1, &cov00, &cov01,
                  &cov11, &chisq);

  const PolynomialFit abs_fit = fit_line(d.x, d.y, d.w, WeightKind::absolute);
  const Eigen::VectorXd c = abs_fit.coefficients();
  const Eigen::MatrixXd cov = *abs_fit.covariance();
  CHECK(c[0] == Approx(c0).epsilon(tight));
  CHECK(c[1] == Approx(c1).epsilon(tight));
  CHECK(cov(0, 0) == Approx(cov00).epsilon(tight));
  CHECK(cov(0, 1) == Approx(cov01).epsilon(tight));
  CHECK(cov(1, 1) == Approx(cov11).epsilon(tight));
  CHECK(abs_fit.chi_squared() == Approx(chisq).epsilon(tight));

  // Relative weights: GSL's covariance times chi²/(N − 2).
  const PolynomialFit rel_fit = fit_line(d.x, d.y, d.w, WeightKind::relative);
  const double scale = chisq / static_cast<double>(d.x.size() - 2);
  CHECK(std::sqrt((*rel_fit.covariance())(1, 1)) == Approx(std::sqrt(cov11 * scale)).epsilon(tight));
  CHECK(std::sqrt((*rel_fit.covariance())(0, 0)) == Approx(std::sqrt(cov00 * scale)).epsilon(tight));
}

TEST_CASE("ordinary least-squares line agrees with gsl_fit_linear", "[analysis]") {
  // Source: GSL reference manual, gsl_fit_linear (covariance from the scatter about the line).
  const Data d = iv_data(2);
  double c0, c1, cov00, cov01, cov11, sumsq;
  gsl_fit_linear(d.x.data(), 1, d.y.data(), 1, d.x.size(), &c0, &c1, &cov00, &cov01, &cov11, &sumsq);
  const PolynomialFit fit = fit_line_unweighted(d.x, d.y);
  CHECK(fit.coefficients()[0] == Approx(c0).epsilon(tight));
  CHECK(fit.coefficients()[1] == Approx(c1).epsilon(tight));
  CHECK((*fit.covariance())(1, 1) == Approx(cov11).epsilon(tight));
  CHECK((*fit.covariance())(0, 1) == Approx(cov01).epsilon(tight));
  CHECK(fit.chi_squared() == Approx(sumsq).epsilon(tight));
}

TEST_CASE("weighted polynomials agree with gsl_multifit_wlinear", "[analysis]") {
  // Source: GSL reference manual, "Multi-parameter regression" (gsl_multifit_wlinear).
  for (int degree : {2, 3}) {
    for (unsigned seed : {3u, 4u}) {
      const Data d = iv_data(seed);
      const GslPoly g = gsl_poly(d, degree);
      const PolynomialFit fit = fit_polynomial(d.x, d.y, d.w, degree, WeightKind::absolute);
      const Eigen::VectorXd c = fit.coefficients();
      const Eigen::MatrixXd cov = *fit.covariance();
      for (int k = 0; k <= degree; ++k) {
        CHECK(c[k] == Approx(g.c[static_cast<std::size_t>(k)]).epsilon(tight));
        CHECK(std::sqrt(cov(k, k)) == Approx(std::sqrt(g.cov[static_cast<std::size_t>(k)][static_cast<std::size_t>(k)])).epsilon(tight));
      }
      CHECK(cov(0, degree) == Approx(g.cov[0][static_cast<std::size_t>(degree)]).epsilon(1e-8));
      CHECK(fit.chi_squared() == Approx(g.chisq).epsilon(tight));

      const PolynomialFit rel = fit_polynomial(d.x, d.y, d.w, degree, WeightKind::relative);
      const double scale = g.chisq / static_cast<double>(d.x.size() - static_cast<std::size_t>(degree) - 1);
      CHECK(std::sqrt((*rel.covariance())(1, 1)) == Approx(std::sqrt(g.cov[1][1] * scale)).epsilon(tight));
    }
  }
}

namespace {

// The lumped-diode model for GSL: parameters (V0, R, a = m·V_T, u = ln I0), I in amps.
struct DiodeData {
  std::vector<double> i, v;
};

int diode_f(const gsl_vector* p, void* data, gsl_vector* f) {
  const auto* d = static_cast<const DiodeData*>(data);
  const double v0 = gsl_vector_get(p, 0), r = gsl_vector_get(p, 1), a = gsl_vector_get(p, 2);
  const double knee = std::exp(gsl_vector_get(p, 3));
  for (std::size_t k = 0; k < d->i.size(); ++k) {
    gsl_vector_set(f, k, v0 - r * d->i[k] - a * std::log1p(d->i[k] / knee) - d->v[k]);
  }
  return GSL_SUCCESS;
}

int diode_df(const gsl_vector* p, void* data, gsl_matrix* j) {
  const auto* d = static_cast<const DiodeData*>(data);
  const double a = gsl_vector_get(p, 2);
  const double knee = std::exp(gsl_vector_get(p, 3));
  for (std::size_t k = 0; k < d->i.size(); ++k) {
    gsl_matrix_set(j, k, 0, 1.0);
    gsl_matrix_set(j, k, 1, -d->i[k]);
    gsl_matrix_set(j, k, 2, -std::log1p(d->i[k] / knee));
    gsl_matrix_set(j, k, 3, a * d->i[k] / (d->i[k] + knee));
  }
  return GSL_SUCCESS;
}

struct ExpData {
  std::vector<double> s, v;
};

int exp_f(const gsl_vector* p, void* data, gsl_vector* f) {
  const auto* d = static_cast<const ExpData*>(data);
  for (std::size_t k = 0; k < d->s.size(); ++k) {
    const double g = std::exp(-gsl_vector_get(p, 2) * d->s[k]);
    gsl_vector_set(f, k, gsl_vector_get(p, 0) + gsl_vector_get(p, 1) * g - d->v[k]);
  }
  return GSL_SUCCESS;
}

int exp_df(const gsl_vector* p, void* data, gsl_matrix* j) {
  const auto* d = static_cast<const ExpData*>(data);
  for (std::size_t k = 0; k < d->s.size(); ++k) {
    const double g = std::exp(-gsl_vector_get(p, 2) * d->s[k]);
    gsl_matrix_set(j, k, 0, 1.0);
    gsl_matrix_set(j, k, 1, g);
    gsl_matrix_set(j, k, 2, -gsl_vector_get(p, 1) * d->s[k] * g);
  }
  return GSL_SUCCESS;
}

// Runs GSL's trust-region Levenberg–Marquardt from `start`; returns the parameters and
// their covariance scaled by χ²/(N − p) (unit weights, so relative).
struct GslNonlinear {
  std::vector<double> p;
  std::vector<double> se;
  int status = -1;
};

GslNonlinear gsl_nonlinear(gsl_multifit_nlinear_fdf fdf, const std::vector<double>& start) {
  gsl_set_error_handler_off();
  const std::size_t np = start.size();
  gsl_multifit_nlinear_parameters params = gsl_multifit_nlinear_default_parameters();
  gsl_multifit_nlinear_workspace* w = gsl_multifit_nlinear_alloc(gsl_multifit_nlinear_trust, &params, fdf.n, np);
  gsl_vector* x = gsl_vector_alloc(np);
  for (std::size_t k = 0; k < np; ++k) gsl_vector_set(x, k, start[k]);
  gsl_multifit_nlinear_init(x, &fdf, w);
  int info = 0;
  GslNonlinear out;
  out.status = gsl_multifit_nlinear_driver(500, 1e-14, 1e-14, 1e-14, nullptr, nullptr, &info, w);
  gsl_matrix* covar = gsl_matrix_alloc(np, np);
  gsl_multifit_nlinear_covar(gsl_multifit_nlinear_jac(w), 0.0, covar);
  double chisq = 0.0;
  gsl_blas_ddot(gsl_multifit_nlinear_residual(w), gsl_multifit_nlinear_residual(w), &chisq);
  const double scale = chisq / static_cast<double>(fdf.n - np);
  for (std::size_t k = 0; k < np; ++k) {
    out.p.push_back(gsl_vector_get(gsl_multifit_nlinear_position(w), k));
    out.se.push_back(std::sqrt(gsl_matrix_get(covar, k, k) * scale));
  }
  gsl_matrix_free(covar);
  gsl_vector_free(x);
  gsl_multifit_nlinear_free(w);
  return out;
}

}  // namespace

TEST_CASE("diode-curve fit agrees with GSL's nonlinear least squares", "[analysis]") {
  // Source: GSL reference manual, "Nonlinear Least-Squares Fitting" (gsl_multifit_nlinear,
  // trust-region Levenberg–Marquardt; covariance by gsl_multifit_nlinear_covar).
  DiodeData d;
  std::vector<IvPoint> points;
  std::mt19937 rng(5);
  std::normal_distribution<double> noise(0.0, 0.003);
  const double vt = thermal_volts(298.15);
  for (double ua : {0.0, 0.5, 1.0, 2.0, 4.0, 8.0, 15.0, 30.0, 60.0, 100.0, 150.0, 200.0, 250.0, 300.0}) {
    const double i = ua * 1e-6;
    const double v = 12.0 - 22e3 * i - 7.5 * vt * std::log1p(i / 1.5e-6) + noise(rng);
    d.i.push_back(i);
    d.v.push_back(v);
    points.push_back({i, v, 0.0});
  }
  const Computed<DiodeCurveFit> ours = fit_diode_curve(points);
  REQUIRE(ours);
  REQUIRE(ours->model == DiodeCurveModel::full);

  gsl_multifit_nlinear_fdf fdf{};
  fdf.f = diode_f;
  fdf.df = diode_df;
  fdf.n = d.i.size();
  fdf.p = 4;
  fdf.params = &d;
  const GslNonlinear g = gsl_nonlinear(fdf, {12.0, 22e3, 7.5 * vt, std::log(1.5e-6)});
  REQUIRE(g.status == GSL_SUCCESS);

  CHECK(ours->v0_volts->value == Approx(g.p[0]).epsilon(1e-7));
  CHECK(ours->series_ohms->value == Approx(g.p[1]).epsilon(1e-7));
  CHECK(ours->emission_coefficient->value * vt == Approx(g.p[2]).epsilon(1e-6));
  CHECK(ours->knee_amps->value == Approx(std::exp(g.p[3])).epsilon(1e-6));
  CHECK(*ours->v0_volts->standard_error == Approx(g.se[0]).epsilon(1e-4));
  CHECK(*ours->series_ohms->standard_error == Approx(g.se[1]).epsilon(1e-4));
  CHECK(*ours->emission_coefficient->standard_error * vt == Approx(g.se[2]).epsilon(1e-4));
  // I0 = e^u: SE(I0) = I0·SE(u) (first-order propagation).
  CHECK(*ours->knee_amps->standard_error == Approx(std::exp(g.p[3]) * g.se[3]).epsilon(1e-4));
}

TEST_CASE("exponential approach fit agrees with GSL's nonlinear least squares", "[analysis]") {
  // Source: as above; the model V∞ + A·e^(−λ·s), s = t − t0, τ = 1/λ.
  ExpData d;
  std::vector<double> t;
  std::mt19937 rng(9);
  std::normal_distribution<double> noise(0.0, 0.002);
  for (int k = 0; k < 15; ++k) {
    const double tk = 1.0 + 0.3 * k;
    t.push_back(tk);
    d.s.push_back(tk - 1.0);
    d.v.push_back(9.5 + 0.4 * std::exp(-(tk - 1.0) / 1.3) + noise(rng));
  }
  const ExponentialApproach ours = fit_exponential_approach(t, d.v);
  REQUIRE(ours.bound == ExponentialApproach::Bound::none);

  gsl_multifit_nlinear_fdf fdf{};
  fdf.f = exp_f;
  fdf.df = exp_df;
  fdf.n = d.s.size();
  fdf.p = 3;
  fdf.params = &d;
  const GslNonlinear g = gsl_nonlinear(fdf, {9.5, 0.4, 1.0 / 1.3});
  REQUIRE(g.status == GSL_SUCCESS);
  CHECK(ours.final_volts.value == Approx(g.p[0]).epsilon(1e-9));
  CHECK(ours.amplitude_volts.value == Approx(g.p[1]).epsilon(1e-7));
  CHECK(ours.time_constant_s.value == Approx(1.0 / g.p[2]).epsilon(1e-7));
  CHECK(*ours.final_volts.standard_error == Approx(g.se[0]).epsilon(1e-5));
  CHECK(*ours.amplitude_volts.standard_error == Approx(g.se[1]).epsilon(1e-5));
  CHECK(*ours.time_constant_s.standard_error == Approx(g.se[2] / (g.p[2] * g.p[2])).epsilon(1e-5));
}

TEST_CASE("incomplete beta and t quantiles agree with GSL", "[analysis]") {
  // Source: GSL reference manual, gsl_sf_beta_inc and gsl_cdf_tdist_Pinv.
  for (double a : {0.5, 1.5, 5.0, 50.0}) {
    for (double b : {0.5, 2.0, 10.0}) {
      for (double x : {0.001, 0.1, 0.5, 0.9, 0.999}) {
        CHECK(regularized_incomplete_beta(a, b, x) == Approx(gsl_sf_beta_inc(a, b, x)).epsilon(1e-12).margin(1e-300));
      }
    }
  }
  for (double nu : {1.0, 2.0, 3.0, 5.0, 10.0, 29.0, 120.0, 1000.0}) {
    for (double p : {0.6, 0.9, 0.95, 0.975, 0.995, 0.9995}) {
      CHECK(student_t_quantile(p, nu) == Approx(gsl_cdf_tdist_Pinv(p, nu)).epsilon(1e-9));
    }
  }
}
