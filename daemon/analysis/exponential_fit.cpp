#include "exponential_fit.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include <Eigen/Dense>

#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/levenberg_marquardt.h"

namespace zout::analysis {

namespace {

struct Projection {
  double chi2 = std::numeric_limits<double>::infinity();
  double final_volts = 0.0;
  double amplitude = 0.0;
};

// V∞ and A for a fixed rate; the 2 × 2 normal equations of the basis [1, e^(−rate·s)].
Projection project(std::span<const double> s, std::span<const double> v, double rate) {
  double n = 0, sg = 0, sgg = 0, sv = 0, sgv = 0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    const double g = std::exp(-rate * s[i]);
    n += 1;
    sg += g;
    sgg += g * g;
    sv += v[i];
    sgv += g * v[i];
  }
  Projection p;
  const double det = n * sgg - sg * sg;
  if (!(det > 1e-14 * n * sgg)) return p;
  p.final_volts = (sgg * sv - sg * sgv) / det;
  p.amplitude = (n * sgv - sg * sv) / det;
  double chi2 = 0.0;
  for (std::size_t i = 0; i < s.size(); ++i) {
    const double r = v[i] - p.final_volts - p.amplitude * std::exp(-rate * s[i]);
    chi2 += r * r;
  }
  p.chi2 = chi2;
  return p;
}

}  // namespace

double ExponentialApproach::deviation_volts(double time_s) const {
  return amplitude_volts.value * std::exp(-(time_s - reference_time_s) / time_constant_s.value);
}

ExponentialApproach fit_exponential_approach(std::span<const double> times_s,
                                             std::span<const double> volts) {
  require_same_size(times_s.size(), volts.size(), "fit_exponential_approach: times_s", "volts");
  require_all_finite(times_s, "fit_exponential_approach: times_s");
  require_all_finite(volts, "fit_exponential_approach: volts");
  if (times_s.size() < 4) {
    throw std::invalid_argument("fit_exponential_approach: needs at least 4 readings, got " +
                                std::to_string(times_s.size()));
  }
  double min_spacing = std::numeric_limits<double>::infinity();
  for (std::size_t i = 1; i < times_s.size(); ++i) {
    if (!(times_s[i] > times_s[i - 1])) {
      throw std::invalid_argument("fit_exponential_approach: times_s must increase strictly (index " +
                                  std::to_string(i) + ")");
    }
    min_spacing = std::min(min_spacing, times_s[i] - times_s[i - 1]);
  }
  const double t0 = times_s.front();
  std::vector<double> s;
  for (double t : times_s) s.push_back(t - t0);
  const double span = s.back();

  // Grid over ln(rate), then golden section around the best grid point.
  const double lo = std::log(1.0 / (100.0 * span));
  const double hi = std::log(50.0 / min_spacing);
  constexpr int grid = 80;
  int best = 0;
  double best_chi2 = std::numeric_limits<double>::infinity();
  for (int k = 0; k <= grid; ++k) {
    const double q = lo + (hi - lo) * k / grid;
    const double chi2 = project(s, volts, std::exp(q)).chi2;
    if (chi2 < best_chi2) {
      best_chi2 = chi2;
      best = k;
    }
  }
  ExponentialApproach result;
  result.reference_time_s = t0;
  result.points = times_s.size();
  if (best == 0) result.bound = ExponentialApproach::Bound::slowest;
  if (best == grid) result.bound = ExponentialApproach::Bound::fastest;

  double a = lo + (hi - lo) * std::max(best - 1, 0) / grid;
  double b = lo + (hi - lo) * std::min(best + 1, grid) / grid;
  const double golden = (std::sqrt(5.0) - 1.0) / 2.0;
  double c = b - golden * (b - a);
  double d = a + golden * (b - a);
  double fc = project(s, volts, std::exp(c)).chi2;
  double fd = project(s, volts, std::exp(d)).chi2;
  while (b - a > 1e-10) {
    if (fc < fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - golden * (b - a);
      fc = project(s, volts, std::exp(c)).chi2;
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + golden * (b - a);
      fd = project(s, volts, std::exp(d)).chi2;
    }
  }
  double rate = std::exp(0.5 * (a + b));
  Projection p = project(s, volts, rate);
  if (!std::isfinite(p.chi2)) {
    // Only possible for degenerate data (e.g. a single distinct time spacing pattern that
    // makes the basis collinear); fall back to the best grid point.
    rate = std::exp(lo + (hi - lo) * best / grid);
    p = project(s, volts, rate);
  }

  const auto n = static_cast<Eigen::Index>(s.size());
  Eigen::Vector3d params(p.final_volts, p.amplitude, rate);
  LeastSquaresModel model;
  model.evaluate = [&](const Eigen::VectorXd& q, Eigen::VectorXd& r, Eigen::MatrixXd& j) {
    if (!(q[2] > 0.0)) return false;
    r.resize(n);
    j.resize(n, 3);
    for (Eigen::Index i = 0; i < n; ++i) {
      const double si = s[static_cast<std::size_t>(i)];
      const double g = std::exp(-q[2] * si);
      r[i] = volts[static_cast<std::size_t>(i)] - q[0] - q[1] * g;
      j(i, 0) = -1.0;
      j(i, 1) = -g;
      j(i, 2) = q[1] * si * g;
    }
    return true;
  };
  if (result.bound == ExponentialApproach::Bound::none) {
    const LevenbergMarquardtResult lm = levenberg_marquardt(model, params);
    if (lm.converged && lm.sum_of_squares <= p.chi2) params = lm.parameters;
  }

  Eigen::VectorXd r;
  Eigen::MatrixXd j;
  model.evaluate(params, r, j);
  const double chi2 = r.squaredNorm();
  const double variance = chi2 / static_cast<double>(n - 3);
  result.final_volts.value = params[0];
  result.amplitude_volts.value = params[1];
  result.time_constant_s.value = 1.0 / params[2];
  result.rms_residual_volts = std::sqrt(chi2 / static_cast<double>(n));

  bool three = result.bound == ExponentialApproach::Bound::none;
  Eigen::MatrixXd cov;
  if (three) {
    const Eigen::JacobiSVD<Eigen::MatrixXd> svd(j, Eigen::ComputeThinV);
    const Eigen::VectorXd sv = svd.singularValues();
    if (sv[2] > 1e-10 * sv[0]) {
      cov = svd.matrixV() * sv.array().square().inverse().matrix().asDiagonal() *
            svd.matrixV().transpose() * variance;
    } else {
      three = false;
    }
  }
  if (three) {
    result.final_volts.standard_error = std::sqrt(cov(0, 0));
    result.amplitude_volts.standard_error = std::sqrt(cov(1, 1));
    result.time_constant_s.standard_error = std::sqrt(cov(2, 2)) / (params[2] * params[2]);
  } else {
    const Eigen::MatrixXd j2 = j.leftCols(2);
    const Eigen::MatrixXd jtj = j2.transpose() * j2;
    const Eigen::Matrix2d inv = Eigen::Matrix2d(jtj).inverse();
    if (inv.allFinite()) {
      result.final_volts.standard_error = std::sqrt(std::max(0.0, inv(0, 0) * variance));
      result.amplitude_volts.standard_error = std::sqrt(std::max(0.0, inv(1, 1) * variance));
    }
  }
  return result;
}

}  // namespace zout::analysis
