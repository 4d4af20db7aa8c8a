// Reference check of the Cockcroft–Walton formulas (daemon/analysis/cascade_model.h) on a
// worked case computed from Kuffel, Zaengl & Kuffel, High Voltage Engineering: Fundamentals,
// §2.2: ΔV = (I/fC)(2n³/3 + n²/2 − n/6), δV = (I/fC)·n(n+1)/2.

#include <catch2/catch.hpp>

#include "daemon/analysis/cascade_model.h"

using namespace zout::analysis;

TEST_CASE("Kuffel et al. worked check: n = 4, 20 kHz, 100 nF, 100 uA", "[analysis]") {
  // I/fC = 100e-6/(20e3·100e-9) = 0.05 V; 2·64/3 + 16/2 − 4/6 = 50; 4·5/2 = 10.
  CHECK(predicted_sag_volts(4, 100e-6, 20e3, 100e-9) == Approx(2.5).epsilon(1e-14));
  CHECK(predicted_ripple_pp_volts(4, 100e-6, 20e3, 100e-9) == Approx(0.5).epsilon(1e-14));
  // The same case as a source resistance and back to the capacitance.
  CHECK(model_source_ohms(4, 20e3, 100e-9) == Approx(25e3).epsilon(1e-14));
  CHECK(effective_capacitance_farads(4, 20e3, 25e3) == Approx(100e-9).epsilon(1e-14));
}
