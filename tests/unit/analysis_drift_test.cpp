// Unit tests for daemon/analysis/drift.h: slope per hour, control band, soak series.

#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "daemon/analysis/drift.h"

using namespace zout::analysis;

TEST_CASE("drift of an exact line is its slope per hour", "[analysis]") {
  std::vector<double> t, v;
  for (int k = 0; k < 10; ++k) {
    t.push_back(600.0 * k);              // a sweep every 10 minutes
    v.push_back(12.0 - 0.03 * (t.back() / 3600.0));  // −30 mV per hour
  }
  const Computed<DriftSlope> d = drift_per_hour(t, v);
  REQUIRE(d);
  CHECK(d->per_hour.value == Approx(-0.03).epsilon(1e-10));
  CHECK(d->points == 10);
  CHECK(d->ci_low_per_hour <= d->per_hour.value);
  CHECK(d->ci_high_per_hour >= d->per_hour.value);
  CHECK(d->ci_high_per_hour - d->ci_low_per_hour < 1e-10);
}

TEST_CASE("drift confidence interval uses t with N - 2 degrees of freedom", "[analysis]") {
  const std::vector<double> t{0, 3600, 7200, 10800, 14400};
  const std::vector<double> v{10.0, 10.2, 9.9, 10.4, 10.1};
  const Computed<DriftSlope> d = drift_per_hour(t, v, 0.95);
  REQUIRE(d);
  // OLS by hand: x = 0..4 h, slope = Σ(x − 2)(v − v̄)/Σ(x − 2)² = 0.4/10 = 0.04 V/h.
  CHECK(d->per_hour.value == Approx(0.04));
  // Residual sum of squares 0.132 over 3 degrees of freedom ⇒ SE = √(0.132/3/10);
  // t_{0.975, 3} = 3.182 (standard tables).
  const double se = std::sqrt(0.132 / 3.0 / 10.0);
  CHECK(*d->per_hour.standard_error == Approx(se));
  CHECK(d->ci_high_per_hour - d->per_hour.value == Approx(3.182 * se).epsilon(1e-3));
}

TEST_CASE("drift needs three sweeps at two times", "[analysis]") {
  const std::vector<double> t{0, 60};
  const std::vector<double> v{1, 2};
  const Computed<DriftSlope> d = drift_per_hour(t, v);
  REQUIRE_FALSE(d);
  CHECK_THAT(d.reason(), Catch::Contains("needs at least 3 sweeps at 2 distinct times"));
  CHECK_THROWS_WITH(drift_per_hour(t, std::vector<double>{1}), Catch::Contains("times_s has 2 values but values has 1"));
  CHECK_THROWS_WITH(drift_per_hour(t, v, 1.0), Catch::Contains("confidence must be in (0, 1)"));
}

TEST_CASE("control band is mean plus or minus 3 sigma of the baseline", "[analysis]") {
  const std::vector<double> v{10.0, 10.2, 9.8, 10.1, 9.9, 10.05, 10.8, 9.1};
  const Computed<ControlBand> band = control_band(v, 5);
  REQUIRE(band);
  CHECK(band->mean == Approx(10.0));
  CHECK(band->sigma == Approx(std::sqrt(0.1 / 4.0)));
  CHECK(band->upper == Approx(10.0 + 3 * std::sqrt(0.025)));
  const std::vector<std::size_t> out = outside_band(v, band.value());
  REQUIRE(out.size() == 2);
  CHECK(out[0] == 6);
  CHECK(out[1] == 7);
  REQUIRE_FALSE(control_band(v, 9));
  CHECK_THROWS_WITH(control_band(v, 1), Catch::Contains("baseline_count must be >= 2"));
}

TEST_CASE("soak drift skips sweeps without a figure and flags by sweep index", "[analysis]") {
  std::vector<SoakSample> sweeps;
  for (int k = 0; k < 8; ++k) {
    SoakSample s;
    s.time_s = 900.0 * k;
    s.v_oc_volts = 12.0 + 0.001 * (k % 2);
    if (k != 2) s.z_out_ohms = 30e3 + (k == 7 ? 5e3 : 10.0 * (k % 3));
    s.ripple_pp_volts = 0.5;
    sweeps.push_back(s);
  }
  DriftOptions options;
  options.baseline_count = 4;
  const SoakDrift drift = soak_drift(sweeps, options);
  CHECK_FALSE(drift.v_oc_volts.alarm);
  REQUIRE(drift.z_out_ohms.alarm);
  REQUIRE(drift.z_out_ohms.out_of_band.size() == 1);
  CHECK(drift.z_out_ohms.out_of_band[0] == 7);  // the sweep, not the position in the series
  REQUIRE(drift.z_out_ohms.slope);
  CHECK(drift.z_out_ohms.slope->points == 7);
  // Constant ripple: zero slope and a zero-width band that nothing leaves.
  CHECK(drift.ripple_pp_volts.slope->per_hour.value == Approx(0.0).margin(1e-12));
  CHECK_FALSE(drift.ripple_pp_volts.alarm);
}
