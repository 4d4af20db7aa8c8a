#include "diode_curve_fit.h"

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <stdexcept>
#include <vector>

#include <Eigen/Dense>

#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/levenberg_marquardt.h"
#include "daemon/analysis/weighted_fit.h"

namespace zout::analysis {

namespace {

constexpr double boltzmann_joules_per_kelvin = 1.380649e-23;   // exact (SI 2019)
constexpr double elementary_charge_coulombs = 1.602176634e-19;  // exact (SI 2019)
constexpr double min_reciprocal_condition = 1e-8;

// The data in scaled form: x = I/S with S the largest current, so every parameter is O(1).
struct Data {
  std::vector<double> x;
  std::vector<double> y;
  std::vector<double> w;
  double scale_amps = 1.0;
  WeightKind kind = WeightKind::relative;
};

std::optional<double> standard_error(const std::optional<Eigen::MatrixXd>& cov, Eigen::Index k) {
  if (!cov) return std::nullopt;
  return std::sqrt(std::max(0.0, (*cov)(k, k)));
}

bool significantly_positive(double value, const std::optional<double>& se) {
  return value > 0.0 && (!se || value > 2.0 * *se);
}

// Sum of unweighted squared residuals → rms.
double rms(const std::vector<double>& residuals) {
  double ss = 0.0;
  for (double r : residuals) ss += r * r;
  return residuals.empty() ? 0.0 : std::sqrt(ss / static_cast<double>(residuals.size()));
}

// Linear fit of (V₀, ρ, a) for a fixed u = ln(I₀/S); empty when rank-deficient.
std::optional<LinearModelFit> profile_fit(const Data& d, double u) {
  const auto n = static_cast<Eigen::Index>(d.x.size());
  Eigen::MatrixXd design(n, 3);
  const double inv_knee = std::exp(-u);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double x = d.x[static_cast<std::size_t>(i)];
    design(i, 0) = 1.0;
    design(i, 1) = -x;
    design(i, 2) = -std::log1p(x * inv_knee);
  }
  try {
    return fit_linear_model(design, d.y, d.w, d.kind);
  } catch (const std::invalid_argument&) {
    return std::nullopt;
  }
}

struct FullAttempt {
  bool usable = false;
  std::string why_not;
  Eigen::VectorXd p;  // V₀, ρ, a, u
  std::optional<Eigen::MatrixXd> covariance;
  int iterations = 0;
  double rms_residual = 0.0;
};

FullAttempt fit_full(const Data& d, const DiodeCurveOptions& options) {
  FullAttempt attempt;
  // Start: the best of a grid over u (the knee from 1e-7·S to 100·S).
  double best_chi2 = std::numeric_limits<double>::infinity();
  Eigen::VectorXd start(4);
  for (int k = 0; k <= 90; ++k) {
    const double u = std::log(1e-7) + (std::log(100.0) - std::log(1e-7)) * k / 90.0;
    const std::optional<LinearModelFit> f = profile_fit(d, u);
    if (f && f->chi_squared < best_chi2) {
      best_chi2 = f->chi_squared;
      start << f->coefficients[0], f->coefficients[1], f->coefficients[2], u;
    }
  }
  if (!std::isfinite(best_chi2)) {
    attempt.why_not = "no starting point: the data does not determine V₀, R and m at any knee";
    return attempt;
  }

  LeastSquaresModel model;
  model.evaluate = [&d](const Eigen::VectorXd& p, Eigen::VectorXd& r, Eigen::MatrixXd& j) {
    if (!(std::abs(p[3]) < 700.0)) return false;
    const auto n = static_cast<Eigen::Index>(d.x.size());
    r.resize(n);
    j.resize(n, 4);
    const double knee = std::exp(p[3]);
    for (Eigen::Index i = 0; i < n; ++i) {
      const auto ui = static_cast<std::size_t>(i);
      const double x = d.x[ui];
      const double sw = std::sqrt(d.w[ui]);
      const double log_term = std::log1p(x / knee);
      const double f = p[0] - p[1] * x - p[2] * log_term;
      r[i] = sw * (d.y[ui] - f);
      j(i, 0) = -sw;
      j(i, 1) = sw * x;
      j(i, 2) = sw * log_term;
      j(i, 3) = -sw * p[2] * x / (x + knee);
    }
    return true;
  };
  LevenbergMarquardtOptions lm_options;
  lm_options.max_iterations = options.max_iterations;
  const LevenbergMarquardtResult lm = levenberg_marquardt(model, start, lm_options);
  attempt.iterations = lm.iterations;
  attempt.p = lm.parameters;
  if (!lm.converged) {
    attempt.why_not = "Levenberg–Marquardt: " + lm.reason;
    return attempt;
  }

  // Conditioning of the column-normalised Jacobian.
  Eigen::MatrixXd jn = lm.jacobian;
  for (Eigen::Index k = 0; k < jn.cols(); ++k) {
    const double norm = jn.col(k).norm();
    if (norm == 0.0) {
      attempt.why_not = "singular Jacobian (a parameter has no effect on the curve)";
      return attempt;
    }
    jn.col(k) /= norm;
  }
  const Eigen::JacobiSVD<Eigen::MatrixXd> svd(jn, Eigen::ComputeThinV);
  const Eigen::VectorXd s = svd.singularValues();
  const double rcond = s[s.size() - 1] / s[0];
  if (!(rcond >= min_reciprocal_condition)) {
    attempt.why_not = "singular Jacobian (reciprocal condition " + format_number(rcond) +
                      "): the parameters are not separately determined by these currents";
    return attempt;
  }
  // (JᵀJ)⁻¹ from the SVD of the normalised Jacobian, then unscaled.
  Eigen::MatrixXd inv_jtj =
      svd.matrixV() * s.array().square().inverse().matrix().asDiagonal() * svd.matrixV().transpose();
  for (Eigen::Index a = 0; a < 4; ++a) {
    for (Eigen::Index b = 0; b < 4; ++b) {
      inv_jtj(a, b) /= lm.jacobian.col(a).norm() * lm.jacobian.col(b).norm();
    }
  }
  const std::size_t n = d.x.size();
  if (d.kind == WeightKind::absolute) {
    attempt.covariance = inv_jtj;
  } else if (n > 4) {
    attempt.covariance = inv_jtj * (lm.sum_of_squares / static_cast<double>(n - 4));
  }
  if (const std::optional<double> se_u = standard_error(attempt.covariance, 3); se_u && *se_u > 1.0) {
    attempt.why_not = "the knee current is not determined (standard error of ln I₀ " +
                      format_number(*se_u) + " > 1)";
    return attempt;
  }
  if (!significantly_positive(attempt.p[2], standard_error(attempt.covariance, 2))) {
    attempt.why_not = "the fitted diode term is not significantly positive (m·V_T = " +
                      format_number(attempt.p[2]) + " V)";
    return attempt;
  }
  std::vector<double> residuals;
  const double knee = std::exp(attempt.p[3]);
  for (std::size_t i = 0; i < n; ++i) {
    residuals.push_back(d.y[i] - (attempt.p[0] - attempt.p[1] * d.x[i] -
                                  attempt.p[2] * std::log1p(d.x[i] / knee)));
  }
  attempt.rms_residual = rms(residuals);
  attempt.usable = true;
  return attempt;
}

Estimate scaled(double value, const std::optional<double>& se, double factor) {
  Estimate e{value * factor, std::nullopt};
  if (se) e.standard_error = *se * std::abs(factor);
  return e;
}

}  // namespace

double thermal_volts(double temperature_kelvin) {
  require_positive(temperature_kelvin, "temperature_kelvin");
  return boltzmann_joules_per_kelvin * temperature_kelvin / elementary_charge_coulombs;
}

Computed<DiodeCurveFit> fit_diode_curve(std::span<const IvPoint> points,
                                        const DiodeCurveOptions& options) {
  require_valid_points(points, "fit_diode_curve: points");
  const double vt = thermal_volts(options.temperature_kelvin);
  if (options.max_iterations < 1) {
    throw std::invalid_argument("fit_diode_curve: max_iterations must be >= 1");
  }

  Data d;
  d.kind = all_have_sigma(points) ? WeightKind::absolute : WeightKind::relative;
  double largest = 0.0;
  for (const IvPoint& p : points) largest = std::max(largest, p.current_amps);
  if (!(largest > 0.0)) {
    return Computed<DiodeCurveFit>::missing("diode curve: no point with a non-zero load current");
  }
  d.scale_amps = largest;
  for (const IvPoint& p : points) {
    d.x.push_back(p.current_amps / largest);
    d.y.push_back(p.volts);
    d.w.push_back(d.kind == WeightKind::absolute ? 1.0 / (p.volts_sigma * p.volts_sigma) : 1.0);
  }
  const std::size_t distinct = count_distinct(d.x);

  DiodeCurveFit result;
  result.thermal_volts = vt;
  std::string note;
  if (points.size() >= 5 && distinct >= 4) {
    const FullAttempt full = fit_full(d, options);
    result.iterations = full.iterations;
    if (full.usable) {
      result.model = DiodeCurveModel::full;
      result.v0_volts = Computed<Estimate>::of(scaled(full.p[0], standard_error(full.covariance, 0), 1.0));
      result.series_ohms =
          Computed<Estimate>::of(scaled(full.p[1], standard_error(full.covariance, 1), 1.0 / largest));
      result.emission_coefficient =
          Computed<Estimate>::of(scaled(full.p[2], standard_error(full.covariance, 2), 1.0 / vt));
      // I₀ = S·e^u, so SE(I₀) = I₀·SE(u) to first order.
      const double knee = std::exp(full.p[3]) * largest;
      const std::optional<double> se_u = standard_error(full.covariance, 3);
      result.knee_amps = Computed<Estimate>::of(
          Estimate{knee, se_u ? std::optional<double>(knee * *se_u) : std::nullopt});
      result.rms_residual_volts = full.rms_residual;
      result.points_used = points.size();
      return Computed<DiodeCurveFit>::of(result);
    }
    note = "full model not identifiable: " + full.why_not;
  } else {
    note = "full model not identifiable: needs at least 5 points and 4 distinct currents, got " +
           std::to_string(points.size()) + " points and " + std::to_string(distinct) +
           " distinct currents";
  }

  // Reduced model without the knee, over the non-zero currents.
  {
    std::vector<double> y;
    std::vector<double> w;
    std::vector<double> x;
    for (std::size_t i = 0; i < d.x.size(); ++i) {
      if (d.x[i] > 0.0) {
        x.push_back(d.x[i]);
        y.push_back(d.y[i]);
        w.push_back(d.w[i]);
      }
    }
    if (x.size() >= 4 && count_distinct(x) >= 3) {
      Eigen::MatrixXd design(static_cast<Eigen::Index>(x.size()), 3);
      for (std::size_t i = 0; i < x.size(); ++i) {
        const auto row = static_cast<Eigen::Index>(i);
        design(row, 0) = 1.0;
        design(row, 1) = -x[i];
        design(row, 2) = -std::log(x[i]);
      }
      const LinearModelFit f = fit_linear_model(design, y, w, d.kind);
      const std::optional<double> se_a = standard_error(f.covariance, 2);
      if (significantly_positive(f.coefficients[2], se_a)) {
        result.model = DiodeCurveModel::no_knee;
        result.series_ohms = Computed<Estimate>::of(
            scaled(f.coefficients[1], standard_error(f.covariance, 1), 1.0 / largest));
        result.emission_coefficient =
            Computed<Estimate>::of(scaled(f.coefficients[2], se_a, 1.0 / vt));
        const std::string why =
            "not identifiable: no currents near the diode knee (it lies below the lowest "
            "non-zero current), so only V₀ − m·V_T·ln I₀ is determined";
        result.v0_volts = Computed<Estimate>::missing(why);
        result.knee_amps = Computed<Estimate>::missing(why);
        std::vector<double> residuals;
        const Eigen::VectorXd fitted = design * f.coefficients;
        for (std::size_t i = 0; i < x.size(); ++i) residuals.push_back(y[i] - fitted[static_cast<Eigen::Index>(i)]);
        result.rms_residual_volts = rms(residuals);
        result.points_used = x.size();
        result.note = note;
        return Computed<DiodeCurveFit>::of(result);
      }
    }
  }

  // A straight line: the curve shows no diode bend.
  if (points.size() >= 3 && distinct >= 2) {
    const PolynomialFit line = fit_line(d.x, d.y, d.w, d.kind);
    const Eigen::VectorXd c = line.coefficients();
    const std::optional<Eigen::MatrixXd> cov = line.covariance();
    result.model = DiodeCurveModel::straight;
    result.v0_volts = Computed<Estimate>::of(scaled(c[0], standard_error(cov, 0), 1.0));
    result.series_ohms = Computed<Estimate>::of(scaled(-c[1], standard_error(cov, 1), 1.0 / largest));
    const std::string why = "not identifiable: the curve shows no significant diode bend";
    result.emission_coefficient = Computed<Estimate>::missing(why);
    result.knee_amps = Computed<Estimate>::missing(why);
    std::vector<double> residuals;
    for (std::size_t i = 0; i < d.x.size(); ++i) residuals.push_back(d.y[i] - line.value(d.x[i]));
    result.rms_residual_volts = rms(residuals);
    result.points_used = points.size();
    result.note = note;
    return Computed<DiodeCurveFit>::of(result);
  }
  return Computed<DiodeCurveFit>::missing("diode curve: too few points (" +
                                          std::to_string(points.size()) + " points, " +
                                          std::to_string(distinct) + " distinct currents); " + note);
}

}  // namespace zout::analysis
