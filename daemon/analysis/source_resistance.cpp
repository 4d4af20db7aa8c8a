#include "source_resistance.h"

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/weighted_fit.h"

namespace zout::analysis {

Computed<LinearRegionFit> linear_region_fit(std::span<const IvPoint> points,
                                            const LinearRegionOptions& options) {
  require_valid_points(points, "linear_region_fit: points");
  if (options.min_amps) require_non_negative(*options.min_amps, "linear_region_fit: min_amps");

  double min_amps = 0.0;
  if (options.min_amps) {
    min_amps = *options.min_amps;
  } else {
    std::vector<double> nonzero;
    for (const IvPoint& p : points) {
      if (p.current_amps > 0.0) nonzero.push_back(p.current_amps);
    }
    std::sort(nonzero.begin(), nonzero.end());
    nonzero.erase(std::unique(nonzero.begin(), nonzero.end()), nonzero.end());
    if (nonzero.size() < 2) {
      return Computed<LinearRegionFit>::missing(
          "linear region: needs at least 2 distinct non-zero load currents, found " +
          std::to_string(nonzero.size()));
    }
    // Upper half: with 2k or 2k+1 distinct currents, start at index k (at least 2 points).
    min_amps = nonzero[std::min(nonzero.size() / 2, nonzero.size() - 2)];
  }

  std::vector<IvPoint> used;
  for (const IvPoint& p : points) {
    if (p.current_amps >= min_amps) used.push_back(p);
  }
  std::vector<double> x;
  std::vector<double> y;
  for (const IvPoint& p : used) {
    x.push_back(p.current_amps);
    y.push_back(p.volts);
  }
  if (count_distinct(x) < 2) {
    return Computed<LinearRegionFit>::missing(
        "linear region: needs at least 2 distinct load currents >= " + format_number(min_amps) +
        " A, found " + std::to_string(count_distinct(x)));
  }
  const bool sigma = all_have_sigma(used);
  std::vector<double> w;
  for (const IvPoint& p : used) w.push_back(sigma ? 1.0 / (p.volts_sigma * p.volts_sigma) : 1.0);
  const PolynomialFit fit =
      fit_line(x, y, w, sigma ? WeightKind::absolute : WeightKind::relative);

  LinearRegionFit result;
  const Eigen::VectorXd c = fit.coefficients();
  const std::optional<Eigen::MatrixXd> cov = fit.covariance();
  result.source_ohms.value = -c[1];
  result.intercept_volts.value = c[0];
  if (cov) {
    result.source_ohms.standard_error = std::sqrt((*cov)(1, 1));
    result.intercept_volts.standard_error = std::sqrt((*cov)(0, 0));
  }
  const auto [lo, hi] = std::minmax_element(x.begin(), x.end());
  result.from_amps = *lo;
  result.to_amps = *hi;
  result.points_used = used.size();
  return Computed<LinearRegionFit>::of(result);
}

}  // namespace zout::analysis
