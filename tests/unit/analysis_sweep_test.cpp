// Unit tests for daemon/analysis/sweep_analysis.h: one sweep through every figure.

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/sweep_analysis.h"

using namespace zout::analysis;

namespace {

// A 3-stage cascade, 2.5 V peak, 1 kHz, 1 µF: V = 14.0 − 22.5 kΩ·I − 0.2 V·ln(1 + I/1 µA).
double unit_volts(double amps) { return 14.0 - 22.5e3 * amps - 0.2 * std::log1p(amps / 1e-6); }

SweepParameters parameters() {
  SweepParameters p;
  p.stages = 3;
  p.capacitance_farads = 1e-6;
  p.frequency_hz = 1e3;
  p.amplitude_volts_peak = 2.5;
  return p;
}

std::vector<SweepPoint> sweep() {
  std::vector<SweepPoint> points;
  for (double ua : {0.0, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 150.0, 200.0}) {
    SweepPoint s;
    s.set_amps = ua * 1e-6;
    s.measured_amps = ua * 1e-6 * 1.001;  // the load reads 0.1 % high
    s.dc_volts = unit_volts(*s.measured_amps);
    s.ac_rms_volts = 0.6 * ua / 100.0 / (2.0 * std::sqrt(3.0));
    points.push_back(s);
  }
  points.back().ripple_samples_volts = {9.0, 9.7, 9.3, 8.9};  // sampled at the rated step
  return points;
}

}  // namespace

TEST_CASE("a sweep yields every figure, consistent with the parts", "[analysis]") {
  const std::vector<SweepPoint> points = sweep();
  const SweepResult r = analyze_sweep(points, parameters());

  REQUIRE(r.v_oc);
  CHECK(r.v_oc->from_zero_current_points);
  CHECK(r.v_oc->volts.value == Approx(14.0));

  REQUIRE(r.z_out);
  // Operating current: the smallest non-zero step, at the current the load measured.
  CHECK(r.z_out->operating_amps == Approx(1.001e-6));

  CHECK(r.model_source_ohms == Approx(22e3));
  REQUIRE(r.linear_region);
  // Upper half of the 9 distinct non-zero steps: 20..200 µA (as measured), a straight line
  // through them by ordinary least squares, computed here in closed form.
  CHECK(r.linear_region->from_amps == Approx(20.02e-6));
  CHECK(r.linear_region->points_used == 5);
  {
    double sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (std::size_t k = 5; k < points.size(); ++k) {
      const double x = *points[k].measured_amps, y = points[k].dc_volts;
      sx += x; sy += y; sxx += x * x; sxy += x * y;
    }
    const double n = 5.0;
    CHECK(r.linear_region->source_ohms.value == Approx(-(n * sxy - sx * sy) / (n * sxx - sx * sx)));
  }
  REQUIRE(r.effective_capacitance_farads);
  CHECK(r.effective_capacitance_farads->value ==
        Approx(effective_capacitance_farads(3, 1e3, r.linear_region->source_ohms.value)));

  REQUIRE(r.diode_curve);
  CHECK(r.diode_curve->model == DiodeCurveModel::full);
  CHECK(r.diode_curve->series_ohms->value == Approx(22.5e3).epsilon(1e-6));
  CHECK(r.diode_curve->emission_coefficient->value * r.diode_curve->thermal_volts ==
        Approx(0.2).epsilon(1e-6));

  REQUIRE(r.mean_diode_drop_volts);
  CHECK(r.mean_diode_drop_volts.value() == Approx((15.0 - 14.0) / 6.0));

  REQUIRE(r.points.size() == points.size());
  CHECK(r.points[7].ripple_method == RippleMethod::sawtooth_from_rms);
  CHECK(r.points[7].ripple_pp_volts.value() == Approx(0.6));
  CHECK(r.points[7].predicted_sag_volts == Approx(predicted_sag_volts(3, 100.1e-6, 1e3, 1e-6)));
  CHECK(r.points[7].predicted_ripple_pp_volts == Approx(0.6 * 1.001));
  CHECK(r.points[7].measured_sag_volts.value() == Approx(14.0 - points[7].dc_volts));
  CHECK(r.points[9].ripple_method == RippleMethod::sampled);
  CHECK(r.points[9].ripple_pp_volts.value() == Approx(0.8));

  CHECK(r.rated_amps == Approx(200e-6));
  REQUIRE(r.ripple_pp_volts_at_rated);
  CHECK(r.ripple_pp_volts_at_rated.value() == Approx(0.8));
  REQUIRE(r.chord_z_ohms);
  CHECK(r.chord_z_ohms->value == Approx((14.0 - points[9].dc_volts) / 200.2e-6));

  CHECK(r.verdict.passed);
  CHECK(r.verdict.checks.empty());
}

TEST_CASE("the sweep verdict checks the plan's limits", "[analysis]") {
  SweepParameters p = parameters();
  p.limits.v_oc_min_volts = 13.5;
  p.limits.ripple_pp_max_volts = 0.5;
  p.limits.diode_drop_max_volts = 0.2;
  const SweepResult r = analyze_sweep(sweep(), p);
  CHECK_FALSE(r.verdict.passed);
  CHECK(r.verdict.failure_summary() == "ripple pp 800 mV > 500 mV max");
}

TEST_CASE("a sweep with no zero step and a rated load off the steps", "[analysis]") {
  std::vector<SweepPoint> points = sweep();
  points.erase(points.begin());
  SweepParameters p = parameters();
  p.rated_amps = 300e-6;
  p.limits.ripple_pp_max_volts = 1.0;
  const SweepResult r = analyze_sweep(points, p);
  REQUIRE(r.v_oc);
  CHECK_FALSE(r.v_oc->from_zero_current_points);
  REQUIRE_FALSE(r.ripple_pp_volts_at_rated);
  CHECK_THAT(r.ripple_pp_volts_at_rated.reason(), Catch::Contains("no step within 5% of the rated load 0.0003 A"));
  CHECK_FALSE(r.verdict.passed);
  CHECK_THAT(r.verdict.failure_summary(), Catch::Contains("ripple pp not computed"));
}

TEST_CASE("an empty sweep gives reasons, not values", "[analysis]") {
  SweepParameters p = parameters();
  p.limits.z_out_max_ohms = 1e5;
  const SweepResult r = analyze_sweep(std::vector<SweepPoint>{}, p);
  CHECK_FALSE(r.v_oc);
  CHECK_FALSE(r.z_out);
  CHECK_FALSE(r.diode_curve);
  CHECK_FALSE(r.verdict.passed);
  CHECK_THAT(r.verdict.failure_summary(), Catch::Contains("no non-zero load step"));
}

TEST_CASE("invalid sweep input throws naming the field", "[analysis]") {
  std::vector<SweepPoint> points = sweep();
  points[4].dc_volts = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(analyze_sweep(points, parameters()), Catch::Contains("points[4].dc_volts is not finite"));
  points = sweep();
  points[2].ac_rms_volts = -1.0;
  CHECK_THROWS_WITH(analyze_sweep(points, parameters()), Catch::Contains("points[2].ac_rms_volts must be >= 0"));
  SweepParameters p = parameters();
  p.stages = 0;
  CHECK_THROWS_WITH(analyze_sweep(sweep(), p), Catch::Contains("stages must be >= 1 (0)"));
  p = parameters();
  p.capacitance_farads = 0.0;
  CHECK_THROWS_WITH(analyze_sweep(sweep(), p), Catch::Contains("capacitance_farads must be > 0"));
}
