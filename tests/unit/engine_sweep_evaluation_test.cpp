// evaluate_sweep (sweep_evaluation.h) on points of a straight-line unit, V = V_oc − R·I: the
// figures for the store, the verdict against the plan's limits, and a soak's control bands.
// Pure: no bench, no store.
#include <catch2/catch.hpp>

#include <cmath>

#include "daemon/engine/sweep_evaluation.h"
#include "daemon/plan/plan.h"
#include "tests/support/fake_bench.h"

using namespace zout;
using zout::test::fast_plan_json;

namespace {

// One sweep of the fast plan's steps on a unit with open-circuit `v_oc_volts` and source
// resistance `r_ohms`, ripple `ripple_rms_volts` read at the rated (last) step.
std::vector<MeasuredPoint> linear_sweep(const Plan& plan, double v_oc_volts, double r_ohms,
                                        double ripple_rms_volts = 0.04) {
  std::vector<MeasuredPoint> points;
  for (std::size_t k = 0; k < plan.load.steps.size(); ++k) {
    MeasuredPoint p;
    p.step_index = static_cast<int>(k);
    p.load_amps = plan.load.steps[k];
    p.dc_volts = v_oc_volts - r_ohms * p.load_amps;
    p.load_volts = p.dc_volts;
    if (plan.reads_ripple_at(k)) {
      p.ripple_rms_volts = ripple_rms_volts;
      p.ripple_pp_volts = 2.0 * std::sqrt(3.0) * ripple_rms_volts;
    }
    points.push_back(p);
  }
  return points;
}

}  // namespace

TEST_CASE("evaluate_sweep: a straight-line unit gives its V_oc and Z_out and passes the plan's limits", "[engine]") {
  const Plan plan = parse_plan(fast_plan_json(), "test plan");
  std::vector<analysis::SoakSample> history;
  const SweepEvaluation e = evaluate_sweep(plan, linear_sweep(plan, 380.0, 200e3), history, 0.0);

  REQUIRE(e.record.v_oc_volts.value() == Approx(380.0).epsilon(1e-9));
  REQUIRE(e.record.z_out_ohms.value() == Approx(200e3).epsilon(1e-6));
  REQUIRE(e.record.rated_load_amps.value() == Approx(4e-4));
  REQUIRE(e.record.ripple_rated_rms_volts.value() == Approx(0.04));
  REQUIRE(e.record.sweep_id == 0);  // the caller fills it
  REQUIRE(e.passed);
  REQUIRE(e.record.verdict_reasons.empty());
  REQUIRE(e.alarms.empty());
  REQUIRE(e.record.verdict == store::Verdict::pass);
  REQUIRE(e.notification(1).at("verdict") == "pass");
  REQUIRE(e.notification(1).at("v_oc_volts").get<double>() == Approx(380.0).epsilon(1e-9));
  REQUIRE(e.notification(1).at("z_out_ohms").get<double>() == Approx(200e3).epsilon(1e-6));
  // Not a soak: no drift figures, but the sweep joins the history all the same.
  REQUIRE(e.notification(1).at("v_oc_drift_volts_per_hour").is_null());
  REQUIRE(history.size() == 1);
  REQUIRE(history[0].v_oc_volts.value() == Approx(380.0).epsilon(1e-9));
}

TEST_CASE("evaluate_sweep: a V_oc under the minimum and a Z_out over the maximum fail, one reason each", "[engine]") {
  const Plan plan = parse_plan(fast_plan_json(), "test plan");
  std::vector<analysis::SoakSample> history;
  // 365 V is under v_oc_min_volts 370; 300 kΩ over z_out_max_ohms 250 kΩ.
  const SweepEvaluation e = evaluate_sweep(plan, linear_sweep(plan, 365.0, 300e3), history, 0.0);
  REQUIRE_FALSE(e.passed);
  REQUIRE(e.record.verdict == store::Verdict::fail);
  REQUIRE(e.record.verdict_reasons.size() == 2);
  REQUIRE(e.record.verdict_reasons == std::vector<std::string>{"V_oc 365.0 V < 370 V min", "Z_out 300 kΩ > 250 kΩ max"});
  REQUIRE(e.notification(1).at("verdict") == "fail");
  REQUIRE(e.notification(1).at("verdict_reasons") == nlohmann::json(e.record.verdict_reasons));
}

TEST_CASE("evaluate_sweep: a soak sweep outside the baseline's control band raises an alarm", "[engine]") {
  const Plan plan = parse_plan(fast_plan_json(3, 0.0), "test plan");
  REQUIRE(plan.repeat.baseline_sweeps == 2);
  std::vector<analysis::SoakSample> history;
  // Baseline: V_oc 380.00 and 380.02 V → mean 380.01, s = 0.01414, band ±3s = [379.968, 380.052]
  // (Shewhart individuals band, common practice; see daemon/analysis/drift.h).
  const auto first = evaluate_sweep(plan, linear_sweep(plan, 380.00, 200e3, 0.040), history, 0.0);
  const auto second = evaluate_sweep(plan, linear_sweep(plan, 380.02, 201e3, 0.041), history, 600.0);
  REQUIRE(first.alarms.empty());
  REQUIRE(second.alarms.empty());  // no band is judged before the baseline is complete

  SECTION("inside the band: no alarm, and the drift slope appears with the third sweep") {
    const auto third = evaluate_sweep(plan, linear_sweep(plan, 380.01, 200.5e3, 0.0405), history, 1200.0);
    REQUIRE(third.alarms.empty());
    REQUIRE(third.passed);
    REQUIRE(history.size() == 3);
    // OLS slope of (0 s, 380.00), (600 s, 380.02), (1200 s, 380.01): 0.005 V per 600 s = 0.03 V/h.
    REQUIRE(third.record.v_oc_drift_volts_per_hour.value() == Approx(0.03).epsilon(1e-6));
  }
  SECTION("V_oc outside the band: one alarm naming it; the verdict is still the limits'") {
    const auto third = evaluate_sweep(plan, linear_sweep(plan, 381.0, 200.5e3, 0.0405), history, 1200.0);
    REQUIRE(third.alarms.size() == 1);
    REQUIRE_THAT(third.alarms[0], Catch::StartsWith("V_oc 381.0 V outside its control band [380.0 V, 380.1 V]") &&
                                      Catch::Contains("at sweep 3"));
    REQUIRE(third.passed);  // fail_on_drift_alarm is the executor's business
    REQUIRE(third.notification(1).at("alarms") == nlohmann::json(third.alarms));
  }
}
