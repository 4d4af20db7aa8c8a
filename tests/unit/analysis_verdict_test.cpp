// Unit tests for daemon/analysis/verdict.h: a reason per limit, in the words a person reads
// (quantity name, SI prefix and unit on both sides), missing figures fail.

#include <catch2/catch.hpp>

#include <limits>
#include <stdexcept>

#include "daemon/analysis/verdict.h"

using namespace zout::analysis;

TEST_CASE("every set limit is checked with its reason", "[analysis][verdict]") {
  SweepFigures f;
  f.v_oc_volts = Computed<double>::of(12.1);
  f.z_out_ohms = Computed<double>::of(412000.0);
  f.ripple_pp_volts_at_rated = Computed<double>::of(0.4);
  f.effective_capacitance_farads = Computed<double>::of(0.9e-6);
  f.diode_drop_volts = Computed<double>::of(0.45);
  Limits limits;
  limits.v_oc_min_volts = 11.5;
  limits.z_out_max_ohms = 350000.0;
  limits.ripple_pp_max_volts = 0.4;  // equality passes
  limits.effective_capacitance_min_farads = 1e-6;
  const Verdict v = judge_sweep(f, limits);
  CHECK_FALSE(v.passed);
  REQUIRE(v.checks.size() == 4);
  CHECK(v.checks[0].passed);
  CHECK(v.checks[0].name == "v_oc_min_volts");
  CHECK(v.checks[0].reason == "V_oc 12.10 V >= 11.5 V min");
  CHECK_FALSE(v.checks[1].passed);
  CHECK(v.checks[1].name == "z_out_max_ohms");
  CHECK(v.checks[1].limit == 350000.0);
  CHECK(v.checks[1].measured == 412000.0);
  CHECK(v.checks[1].reason == "Z_out 412 kΩ > 350 kΩ max");
  CHECK(v.checks[2].passed);
  CHECK(v.checks[2].name == "ripple_pp_max_volts");
  CHECK(v.checks[2].reason == "ripple pp 400 mV <= 400 mV max");
  CHECK(v.checks[3].name == "effective_capacitance_min_farads");
  CHECK(v.checks[3].reason == "effective C 900 nF < 1 µF min");
  CHECK(v.failure_summary() == "Z_out 412 kΩ > 350 kΩ max; effective C 900 nF < 1 µF min");
}

TEST_CASE("failure reasons read as a person writes them, the limit as the plan gives it", "[analysis][verdict]") {
  SweepFigures f;
  f.v_oc_volts = Computed<double>::of(381.93);
  f.z_out_ohms = Computed<double>::of(239011.0);
  f.effective_capacitance_farads = Computed<double>::of(18.9e-9);
  f.diode_drop_volts = Computed<double>::of(0.812);
  Limits limits;
  limits.v_oc_min_volts = 383.0;
  limits.v_oc_max_volts = 400.0;
  limits.z_out_max_ohms = 225000.0;
  limits.effective_capacitance_min_farads = 21.5e-9;
  limits.diode_drop_max_volts = 0.75;
  const Verdict v = judge_sweep(f, limits);
  REQUIRE(v.checks.size() == 5);
  CHECK(v.checks[0].reason == "V_oc 381.9 V < 383 V min");
  CHECK(v.checks[1].reason == "V_oc 381.9 V <= 400 V max");
  CHECK(v.checks[2].reason == "Z_out 239 kΩ > 225 kΩ max");
  CHECK(v.checks[3].reason == "effective C 18.9 nF < 21.5 nF min");
  CHECK(v.checks[4].name == "diode_drop_max_volts");
  CHECK(v.checks[4].reason == "diode drop 812 mV > 750 mV max");
}

TEST_CASE("a measured value that would read as its limit gets more digits", "[analysis][verdict]") {
  SweepFigures f;
  f.z_out_ohms = Computed<double>::of(225300.0);
  f.v_oc_volts = Computed<double>::of(382.99);
  Limits limits;
  limits.z_out_max_ohms = 225000.0;
  limits.v_oc_min_volts = 383.0;
  const Verdict v = judge_sweep(f, limits);
  REQUIRE(v.checks.size() == 2);
  CHECK(v.checks[0].reason == "V_oc 382.99 V < 383 V min");
  CHECK(v.checks[1].reason == "Z_out 225.3 kΩ > 225 kΩ max");
  // Equal to the limit: passes, and reads the same on both sides.
  f.z_out_ohms = Computed<double>::of(225000.0);
  limits.v_oc_min_volts.reset();
  CHECK(judge_sweep(f, limits).checks[0].reason == "Z_out 225 kΩ <= 225 kΩ max");
}

TEST_CASE("a figure that could not be computed fails its limit with that reason", "[analysis][verdict]") {
  SweepFigures f;
  f.z_out_ohms = Computed<double>::missing("Z_out: needs at least 2 distinct load currents");
  Limits limits;
  limits.z_out_max_ohms = 350000.0;
  const Verdict v = judge_sweep(f, limits);
  CHECK_FALSE(v.passed);
  REQUIRE(v.checks.size() == 1);
  CHECK(v.checks[0].reason == "Z_out not computed: Z_out: needs at least 2 distinct load currents (max 350 kΩ)");
  CHECK_FALSE(v.checks[0].measured.has_value());
  f.z_out_ohms = Computed<double>::of(std::numeric_limits<double>::infinity());
  CHECK(judge_sweep(f, limits).checks[0].reason == "Z_out is not finite (max 350 kΩ)");
  CHECK_FALSE(judge_sweep(f, limits).passed);
}

TEST_CASE("no limits: passes with no checks, drift limits on the magnitude", "[analysis][verdict]") {
  CHECK(judge_sweep(SweepFigures{}, Limits{}).passed);
  DriftFigures d;
  d.v_oc_volts_per_hour = Computed<double>::of(-0.052);
  d.z_out_ohms_per_hour = Computed<double>::of(10.0);
  Limits limits;
  limits.v_oc_drift_max_volts_per_hour = 0.05;
  limits.z_out_drift_max_ohms_per_hour = 100.0;
  const Verdict v = judge_drift(d, limits);
  CHECK_FALSE(v.passed);
  CHECK(v.checks[0].name == "v_oc_drift_max_volts_per_hour");
  CHECK(v.checks[0].reason == "|V_oc drift| 52.0 mV/h > 50 mV/h max");
  CHECK(v.checks[1].passed);
  CHECK(v.checks[1].reason == "|Z_out drift| 10.0 Ω/h <= 100 Ω/h max");
  const Verdict both = combine(judge_sweep(SweepFigures{}, Limits{}), v);
  CHECK_FALSE(both.passed);
  CHECK(both.checks.size() == 2);
}

TEST_CASE("limits are validated by the plan file's names", "[analysis][verdict]") {
  Limits limits;
  limits.z_out_max_ohms = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(validate_limits(limits), Catch::Contains("limits.z_out_max_ohms is not finite"));
  limits = Limits{};
  limits.v_oc_min_volts = 12.0;
  limits.v_oc_max_volts = 11.0;
  CHECK_THROWS_WITH(validate_limits(limits), Catch::Contains("limits.v_oc_min_volts (12) > limits.v_oc_max_volts (11)"));
  limits = Limits{};
  limits.ripple_drift_max_volts_per_hour = 0.0;
  CHECK_THROWS_WITH(judge_drift(DriftFigures{}, limits), Catch::Contains("limits.ripple_drift_max_volts_per_hour must be > 0"));
}
