// Reference check of the ripple conversions (daemon/analysis/ripple.h): a sawtooth of
// peak-to-peak amplitude A has RMS A/(2√3) (common practice; any signals textbook).

#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "daemon/analysis/ripple.h"

using namespace zout::analysis;

TEST_CASE("sawtooth RMS identity on a sampled sawtooth", "[analysis]") {
  // A cascade-like ripple: 0.5 V peak-to-peak sawtooth on 12 V, 10 000 samples per period,
  // sampled at the midpoints so the discrete RMS matches the continuous one to O(1/N²).
  const double pp = 0.5;
  const int n = 10000;
  std::vector<double> samples;
  for (int k = 0; k < n; ++k) {
    const double phase = (k + 0.5) / n;  // 0..1
    samples.push_back(12.0 + pp * (0.5 - phase));
  }
  const double rms = ac_rms_volts(samples);
  CHECK(rms == Approx(pp / (2.0 * std::sqrt(3.0))).epsilon(1e-7));
  CHECK(sawtooth_pp_from_rms_volts(rms) == Approx(pp).epsilon(1e-7));
  CHECK(sampled_pp_volts(samples) == Approx(pp * (1.0 - 1.0 / n)).epsilon(1e-12));
}

TEST_CASE("the sawtooth factor overreads a sine by sqrt(3/2)", "[analysis]") {
  // A sine of peak-to-peak A has RMS A/(2√2) (common practice): the sawtooth estimate reads
  // it √(3/2) ≈ 1.22 times too high, which is why sampled ripple is preferred when available.
  const int n = 10000;
  std::vector<double> samples;
  for (int k = 0; k < n; ++k) samples.push_back(0.25 * std::sin(2.0 * std::acos(-1.0) * k / n));
  const double rms = ac_rms_volts(samples);
  CHECK(rms == Approx(0.5 / (2.0 * std::sqrt(2.0))).epsilon(1e-9));
  CHECK(sawtooth_pp_from_rms_volts(rms) / 0.5 == Approx(std::sqrt(1.5)).epsilon(1e-9));
}
