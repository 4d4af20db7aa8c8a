// Unit tests for daemon/analysis/impedance.h (local Z_out, V_oc, chord impedance) and
// source_resistance.h (the linear region).

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "daemon/analysis/impedance.h"
#include "daemon/analysis/source_resistance.h"

using namespace zout::analysis;

namespace {

// V = 12 − 20e3·I − 3e7·I²  (a curve whose slope magnitude grows with I).
double quadratic_volts(double amps) { return 12.0 - 20e3 * amps - 3e7 * amps * amps; }

std::vector<IvPoint> quadratic_curve() {
  std::vector<IvPoint> points;
  for (double ua : {0.0, 20.0, 40.0, 60.0, 80.0, 100.0, 150.0, 200.0}) {
    points.push_back({ua * 1e-6, quadratic_volts(ua * 1e-6), 0.0});
  }
  return points;
}

}  // namespace

TEST_CASE("Z_out of a quadratic curve is its exact slope at the operating current", "[analysis]") {
  const std::vector<IvPoint> points = quadratic_curve();
  ImpedanceOptions options;
  options.operating_amps = 65e-6;
  const Computed<ImpedanceFit> z = output_impedance(points, options);
  REQUIRE(z);
  CHECK(z->degree == 2);
  CHECK(z->points_used == 4);
  CHECK(z->z_out_ohms.value == Approx(20e3 + 2 * 3e7 * 65e-6).epsilon(1e-9));
  CHECK(z->volts.value == Approx(quadratic_volts(65e-6)).epsilon(1e-12));
  // Exact data: the residual-scaled standard error is (numerically) zero.
  REQUIRE(z->z_out_ohms.standard_error);
  CHECK(*z->z_out_ohms.standard_error < 1e-6);
  // The 4 nearest currents: 60, 80, 40 and 100 µA.
  CHECK(z->window_low_amps == Approx(40e-6));
  CHECK(z->window_high_amps == Approx(100e-6));
}

TEST_CASE("the default operating current is the smallest non-zero one", "[analysis]") {
  const Computed<ImpedanceFit> z = output_impedance(quadratic_curve());
  REQUIRE(z);
  CHECK(z->operating_amps == Approx(20e-6));
  CHECK(z->z_out_ohms.value == Approx(20e3 + 2 * 3e7 * 20e-6).epsilon(1e-9));
}

TEST_CASE("with 2 or 3 distinct currents in the window the fit is a line", "[analysis]") {
  std::vector<IvPoint> points{{10e-6, 11.0, 0}, {20e-6, 10.8, 0}, {30e-6, 10.6, 0}};
  const Computed<ImpedanceFit> z = output_impedance(points);
  REQUIRE(z);
  CHECK(z->degree == 1);
  CHECK(z->z_out_ohms.value == Approx(20e3));

  // Repeated readings: 4 points at 2 currents are still a line, with a standard error.
  std::vector<IvPoint> repeated{{10e-6, 11.01, 0}, {10e-6, 10.99, 0}, {20e-6, 10.81, 0}, {20e-6, 10.79, 0}};
  const Computed<ImpedanceFit> zr = output_impedance(repeated);
  REQUIRE(zr);
  CHECK(zr->degree == 1);
  CHECK(zr->z_out_ohms.value == Approx(20e3));
  REQUIRE(zr->z_out_ohms.standard_error);
  CHECK(*zr->z_out_ohms.standard_error > 0.0);
}

TEST_CASE("fit_max_amps keeps high currents out of the local fit", "[analysis]") {
  std::vector<IvPoint> points = quadratic_curve();
  points.push_back({210e-6, 0.0, 0});  // wildly off: must not be used
  ImpedanceOptions options;
  options.operating_amps = 200e-6;
  options.fit_max_amps = 200e-6;
  const Computed<ImpedanceFit> z = output_impedance(points, options);
  REQUIRE(z);
  CHECK(z->z_out_ohms.value == Approx(20e3 + 2 * 3e7 * 200e-6).epsilon(1e-9));
  CHECK(z->window_high_amps == Approx(200e-6));
}

TEST_CASE("Z_out is missing with the reason when the data cannot give it", "[analysis]") {
  const std::vector<IvPoint> only_zero{{0.0, 12.0, 0}, {0.0, 12.01, 0}};
  const Computed<ImpedanceFit> none = output_impedance(only_zero);
  REQUIRE_FALSE(none);
  CHECK_THAT(none.reason(), Catch::Contains("no point with a non-zero load current"));

  const std::vector<IvPoint> one{{50e-6, 11.0, 0}};
  const Computed<ImpedanceFit> single = output_impedance(one);
  REQUIRE_FALSE(single);
  CHECK_THAT(single.reason(), Catch::Contains("at least 2 distinct load currents"));
  CHECK_THROWS_AS(single.value(), std::logic_error);
}

TEST_CASE("invalid points and options throw naming the field", "[analysis]") {
  std::vector<IvPoint> points = quadratic_curve();
  points[3].volts = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(output_impedance(points), Catch::Contains("points[3].volts is not finite"));
  points = quadratic_curve();
  points[1].current_amps = -1e-6;
  CHECK_THROWS_WITH(output_impedance(points), Catch::Contains("points[1].current_amps must be >= 0"));
  ImpedanceOptions options;
  options.window_currents = 1;
  CHECK_THROWS_WITH(output_impedance(quadratic_curve(), options), Catch::Contains("window_currents"));
}

TEST_CASE("V_oc is the mean of the zero-current points", "[analysis]") {
  std::vector<IvPoint> points = quadratic_curve();
  points.push_back({0.0, 12.02, 0});
  points.push_back({0.0, 11.98, 0});
  const Computed<OpenCircuit> voc = open_circuit_volts(points);
  REQUIRE(voc);
  CHECK(voc->from_zero_current_points);
  CHECK(voc->points_used == 3);
  CHECK(voc->volts.value == Approx(12.0));
  // Sample standard deviation 0.02 over 3 readings → standard error 0.02/√3.
  REQUIRE(voc->volts.standard_error);
  CHECK(*voc->volts.standard_error == Approx(0.02 / std::sqrt(3.0)));
}

TEST_CASE("V_oc with known sigmas is the weighted mean", "[analysis]") {
  const std::vector<IvPoint> points{{0.0, 12.0, 0.01}, {0.0, 12.3, 0.02}, {50e-6, 11.0, 0.01}};
  const Computed<OpenCircuit> voc = open_circuit_volts(points);
  REQUIRE(voc);
  // Weights 1e4 and 2.5e3: (12·1e4 + 12.3·2.5e3)/1.25e4 = 12.06; SE = 1/√1.25e4.
  CHECK(voc->volts.value == Approx(12.06));
  CHECK(*voc->volts.standard_error == Approx(1.0 / std::sqrt(1.25e4)));
}

TEST_CASE("without a zero-current point V_oc comes from the fit at 0 A", "[analysis]") {
  std::vector<IvPoint> points = quadratic_curve();
  points.erase(points.begin());
  const Computed<OpenCircuit> voc = open_circuit_volts(points);
  REQUIRE(voc);
  CHECK_FALSE(voc->from_zero_current_points);
  CHECK(voc->volts.value == Approx(12.0).epsilon(1e-9));
}

TEST_CASE("chord impedance to the rated load", "[analysis]") {
  const std::vector<IvPoint> points = quadratic_curve();
  const Computed<Estimate> z = chord_impedance_ohms(Estimate{12.0, 0.001}, points, 200e-6);
  REQUIRE(z);
  CHECK(z->value == Approx((12.0 - quadratic_volts(200e-6)) / 200e-6));
  CHECK_FALSE(z->standard_error.has_value());  // the points carry no sigma
  const Computed<Estimate> far = chord_impedance_ohms(Estimate{12.0, std::nullopt}, points, 500e-6);
  REQUIRE_FALSE(far);
  CHECK_THAT(far.reason(), Catch::Contains("no point within 5% of the rated load"));
}

TEST_CASE("linear region: slope over the upper half of the currents", "[analysis]") {
  // A knee below 50 µA, then a straight 22 kΩ line.
  std::vector<IvPoint> points;
  for (double ua : {0.0, 10.0, 25.0, 50.0, 100.0, 150.0, 200.0, 250.0, 300.0}) {
    const double i = ua * 1e-6;
    const double knee = ua < 50.0 ? 0.3 * (1.0 - ua / 50.0) : 0.0;
    points.push_back({i, 12.0 - 22e3 * i + knee + (ua == 200.0 ? 0.002 : 0.0), 0.0});
  }
  const Computed<LinearRegionFit> fit = linear_region_fit(points);
  REQUIRE(fit);
  CHECK(fit->from_amps == Approx(150e-6));  // 8 distinct non-zero currents: the upper 4
  CHECK(fit->points_used == 4);
  CHECK(fit->source_ohms.value == Approx(22e3).epsilon(0.01));
  REQUIRE(fit->source_ohms.standard_error);
  CHECK(*fit->source_ohms.standard_error > 0.0);

  LinearRegionOptions options;
  options.min_amps = 45e-6;
  const Computed<LinearRegionFit> from50 = linear_region_fit(points, options);
  REQUIRE(from50);
  CHECK(from50->points_used == 6);

  const std::vector<IvPoint> one{{0.0, 12.0, 0}, {100e-6, 10.0, 0}};
  const Computed<LinearRegionFit> too_few = linear_region_fit(one);
  REQUIRE_FALSE(too_few);
  CHECK_THAT(too_few.reason(), Catch::Contains("at least 2 distinct non-zero load currents"));
}

TEST_CASE("linear region with known sigmas uses absolute weights", "[analysis]") {
  const std::vector<IvPoint> points{{100e-6, 9.8, 0.001}, {200e-6, 7.6, 0.001}, {300e-6, 5.4, 0.001}};
  LinearRegionOptions options;
  options.min_amps = 100e-6;
  const Computed<LinearRegionFit> fit = linear_region_fit(points, options);
  REQUIRE(fit);
  CHECK(fit->source_ohms.value == Approx(22e3));
  // (XᵀWX)⁻¹ for x = 1e-4, 2e-4, 3e-4 and w = 1e6: var(slope) = 1/(w·Σ(x − x̄)²) = 1/(1e6·2e-8).
  CHECK(*fit->source_ohms.standard_error == Approx(std::sqrt(1.0 / (1e6 * 2e-8))));
}
