// Reference checks of the soak drift statistics (daemon/analysis/drift.h, student_t.h):
// t quantiles against printed table values, and the confidence interval's coverage on
// synthetic soaks with a known slope.

#include <catch2/catch.hpp>

#include <random>
#include <vector>

#include "daemon/analysis/drift.h"
#include "daemon/analysis/student_t.h"

using namespace zout::analysis;

TEST_CASE("t quantiles match the printed table", "[analysis]") {
  // Two-sided 95 % and other common entries of the Student t table, from memory / standard
  // statistical tables (three decimals as printed).
  CHECK(student_t_quantile(0.975, 10) == Approx(2.228).margin(0.0005));
  CHECK(student_t_quantile(0.975, 1) == Approx(12.706).margin(0.0005));
  CHECK(student_t_quantile(0.975, 5) == Approx(2.571).margin(0.0005));
  CHECK(student_t_quantile(0.975, 30) == Approx(2.042).margin(0.0005));
  CHECK(student_t_quantile(0.95, 10) == Approx(1.812).margin(0.0005));
  CHECK(student_t_quantile(0.995, 20) == Approx(2.845).margin(0.0005));
  // Large ν tends to the normal quantile 1.960.
  CHECK(student_t_quantile(0.975, 1e6) == Approx(1.960).margin(0.0005));
}

TEST_CASE("synthetic soak: the 95% interval holds the true slope at the stated rate", "[analysis]") {
  // 12 sweeps, one every 20 minutes; V_oc falls 25 mV per hour under 5 mV reading noise.
  const double true_slope = -0.025;
  int covered = 0;
  const int trials = 400;
  for (int trial = 0; trial < trials; ++trial) {
    std::mt19937 rng(1000u + static_cast<unsigned>(trial));
    std::normal_distribution<double> noise(0.0, 0.005);
    std::vector<double> t, v;
    for (int k = 0; k < 12; ++k) {
      t.push_back(1200.0 * k);
      v.push_back(12.0 + true_slope * t.back() / 3600.0 + noise(rng));
    }
    const Computed<DriftSlope> d = drift_per_hour(t, v);
    REQUIRE(d);
    if (d->ci_low_per_hour <= true_slope && true_slope <= d->ci_high_per_hour) ++covered;
    if (trial == 0) {
      CHECK(d->per_hour.value == Approx(true_slope).margin(4 * *d->per_hour.standard_error));
    }
  }
  // Binomial(400, 0.95): standard deviation 1.1 %; 3 standard deviations either side.
  const double rate = static_cast<double>(covered) / trials;
  CHECK(rate > 0.917);
  CHECK(rate < 0.983);
}

TEST_CASE("synthetic soak: a step in Z_out leaves the control band", "[analysis]") {
  // Shewhart individuals chart (common practice): mean ± 3σ of the first 6 sweeps. A 5 %
  // step at sweep 10 against 0.2 % noise must be flagged at every sweep after it, and no
  // sweep before it.
  std::mt19937 rng(77);
  std::normal_distribution<double> noise(0.0, 60.0);
  std::vector<SoakSample> sweeps;
  for (int k = 0; k < 16; ++k) {
    SoakSample s;
    s.time_s = 1800.0 * k;
    s.z_out_ohms = 30e3 * (k >= 10 ? 1.05 : 1.0) + noise(rng);
    sweeps.push_back(s);
  }
  DriftOptions options;
  options.baseline_count = 6;
  const SoakDrift drift = soak_drift(sweeps, options);
  REQUIRE(drift.z_out_ohms.alarm);
  const std::vector<std::size_t> expected{10, 11, 12, 13, 14, 15};
  CHECK(drift.z_out_ohms.out_of_band == expected);
  // No V_oc in these sweeps: its drift is missing with the reason.
  CHECK_FALSE(drift.v_oc_volts.slope);
  CHECK_FALSE(drift.v_oc_volts.alarm);
}
