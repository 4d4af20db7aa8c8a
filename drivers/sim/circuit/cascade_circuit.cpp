#include "cascade_circuit.h"

#include <cmath>
#include <stdexcept>
#include <string>

namespace zout::sim {

CascadeCircuit CascadeCircuit::uniform(int stages, double capacitance_farads) {
  CascadeCircuit circuit;
  circuit.stages = stages;
  const std::size_t count = stages > 0 ? static_cast<std::size_t>(2 * stages) : 0;
  circuit.capacitance_farads.assign(count, capacitance_farads);
  circuit.esr_ohms.assign(count, 0.0);
  circuit.leakage_ohms.assign(count, std::numeric_limits<double>::infinity());
  circuit.diodes.assign(count, DiodeModel{});
  return circuit;
}

namespace {

[[noreturn]] void fail(const std::string& what) {
  throw std::invalid_argument("cascade circuit: " + what);
}

std::string at(const char* field, std::size_t i) {
  return std::string(field) + "[" + std::to_string(i) + "]";
}

// Positive and finite, or (when allowed) +infinity; NaN never passes.
bool positive(double value, bool infinity_allowed) {
  if (std::isnan(value) || value <= 0.0) return false;
  return infinity_allowed || std::isfinite(value);
}

}  // namespace

void CascadeCircuit::validate() const {
  if (stages < 1 || stages > kMaxStages) {
    fail("stages must be 1.." + std::to_string(kMaxStages) + ", got " + std::to_string(stages));
  }
  const std::size_t count = static_cast<std::size_t>(2 * stages);
  auto check_size = [&](const char* field, std::size_t size, bool may_be_empty) {
    if (size == count || (may_be_empty && size == 0)) return;
    fail(std::string(field) + " must have 2n = " + std::to_string(count) + " entries" +
         (may_be_empty ? " (or none)" : "") + ", got " + std::to_string(size));
  };
  check_size("capacitance_farads", capacitance_farads.size(), false);
  check_size("esr_ohms", esr_ohms.size(), true);
  check_size("leakage_ohms", leakage_ohms.size(), true);
  check_size("diodes", diodes.size(), true);
  for (std::size_t i = 0; i < capacitance_farads.size(); ++i) {
    if (!positive(capacitance_farads[i], false)) fail(at("capacitance_farads", i) + " must be > 0");
  }
  for (std::size_t i = 0; i < esr_ohms.size(); ++i) {
    if (!(esr_ohms[i] >= 0.0) || !std::isfinite(esr_ohms[i])) fail(at("esr_ohms", i) + " must be >= 0");
  }
  for (std::size_t i = 0; i < leakage_ohms.size(); ++i) {
    if (!positive(leakage_ohms[i], true)) fail(at("leakage_ohms", i) + " must be > 0 (infinity = none)");
  }
  for (std::size_t i = 0; i < diodes.size(); ++i) {
    const DiodeModel& d = diodes[i];
    if (!positive(d.saturation_current_amps, false)) fail(at("diodes", i) + ".saturation_current_amps must be > 0");
    if (!positive(d.emission_coefficient, false)) fail(at("diodes", i) + ".emission_coefficient must be > 0");
    if (!(d.series_ohms >= 0.0) || !std::isfinite(d.series_ohms)) fail(at("diodes", i) + ".series_ohms must be >= 0");
    if (!positive(d.leakage_ohms, true)) fail(at("diodes", i) + ".leakage_ohms must be > 0 (infinity = none)");
  }
  if (!positive(source_output_ohms, false)) fail("source_output_ohms must be > 0");
  if (!(filter_series_ohms >= 0.0) || !std::isfinite(filter_series_ohms)) fail("filter_series_ohms must be >= 0");
  if (!(filter_capacitance_farads >= 0.0) || !std::isfinite(filter_capacitance_farads)) {
    fail("filter_capacitance_farads must be >= 0");
  }
  if (!positive(meter_input_ohms, true)) fail("meter_input_ohms must be > 0 (infinity = no meter)");
}

}  // namespace zout::sim
