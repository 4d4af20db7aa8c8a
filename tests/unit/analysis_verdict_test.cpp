// Unit tests for daemon/analysis/verdict.h: a reason per limit, missing figures fail.

#include <catch2/catch.hpp>

#include <limits>
#include <stdexcept>

#include "daemon/analysis/verdict.h"

using namespace zout::analysis;

TEST_CASE("every set limit is checked with its reason", "[analysis]") {
  SweepFigures f;
  f.v_oc_volts = Computed<double>::of(12.1);
  f.z_out_ohms = Computed<double>::of(412000.0);
  f.ripple_pp_volts_at_rated = Computed<double>::of(0.4);
  f.effective_capacitance_farads = Computed<double>::of(0.9e-6);
  f.diode_drop_volts = Computed<double>::of(0.45);
  Limits limits;
  limits.v_oc_volts_min = 11.5;
  limits.z_out_ohms_max = 350000.0;
  limits.ripple_pp_volts_max = 0.4;  // equality passes
  limits.effective_capacitance_farads_min = 1e-6;
  const Verdict v = judge_sweep(f, limits);
  CHECK_FALSE(v.passed);
  REQUIRE(v.checks.size() == 4);
  CHECK(v.checks[0].passed);
  CHECK(v.checks[0].reason == "v_oc_volts 12.1 >= min 11.5");
  CHECK_FALSE(v.checks[1].passed);
  CHECK(v.checks[1].reason == "z_out_ohms 412000 > max 350000");
  CHECK(v.checks[2].passed);
  CHECK(v.checks[3].reason == "effective_capacitance_farads 9e-07 < min 1e-06");
  CHECK(v.failure_summary() ==
        "z_out_ohms 412000 > max 350000; effective_capacitance_farads 9e-07 < min 1e-06");
}

TEST_CASE("a figure that could not be computed fails its limit with that reason", "[analysis]") {
  SweepFigures f;
  f.z_out_ohms = Computed<double>::missing("Z_out: needs at least 2 distinct load currents");
  Limits limits;
  limits.z_out_ohms_max = 350000.0;
  const Verdict v = judge_sweep(f, limits);
  CHECK_FALSE(v.passed);
  REQUIRE(v.checks.size() == 1);
  CHECK(v.checks[0].reason ==
        "z_out_ohms not computed: Z_out: needs at least 2 distinct load currents (max 350000)");
  CHECK_FALSE(v.checks[0].measured.has_value());
}

TEST_CASE("no limits: passes with no checks; drift limits on the magnitude", "[analysis]") {
  CHECK(judge_sweep(SweepFigures{}, Limits{}).passed);
  DriftFigures d;
  d.v_oc_volts_per_hour = Computed<double>::of(-0.052);
  d.z_out_ohms_per_hour = Computed<double>::of(10.0);
  Limits limits;
  limits.v_oc_drift_volts_per_hour_max = 0.05;
  limits.z_out_drift_ohms_per_hour_max = 100.0;
  const Verdict v = judge_drift(d, limits);
  CHECK_FALSE(v.passed);
  CHECK(v.checks[0].reason == "|v_oc_drift_volts_per_hour| 0.052 > max 0.05");
  CHECK(v.checks[1].passed);
  const Verdict both = combine(judge_sweep(SweepFigures{}, Limits{}), v);
  CHECK_FALSE(both.passed);
  CHECK(both.checks.size() == 2);
}

TEST_CASE("limits are validated by name", "[analysis]") {
  Limits limits;
  limits.z_out_ohms_max = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(validate_limits(limits), Catch::Contains("limits.z_out_ohms_max is not finite"));
  limits = Limits{};
  limits.v_oc_volts_min = 12.0;
  limits.v_oc_volts_max = 11.0;
  CHECK_THROWS_WITH(validate_limits(limits), Catch::Contains("v_oc_volts_min (12) > limits.v_oc_volts_max (11)"));
  limits = Limits{};
  limits.ripple_drift_volts_per_hour_max = 0.0;
  CHECK_THROWS_WITH(judge_drift(DriftFigures{}, limits), Catch::Contains("ripple_drift_volts_per_hour_max must be > 0"));
}
