// Unit tests for daemon/analysis/diode_curve_fit.h and levenberg_marquardt.h: recovery of the
// lumped-diode model, the identifiability fallbacks, and the minimiser on a classic problem.

#include <catch2/catch.hpp>

#include <cmath>
#include <random>
#include <vector>

#include "daemon/analysis/diode_curve_fit.h"
#include "daemon/analysis/levenberg_marquardt.h"

using namespace zout::analysis;

namespace {

double model_volts(double amps, double v0, double r, double m, double knee, double vt) {
  return v0 - r * amps - m * vt * std::log1p(amps / knee);
}

std::vector<IvPoint> model_curve(const std::vector<double>& microamps, double noise_volts,
                                 unsigned seed) {
  const double vt = thermal_volts(298.15);
  std::mt19937 rng(seed);
  std::normal_distribution<double> noise(0.0, noise_volts);
  std::vector<IvPoint> points;
  for (double ua : microamps) {
    const double i = ua * 1e-6;
    points.push_back({i, model_volts(i, 12.0, 22e3, 8.0, 2e-6, vt) + noise(rng), 0.0});
  }
  return points;
}

}  // namespace

TEST_CASE("thermal voltage at 25 degC", "[analysis]") {
  // k·T/q = 1.380649e-23 · 298.15 / 1.602176634e-19 = 25.693 mV (SI 2019 exact constants).
  CHECK(thermal_volts(298.15) == Approx(0.0256926).epsilon(1e-5));
  CHECK_THROWS_AS(thermal_volts(0.0), std::invalid_argument);
}

TEST_CASE("the full model is recovered from exact data spanning the knee", "[analysis]") {
  const auto points = model_curve({0, 0.5, 1, 2, 5, 10, 20, 50, 100, 150, 200, 300}, 0.0, 1);
  const Computed<DiodeCurveFit> fit = fit_diode_curve(points);
  REQUIRE(fit);
  CHECK(fit->model == DiodeCurveModel::full);
  REQUIRE(fit->v0_volts);
  REQUIRE(fit->knee_amps);
  CHECK(fit->v0_volts->value == Approx(12.0).epsilon(1e-8));
  CHECK(fit->series_ohms->value == Approx(22e3).epsilon(1e-8));
  CHECK(fit->emission_coefficient->value == Approx(8.0).epsilon(1e-8));
  CHECK(fit->knee_amps->value == Approx(2e-6).epsilon(1e-7));
  CHECK(fit->rms_residual_volts < 1e-9);
  CHECK(fit->note.empty());
}

TEST_CASE("noisy data: the estimates lie within a few standard errors", "[analysis]") {
  const auto points = model_curve({0, 0.5, 1, 2, 5, 10, 20, 50, 100, 150, 200, 250, 300}, 0.002, 7);
  const Computed<DiodeCurveFit> fit = fit_diode_curve(points);
  REQUIRE(fit);
  REQUIRE(fit->model == DiodeCurveModel::full);
  const Estimate r = fit->series_ohms.value();
  const Estimate m = fit->emission_coefficient.value();
  REQUIRE(r.standard_error);
  REQUIRE(m.standard_error);
  CHECK(std::abs(r.value - 22e3) < 4 * *r.standard_error);
  CHECK(std::abs(m.value - 8.0) < 4 * *m.standard_error);
  CHECK(*r.standard_error < 1e3);
  CHECK(fit->rms_residual_volts == Approx(0.002).epsilon(0.6));
}

TEST_CASE("no currents near the knee: R and m only, V0 and I0 not identifiable", "[analysis]") {
  // The knee at 1 nA, the lowest current 5 µA: ln(1 + I/I0) ≈ ln I − ln I0 to within the
  // 0.2 mV reading noise, so only V0 − m·V_T·ln I0 is determined.
  std::vector<IvPoint> points;
  const double vt = thermal_volts(298.15);
  std::mt19937 rng(11);
  std::normal_distribution<double> noise(0.0, 0.0002);
  for (double ua : {5.0, 10.0, 20.0, 50.0, 80.0, 100.0, 150.0, 200.0, 300.0}) {
    const double i = ua * 1e-6;
    points.push_back({i, model_volts(i, 12.0, 22e3, 8.0, 1e-9, vt) + noise(rng), 0.0});
  }
  const Computed<DiodeCurveFit> fit = fit_diode_curve(points);
  REQUIRE(fit);
  CHECK(fit->model == DiodeCurveModel::no_knee);
  REQUIRE(fit->series_ohms);
  CHECK(fit->series_ohms->value == Approx(22e3).epsilon(0.01));
  CHECK(fit->emission_coefficient->value == Approx(8.0).epsilon(0.05));
  REQUIRE_FALSE(fit->v0_volts);
  CHECK_THAT(fit->v0_volts.reason(), Catch::Contains("not identifiable"));
  REQUIRE_FALSE(fit->knee_amps);
  CHECK_THAT(fit->note, Catch::Contains("full model not identifiable"));
}

TEST_CASE("a straight line: V0 and R only", "[analysis]") {
  std::vector<IvPoint> points;
  std::mt19937 rng(3);
  std::normal_distribution<double> noise(0.0, 0.001);
  for (double ua : {0.0, 50.0, 100.0, 150.0, 200.0, 250.0, 300.0}) {
    points.push_back({ua * 1e-6, 12.0 - 22e3 * ua * 1e-6 + noise(rng), 0.0});
  }
  const Computed<DiodeCurveFit> fit = fit_diode_curve(points);
  REQUIRE(fit);
  CHECK(fit->model == DiodeCurveModel::straight);
  CHECK(fit->series_ohms->value == Approx(22e3).epsilon(0.01));
  CHECK(fit->v0_volts->value == Approx(12.0).epsilon(1e-3));
  REQUIRE_FALSE(fit->emission_coefficient);
  CHECK_THAT(fit->emission_coefficient.reason(), Catch::Contains("no significant diode bend"));
}

TEST_CASE("too few points is a reason, invalid points an exception", "[analysis]") {
  const std::vector<IvPoint> two{{0.0, 12.0, 0}, {1e-4, 10.0, 0}};
  const Computed<DiodeCurveFit> fit = fit_diode_curve(two);
  REQUIRE_FALSE(fit);
  CHECK_THAT(fit.reason(), Catch::Contains("too few points (2 points"));
  const std::vector<IvPoint> bad{{0.0, 12.0, -1.0}};
  CHECK_THROWS_WITH(fit_diode_curve(bad), Catch::Contains("points[0].volts_sigma must be >= 0"));
  CHECK_THROWS_AS(fit_diode_curve(two, DiodeCurveOptions{-5.0, 100}), std::invalid_argument);
}

TEST_CASE("Levenberg-Marquardt finds the minimum of Rosenbrock's function", "[analysis]") {
  // r = (10(y − x²), 1 − x): minimum 0 at (1, 1), from the classic start (−1.2, 1).
  LeastSquaresModel model;
  model.evaluate = [](const Eigen::VectorXd& p, Eigen::VectorXd& r, Eigen::MatrixXd& j) {
    r.resize(2);
    j.resize(2, 2);
    r << 10.0 * (p[1] - p[0] * p[0]), 1.0 - p[0];
    j << -20.0 * p[0], 10.0, -1.0, 0.0;
    return true;
  };
  Eigen::VectorXd start(2);
  start << -1.2, 1.0;
  const LevenbergMarquardtResult result = levenberg_marquardt(model, start);
  REQUIRE(result.converged);
  CHECK(result.parameters[0] == Approx(1.0).epsilon(1e-8));
  CHECK(result.parameters[1] == Approx(1.0).epsilon(1e-8));
  CHECK(result.sum_of_squares < 1e-20);

  LeastSquaresModel outside;
  outside.evaluate = [](const Eigen::VectorXd&, Eigen::VectorXd&, Eigen::MatrixXd&) { return false; };
  const LevenbergMarquardtResult refused = levenberg_marquardt(outside, start);
  CHECK_FALSE(refused.converged);
  CHECK_THAT(refused.reason, Catch::Contains("outside the model's domain"));
}
