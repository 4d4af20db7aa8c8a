// Unit tests for the settling detectors (daemon/analysis/settling.h and one header per
// detector) and the exponential-approach fit they rely on (exponential_fit.h).

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <memory>
#include <stdexcept>
#include <vector>

#include "daemon/analysis/exponential_fit.h"
#include "daemon/analysis/fixed_dwell_detector.h"
#include "daemon/analysis/predictive_detector.h"
#include "daemon/analysis/settling.h"
#include "daemon/analysis/stable_window_detector.h"

using namespace zout::analysis;

namespace {

// 10 V + 1 V·e^(−t/2 s), read every 0.5 s.
double approach(double t) { return 10.0 + 1.0 * std::exp(-t / 2.0); }

struct Stop {
  SettleDecision decision;
  double time_s;
};

Stop run(SettlingDetector& detector, double step_s, int max_readings) {
  for (int k = 1; k <= max_readings; ++k) {
    const double t = k * step_s;
    const SettleDecision d = detector.add_reading(t, approach(t));
    if (d.status != SettleStatus::keep_going) return {d, t};
  }
  return {SettleDecision{}, -1.0};
}

}  // namespace

TEST_CASE("fixed dwell settles at the first reading at or after the dwell", "[analysis]") {
  FixedDwellDetector detector(2.0, 10.0);
  CHECK(detector.add_reading(0.7, 10.5).status == SettleStatus::keep_going);
  CHECK(detector.add_reading(1.4, 10.3).status == SettleStatus::keep_going);
  const SettleDecision d = detector.add_reading(2.1, 10.2);
  CHECK(d.status == SettleStatus::settled);
  CHECK(d.volts == 10.2);
  CHECK(detector.finished());
  CHECK_THROWS_AS(detector.add_reading(2.8, 10.1), std::logic_error);
}

TEST_CASE("fixed dwell longer than max_s gives up at max_s", "[analysis]") {
  FixedDwellDetector detector(20.0, 5.0);
  const Stop stop = run(detector, 1.0, 30);
  CHECK(stop.decision.status == SettleStatus::gave_up);
  CHECK(stop.time_s == 5.0);
  CHECK(stop.decision.volts == approach(5.0));
}

TEST_CASE("stable window settles when k readings agree within tolerance", "[analysis]") {
  StableWindowDetector detector(6, 0.01, 60.0);
  const Stop stop = run(detector, 0.5, 200);
  REQUIRE(stop.decision.status == SettleStatus::settled);
  // Spread over 6 readings (2.5 s): e^(−t/2)·(e^1.25 − 1) <= 0.01 ⇔ t >= 11.04 s → 11.5 s.
  CHECK(stop.time_s == Approx(11.5));
  double mean = 0.0;
  for (double t = 9.0; t <= 11.5; t += 0.5) mean += approach(t) / 6.0;
  CHECK(stop.decision.volts == Approx(mean));
}

TEST_CASE("stable window gives up at max_s with the latest reading", "[analysis]") {
  StableWindowDetector detector(4, 1e-6, 3.0);
  const Stop stop = run(detector, 0.5, 200);
  CHECK(stop.decision.status == SettleStatus::gave_up);
  CHECK(stop.time_s == 3.0);
  CHECK(stop.decision.volts == approach(3.0));
}

TEST_CASE("predictive stops at the first reading inside the band on a clean curve", "[analysis]") {
  PredictiveDetector::Options options;
  options.tolerance_volts = 0.01;
  options.max_s = 60.0;
  PredictiveDetector detector(options);
  const Stop stop = run(detector, 0.5, 200);
  REQUIRE(stop.decision.status == SettleStatus::settled);
  // Entry into ±10 mV of 10 V: e^(−t/2) = 0.01 → t = 2·ln 100 = 9.21 s; next reading 9.5 s.
  CHECK(stop.time_s == Approx(9.5));
  CHECK(stop.decision.volts == Approx(10.0).margin(1e-6));
}

TEST_CASE("predictive settles at once on a flat output", "[analysis]") {
  PredictiveDetector::Options options;
  options.tolerance_volts = 0.01;
  PredictiveDetector detector(options);
  SettleDecision d;
  int readings = 0;
  while (d.status == SettleStatus::keep_going && readings < 20) {
    ++readings;
    d = detector.add_reading(0.5 * readings, 10.0 + (readings % 2 ? 0.001 : -0.001));
  }
  CHECK(d.status == SettleStatus::settled);
  CHECK(readings == 5);  // min_fit_readings
  CHECK(d.volts == Approx(10.0).margin(0.002));
}

TEST_CASE("predictive keeps going on a straight drift and gives up at max_s", "[analysis]") {
  PredictiveDetector::Options options;
  options.tolerance_volts = 0.01;
  options.max_s = 10.0;
  PredictiveDetector detector(options);
  SettleDecision d;
  double t = 0.0;
  while (d.status == SettleStatus::keep_going) {
    t += 0.5;
    d = detector.add_reading(t, 10.0 + 0.1 * t);
  }
  CHECK(d.status == SettleStatus::gave_up);
  CHECK(t == 10.0);
  CHECK(d.volts == Approx(11.0));
}

TEST_CASE("detectors reject bad readings and settings", "[analysis]") {
  StableWindowDetector detector(3, 0.01, 10.0);
  detector.add_reading(1.0, 10.0);
  CHECK_THROWS_WITH(detector.add_reading(1.0, 10.0), Catch::Contains("time_s must increase"));
  CHECK_THROWS_WITH(detector.add_reading(2.0, std::numeric_limits<double>::quiet_NaN()),
                    Catch::Contains("volts is not finite"));
  CHECK_THROWS_WITH(StableWindowDetector(1, 0.01, 10.0), Catch::Contains("window_readings must be >= 2"));
  CHECK_THROWS_WITH(StableWindowDetector(3, 0.0, 10.0), Catch::Contains("tolerance_volts must be > 0"));
  CHECK_THROWS_WITH(FixedDwellDetector(1.0, 0.0), Catch::Contains("max_s must be > 0"));
  PredictiveDetector::Options options;
  options.min_fit_readings = 3;
  CHECK_THROWS_WITH(PredictiveDetector(options), Catch::Contains("min_fit_readings must be >= 4"));
}

TEST_CASE("make_settling_detector builds the plan's method", "[analysis]") {
  SettleSettings settings;
  settings.method = SettleSettings::Method::fixed;
  settings.dwell_s = 1.0;
  std::unique_ptr<SettlingDetector> fixed = make_settling_detector(settings);
  CHECK(fixed->add_reading(0.5, 1.0).status == SettleStatus::keep_going);
  CHECK(fixed->add_reading(1.0, 1.0).status == SettleStatus::settled);

  settings.method = SettleSettings::Method::window;
  settings.window_readings = 2;
  std::unique_ptr<SettlingDetector> window = make_settling_detector(settings);
  CHECK(window->add_reading(0.5, 1.0).status == SettleStatus::keep_going);
  CHECK(window->add_reading(1.0, 1.005).status == SettleStatus::settled);

  settings.method = SettleSettings::Method::predictive;
  std::unique_ptr<SettlingDetector> predictive = make_settling_detector(settings);
  CHECK(dynamic_cast<PredictiveDetector*>(predictive.get()) != nullptr);
  CHECK(std::string(to_string(SettleStatus::gave_up)) == "gave_up");
}

TEST_CASE("exponential approach fit recovers V_inf, A and tau from exact readings", "[analysis]") {
  std::vector<double> t, v;
  for (int k = 0; k < 12; ++k) {
    t.push_back(3.0 + 0.4 * k);
    v.push_back(5.0 - 0.8 * std::exp(-(t.back() - 3.0) / 1.7));
  }
  const ExponentialApproach fit = fit_exponential_approach(t, v);
  CHECK(fit.bound == ExponentialApproach::Bound::none);
  CHECK(fit.final_volts.value == Approx(5.0).epsilon(1e-9));
  CHECK(fit.amplitude_volts.value == Approx(-0.8).epsilon(1e-8));
  CHECK(fit.time_constant_s.value == Approx(1.7).epsilon(1e-8));
  CHECK(fit.reference_time_s == 3.0);
  CHECK(fit.deviation_volts(3.0 + 1.7) == Approx(-0.8 / std::exp(1.0)).epsilon(1e-8));
}

TEST_CASE("exponential approach fit names its bounds and its errors", "[analysis]") {
  const std::vector<double> t{0, 1, 2, 3, 4, 5};
  const std::vector<double> line{1, 2, 3, 4, 5, 6};
  CHECK(fit_exponential_approach(t, line).bound == ExponentialApproach::Bound::slowest);
  const std::vector<double> step{0, 5, 5, 5, 5, 5};
  const ExponentialApproach flat = fit_exponential_approach(t, step);
  CHECK(flat.bound == ExponentialApproach::Bound::fastest);
  CHECK(flat.final_volts.value == Approx(5.0));
  CHECK_THROWS_WITH(fit_exponential_approach(std::vector<double>{0, 1, 2}, std::vector<double>{1, 2, 3}),
                    Catch::Contains("at least 4 readings"));
  CHECK_THROWS_WITH(fit_exponential_approach(std::vector<double>{0, 1, 1, 2}, std::vector<double>{1, 2, 3, 4}),
                    Catch::Contains("must increase strictly"));
}
