#pragma once
// The sim config file (config/sim/*.json): the circuit of the units under test, the bench's
// generator and DMM, and the panel of units. Every key is checked on loading; an error
// names the file, the JSON path and the rule ("demo.json: dut.diode.series_ohms: must be a
// number >= 0, got -1"). Unknown keys are errors. Keys and units: drivers/sim/README.md.

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <nlohmann/json_fwd.hpp>

#include "sim_config_error.h"

namespace zout::sim {

// A defect some units carry, so a batch has failures.
enum class UnitFault {
  none,
  weak_capacitor,   // one capacitor at 20 % of its value (dried out or cracked)
  leaky_diode,      // one diode with 100 kΩ across it (a damaged junction)
  leaky_capacitor,  // one capacitor with 200 kΩ across it (contaminated or cracked dielectric)
};
// "none", "weak_capacitor", ...; std::nullopt for another name.
std::optional<UnitFault> unit_fault_named(std::string_view name);
const char* to_string(UnitFault fault);
std::string unit_fault_names();

struct DiodeConfig {
  double saturation_current_amps = 1e-9;
  double emission_coefficient = 1.8;
  double series_ohms = 1.0;
};

struct FilterConfig {
  double series_ohms = 0.0;
  double capacitance_farads = 0.0;
};

struct DutConfig {
  int stages = 1;
  double capacitance_farads = 0.0;     // nominal, every cascade capacitor
  double capacitor_tolerance = 0.0;    // fraction: 0.1 = ±10 %
  DiodeConfig diode;
  std::optional<FilterConfig> filter;  // the output RC filter, when the board has one
};

struct MeterConfig {
  double input_ohms = 10e6;        // DC input resistance (common practice: 10 MΩ)
  double range_volts = 1000.0;     // the top range; lower ranges are decades below it
  double noise_volts = 0.0;        // RMS reading noise at 1 NPLC on the top range
  double line_frequency_hz = 50.0; // power-line frequency that NPLC counts
};

struct PanelEntry {
  int slot = 1;
  std::string serial;
  UnitFault fault = UnitFault::none;
};

struct SimConfig {
  std::string origin;  // the file it came from, for messages
  std::string description;
  DutConfig dut;
  double source_output_ohms = 50.0;
  MeterConfig meter;
  std::vector<PanelEntry> panel;  // sorted by slot
  std::uint64_t seed = 1;         // seeds the meter's noise (not the units: their serials do)

  // Slots on the panel: the highest slot listed.
  int slot_count() const;

  // Reads and checks a file; throws SimConfigError.
  static SimConfig load_file(const std::string& path);
  // Checks a parsed document; `origin` starts every message.
  static SimConfig from_json(const nlohmann::json& document, const std::string& origin);
};

// Checks a serial number: 1 to 40 printable ASCII characters without ',', ';', '"' or
// white space (it appears in SCPI replies). Returns what is wrong, or empty when fine.
std::string serial_number_problem(std::string_view serial);

}  // namespace zout::sim
