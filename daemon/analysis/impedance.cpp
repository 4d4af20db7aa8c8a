#include "impedance.h"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <stdexcept>
#include <string>
#include <vector>

#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/weighted_fit.h"

namespace zout::analysis {

namespace {

void check_options(const ImpedanceOptions& options) {
  if (options.operating_amps) require_non_negative(*options.operating_amps, "operating_amps");
  if (!(options.fit_max_amps > 0.0)) {
    throw std::invalid_argument("fit_max_amps must be > 0 (" +
                                format_number(options.fit_max_amps) + ")");
  }
  if (options.window_currents < 2) {
    throw std::invalid_argument("window_currents must be >= 2 (" +
                                std::to_string(options.window_currents) + ")");
  }
  require_finite(options.bandwidth_factor, "bandwidth_factor");
  if (!(options.bandwidth_factor > 1.0)) {
    throw std::invalid_argument("bandwidth_factor must be > 1 (" +
                                format_number(options.bandwidth_factor) + ")");
  }
  require_non_negative(options.zero_current_amps, "zero_current_amps");
}

struct LocalFit {
  PolynomialFit fit;
  std::size_t points_used;
  double low_amps;
  double high_amps;
};

// The kernel-weighted local polynomial around at_amps (see impedance.h).
Computed<LocalFit> local_fit(std::span<const IvPoint> points, double at_amps,
                             const ImpedanceOptions& options) {
  std::vector<IvPoint> candidates;
  for (const IvPoint& p : points) {
    if (p.current_amps <= options.fit_max_amps) candidates.push_back(p);
  }
  // The window: every point at the window_currents distinct currents nearest at_amps.
  std::vector<double> nearest;
  for (const IvPoint& p : candidates) nearest.push_back(p.current_amps);
  std::sort(nearest.begin(), nearest.end());
  nearest.erase(std::unique(nearest.begin(), nearest.end()), nearest.end());
  std::stable_sort(nearest.begin(), nearest.end(), [at_amps](double a, double b) {
    return std::abs(a - at_amps) < std::abs(b - at_amps);
  });
  if (nearest.size() > options.window_currents) nearest.resize(options.window_currents);
  std::erase_if(candidates, [&nearest](const IvPoint& p) {
    return std::find(nearest.begin(), nearest.end(), p.current_amps) == nearest.end();
  });

  std::vector<double> currents;
  for (const IvPoint& p : candidates) currents.push_back(p.current_amps);
  const std::size_t distinct = count_distinct(currents);
  if (distinct < 2) {
    return Computed<LocalFit>::missing(
        "needs at least 2 distinct load currents at or below fit_max_amps " +
        format_number(options.fit_max_amps) + " A near " + format_number(at_amps) + " A, found " +
        std::to_string(distinct));
  }
  const int degree = (candidates.size() >= 4 && distinct >= 3) ? 2 : 1;

  double farthest = 0.0;
  for (const IvPoint& p : candidates) farthest = std::max(farthest, std::abs(p.current_amps - at_amps));
  const double bandwidth = options.bandwidth_factor * farthest;
  const bool sigma = all_have_sigma(candidates);
  std::vector<double> volts;
  std::vector<double> weights;
  for (const IvPoint& p : candidates) {
    const double d = std::abs(p.current_amps - at_amps) / bandwidth;
    const double kernel = std::pow(1.0 - d * d * d, 3.0);
    volts.push_back(p.volts);
    weights.push_back(sigma ? kernel / (p.volts_sigma * p.volts_sigma) : kernel);
  }
  const auto [lo, hi] = std::minmax_element(currents.begin(), currents.end());
  return Computed<LocalFit>::of(LocalFit{
      fit_polynomial(currents, volts, weights, degree, WeightKind::relative), candidates.size(),
      *lo, *hi});
}

}  // namespace

Computed<ImpedanceFit> output_impedance(std::span<const IvPoint> points,
                                        const ImpedanceOptions& options) {
  require_valid_points(points, "output_impedance: points");
  check_options(options);

  double operating = 0.0;
  if (options.operating_amps) {
    operating = *options.operating_amps;
  } else {
    double smallest = std::numeric_limits<double>::infinity();
    for (const IvPoint& p : points) {
      if (p.current_amps > options.zero_current_amps) smallest = std::min(smallest, p.current_amps);
    }
    if (!std::isfinite(smallest)) {
      return Computed<ImpedanceFit>::missing("no point with a non-zero load current");
    }
    operating = smallest;
  }

  const Computed<LocalFit> local = local_fit(points, operating, options);
  if (!local) return Computed<ImpedanceFit>::missing("Z_out: " + local.reason());

  const PolynomialFit& fit = local->fit;
  ImpedanceFit result;
  result.operating_amps = operating;
  result.z_out_ohms = Estimate{-fit.slope(operating), fit.slope_standard_error(operating)};
  result.volts = Estimate{fit.value(operating), fit.value_standard_error(operating)};
  result.degree = fit.degree();
  result.points_used = local->points_used;
  result.window_low_amps = local->low_amps;
  result.window_high_amps = local->high_amps;
  return Computed<ImpedanceFit>::of(result);
}

Computed<OpenCircuit> open_circuit_volts(std::span<const IvPoint> points,
                                         const ImpedanceOptions& options) {
  require_valid_points(points, "open_circuit_volts: points");
  check_options(options);

  std::vector<IvPoint> zero;
  for (const IvPoint& p : points) {
    if (p.current_amps <= options.zero_current_amps) zero.push_back(p);
  }
  OpenCircuit result;
  if (!zero.empty()) {
    result.from_zero_current_points = true;
    result.points_used = zero.size();
    if (all_have_sigma(zero)) {
      double sum_w = 0.0;
      double sum_wv = 0.0;
      for (const IvPoint& p : zero) {
        const double w = 1.0 / (p.volts_sigma * p.volts_sigma);
        sum_w += w;
        sum_wv += w * p.volts;
      }
      result.volts = Estimate{sum_wv / sum_w, 1.0 / std::sqrt(sum_w)};
    } else {
      double sum = 0.0;
      for (const IvPoint& p : zero) sum += p.volts;
      const double n = static_cast<double>(zero.size());
      const double mean = sum / n;
      result.volts.value = mean;
      if (zero.size() >= 2) {
        double ss = 0.0;
        for (const IvPoint& p : zero) ss += (p.volts - mean) * (p.volts - mean);
        result.volts.standard_error = std::sqrt(ss / (n - 1.0) / n);
      }
    }
    return Computed<OpenCircuit>::of(result);
  }

  const Computed<LocalFit> local = local_fit(points, 0.0, options);
  if (!local) {
    return Computed<OpenCircuit>::missing("V_oc: no zero-current point, and the fit at 0 A " +
                                          local.reason());
  }
  result.volts = Estimate{local->fit.value(0.0), local->fit.value_standard_error(0.0)};
  result.points_used = local->points_used;
  return Computed<OpenCircuit>::of(result);
}

Computed<Estimate> chord_impedance_ohms(const Estimate& open_circuit, std::span<const IvPoint> points,
                                        double rated_amps) {
  require_valid_points(points, "chord_impedance_ohms: points");
  require_finite(open_circuit.value, "chord_impedance_ohms: open_circuit_volts");
  require_positive(rated_amps, "chord_impedance_ohms: rated_amps");

  double nearest = std::numeric_limits<double>::infinity();
  for (const IvPoint& p : points) {
    if (std::abs(p.current_amps - rated_amps) < std::abs(nearest - rated_amps)) nearest = p.current_amps;
  }
  if (!(std::abs(nearest - rated_amps) <= 0.05 * rated_amps)) {
    return Computed<Estimate>::missing("chord impedance: no point within 5% of the rated load " +
                                       format_number(rated_amps) + " A");
  }
  std::vector<IvPoint> at;
  for (const IvPoint& p : points) {
    if (p.current_amps == nearest) at.push_back(p);
  }
  const double n = static_cast<double>(at.size());
  double v = 0.0;
  double var_v = 0.0;
  for (const IvPoint& p : at) {
    v += p.volts / n;
    var_v += p.volts_sigma * p.volts_sigma / (n * n);
  }
  const double z = (open_circuit.value - v) / nearest;
  Estimate result{z, std::nullopt};
  if (open_circuit.standard_error && all_have_sigma(at)) {
    result.standard_error =
        std::sqrt(*open_circuit.standard_error * *open_circuit.standard_error + var_v) / nearest;
  }
  return Computed<Estimate>::of(result);
}

}  // namespace zout::analysis
