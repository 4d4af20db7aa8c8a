#include "ripple.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

namespace {

void require_samples(std::span<const double> samples, const char* what) {
  if (samples.empty()) throw std::invalid_argument(std::string(what) + ": no samples");
  require_all_finite(samples, std::string(what) + ": samples_volts");
}

}  // namespace

double sawtooth_pp_from_rms_volts(double ac_rms_volts) {
  require_non_negative(ac_rms_volts, "ac_rms_volts");
  return 2.0 * std::sqrt(3.0) * ac_rms_volts;
}

double sampled_pp_volts(std::span<const double> samples_volts) {
  require_samples(samples_volts, "sampled_pp_volts");
  const auto [lo, hi] = std::minmax_element(samples_volts.begin(), samples_volts.end());
  return *hi - *lo;
}

double ac_rms_volts(std::span<const double> samples_volts) {
  require_samples(samples_volts, "ac_rms_volts");
  double mean = 0.0;
  for (double v : samples_volts) mean += v;
  mean /= static_cast<double>(samples_volts.size());
  double ss = 0.0;
  for (double v : samples_volts) ss += (v - mean) * (v - mean);
  return std::sqrt(ss / static_cast<double>(samples_volts.size()));
}

}  // namespace zout::analysis
