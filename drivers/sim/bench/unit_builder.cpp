#include "unit_builder.h"

#include <algorithm>
#include <cmath>
#include <limits>

#include "seeded_random.h"

namespace zout::sim {

namespace {

// Fault magnitudes (our own choice: large enough that a test plan's limits catch them).
constexpr double weak_capacitor_fraction = 0.2;
constexpr double leaky_diode_ohms = 100e3;
constexpr double leaky_capacitor_ohms = 200e3;

double spread(SeededRandom& random, double tolerance) {
  const double e = random.gaussian() * tolerance / 2.0;
  return std::clamp(e, -tolerance, tolerance);
}

}  // namespace

CascadeCircuit build_unit_circuit(const SimConfig& config, const std::string& serial, UnitFault fault) {
  const DutConfig& dut = config.dut;
  SeededRandom random(fnv1a_64(serial));
  const auto count = static_cast<std::size_t>(2 * dut.stages);

  CascadeCircuit circuit;
  circuit.stages = dut.stages;
  circuit.capacitance_farads.resize(count);
  for (auto& c : circuit.capacitance_farads) c = dut.capacitance_farads * (1.0 + spread(random, dut.capacitor_tolerance));
  circuit.esr_ohms.assign(count, 0.0);
  circuit.leakage_ohms.assign(count, std::numeric_limits<double>::infinity());
  circuit.diodes.resize(count);
  for (auto& diode : circuit.diodes) {
    diode.saturation_current_amps = dut.diode.saturation_current_amps * std::exp(0.25 * random.gaussian());
    diode.emission_coefficient = dut.diode.emission_coefficient * (1.0 + 0.02 * random.gaussian());
    diode.series_ohms = std::max(0.0, dut.diode.series_ohms * (1.0 + 0.1 * random.gaussian()));
  }
  if (dut.filter) {
    circuit.filter_series_ohms = dut.filter->series_ohms * (1.0 + spread(random, 0.01));
    circuit.filter_capacitance_farads = dut.filter->capacitance_farads * (1.0 + spread(random, dut.capacitor_tolerance));
  }
  circuit.source_output_ohms = config.source_output_ohms;
  circuit.meter_input_ohms = config.meter.input_ohms;

  // The faulty part, also chosen by the serial (drawn after the spread, so the spread of a
  // faulty unit is the same as that of a good one with the same serial).
  const auto part = static_cast<std::size_t>(random.next_u64() % count);
  switch (fault) {
    case UnitFault::none: break;
    case UnitFault::weak_capacitor: circuit.capacitance_farads[part] *= weak_capacitor_fraction; break;
    case UnitFault::leaky_diode: circuit.diodes[part].leakage_ohms = leaky_diode_ohms; break;
    case UnitFault::leaky_capacitor: circuit.leakage_ohms[part] = leaky_capacitor_ohms; break;
  }
  return circuit;
}

}  // namespace zout::sim
