// Unit tests for daemon/analysis/ripple.h.

#include <catch2/catch.hpp>

#include <cmath>
#include <limits>
#include <stdexcept>
#include <vector>

#include "daemon/analysis/ripple.h"

using namespace zout::analysis;

TEST_CASE("peak-to-peak from AC RMS assumes a sawtooth", "[analysis]") {
  CHECK(sawtooth_pp_from_rms_volts(0.1) == Approx(0.2 * std::sqrt(3.0)));
  CHECK(sawtooth_pp_from_rms_volts(0.0) == 0.0);
  CHECK_THROWS_WITH(sawtooth_pp_from_rms_volts(-0.1), Catch::Contains("ac_rms_volts must be >= 0"));
}

TEST_CASE("sampled peak-to-peak is max minus min", "[analysis]") {
  const std::vector<double> samples{10.0, 10.2, 9.95, 10.1, 10.05};
  CHECK(sampled_pp_volts(samples) == Approx(0.25));
  CHECK_THROWS_WITH(sampled_pp_volts(std::vector<double>{}), Catch::Contains("no samples"));
  const std::vector<double> bad{1.0, std::numeric_limits<double>::infinity()};
  CHECK_THROWS_WITH(sampled_pp_volts(bad), Catch::Contains("samples_volts[1] is not finite"));
}

TEST_CASE("AC RMS is the RMS about the mean", "[analysis]") {
  // A square wave ±0.1 V on 10 V: AC RMS 0.1 V.
  const std::vector<double> square{10.1, 9.9, 10.1, 9.9};
  CHECK(ac_rms_volts(square) == Approx(0.1));
  CHECK(ac_rms_volts(std::vector<double>{5.0}) == 0.0);
}
