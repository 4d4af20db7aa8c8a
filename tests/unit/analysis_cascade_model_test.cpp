// Unit tests for daemon/analysis/cascade_model.h: the Cockcroft–Walton factors for small n,
// the derived figures and their argument checks.

#include <catch2/catch.hpp>

#include <limits>
#include <stdexcept>

#include "daemon/analysis/cascade_model.h"

using namespace zout::analysis;

TEST_CASE("sag and ripple factors for n = 1..5", "[analysis]") {
  // 2n³/3 + n²/2 − n/6 by hand: 1, 7, 22, 50, 95; n(n+1)/2: 1, 3, 6, 10, 15.
  CHECK(sag_factor(1) == 1.0);
  CHECK(sag_factor(2) == 7.0);
  CHECK(sag_factor(3) == 22.0);
  CHECK(sag_factor(4) == 50.0);
  CHECK(sag_factor(5) == 95.0);
  CHECK(ripple_factor(1) == 1.0);
  CHECK(ripple_factor(3) == 6.0);
  CHECK(ripple_factor(5) == 15.0);
}

TEST_CASE("source resistance and effective capacitance invert each other", "[analysis]") {
  const double r = model_source_ohms(3, 1e3, 1e-6);
  CHECK(r == Approx(22e3));
  CHECK(effective_capacitance_farads(3, 1e3, r) == Approx(1e-6));
  CHECK(effective_capacitance_farads(3, 1e3, 2 * r) == Approx(0.5e-6));
  CHECK(predicted_sag_volts(3, 100e-6, 1e3, 1e-6) == Approx(2.2));
  CHECK(predicted_ripple_pp_volts(3, 100e-6, 1e3, 1e-6) == Approx(0.6));
  CHECK(predicted_sag_volts(3, 0.0, 1e3, 1e-6) == 0.0);
}

TEST_CASE("ideal output and mean diode drop", "[analysis]") {
  CHECK(ideal_open_circuit_volts(3, 2.5) == Approx(15.0));
  // 15 V ideal, 12.3 V measured: 2.7 V over 6 diodes.
  CHECK(mean_diode_drop_volts(3, 2.5, 12.3) == Approx(0.45));
  CHECK(mean_diode_drop_volts(3, 2.5, 15.6) == Approx(-0.1));
}

TEST_CASE("cascade model arguments are checked by name", "[analysis]") {
  CHECK_THROWS_WITH(sag_factor(0), Catch::Contains("stages must be >= 1 (0)"));
  CHECK_THROWS_WITH(model_source_ohms(3, -1.0, 1e-6), Catch::Contains("frequency_hz must be > 0"));
  CHECK_THROWS_WITH(model_source_ohms(3, 1e3, 0.0), Catch::Contains("capacitance_farads must be > 0"));
  CHECK_THROWS_WITH(predicted_sag_volts(3, -1e-6, 1e3, 1e-6), Catch::Contains("load_amps must be >= 0"));
  CHECK_THROWS_WITH(effective_capacitance_farads(3, 1e3, 0.0), Catch::Contains("source_ohms must be > 0"));
  CHECK_THROWS_WITH(mean_diode_drop_volts(3, 2.5, std::numeric_limits<double>::infinity()),
                    Catch::Contains("open_circuit_volts is not finite"));
}
