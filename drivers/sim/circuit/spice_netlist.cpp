#include "spice_netlist.h"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <sstream>
#include <stdexcept>

#include "drivers/sim/circuit/cycle_map.h"

namespace zout::sim {

namespace {

std::string number(double value) {
  char text[40];
  std::snprintf(text, sizeof text, "%.12g", value);
  return text;
}

std::string lower(std::string text) {
  for (char& c : text) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return text;
}

}  // namespace

std::string spice_netlist(const CascadeCircuit& circuit, const DriveSettings& drive, const LoadSettings& load,
                          const SpiceRun& run) {
  circuit.validate();
  validate_settings(drive, load);
  const int n = circuit.stages;
  const std::size_t count = static_cast<std::size_t>(2 * n);
  const bool filter_node = circuit.filter_series_ohms > 0.0;
  const bool filter_cap = circuit.filter_capacitance_farads > 0.0;
  const std::size_t states = count + (filter_cap ? 1 : 0);
  if (!run.initial_state_volts.empty() && run.initial_state_volts.size() != states) {
    throw std::invalid_argument("spice netlist: initial_state_volts must have " + std::to_string(states) + " entries");
  }
  const double frequency = drive.frequency_hz > 0.0 ? drive.frequency_hz : 1000.0;
  const double period = 1.0 / frequency;

  auto pumping = [](int k) { return "p" + std::to_string(k); };
  auto column = [&](int k) -> std::string {
    if (k < 0) return "0";
    if (k == n - 1 && !filter_node) return "out";
    return "s" + std::to_string(k);
  };

  std::ostringstream net;
  net << "* zout simulated unit: " << n << "-stage Cockcroft-Walton cascade\n";
  if (drive.output_on) {
    net << "Vsrc src 0 DC 0 SIN(" << number(drive.offset_volts) << " " << number(drive.amplitude_volts_peak) << " "
        << number(frequency) << " 0 0 0)\n";
  } else {
    net << "Vsrc src 0 DC 0\n";
  }
  net << "Rsrc src in " << number(circuit.source_output_ohms) << "\n";

  for (int k = 0; k < n; ++k) {
    for (int which = 0; which < 2; ++which) {
      const std::size_t j = static_cast<std::size_t>(2 * k + which);
      const std::string upper = which == 0 ? pumping(k) : column(k);
      const std::string lower_node = which == 0 ? (k == 0 ? std::string("in") : pumping(k - 1)) : column(k - 1);
      const double esr = circuit.esr_ohms.size() == count ? circuit.esr_ohms[j] : 0.0;
      const double leak = circuit.leakage_ohms.size() == count ? circuit.leakage_ohms[j]
                                                                : std::numeric_limits<double>::infinity();
      const std::string cap_low = esr > 0.0 ? "c" + std::to_string(j) + "esr" : lower_node;
      net << "C" << j << " " << upper << " " << cap_low << " " << number(circuit.capacitance_farads[j]);
      if (!run.initial_state_volts.empty()) net << " IC=" << number(run.initial_state_volts[j]);
      net << "\n";
      if (esr > 0.0) net << "RC" << j << "esr " << cap_low << " " << lower_node << " " << number(esr) << "\n";
      if (std::isfinite(leak)) net << "RC" << j << "leak " << upper << " " << lower_node << " " << number(leak) << "\n";

      const DiodeModel model = circuit.diodes.size() == count ? circuit.diodes[j] : DiodeModel{};
      const std::string anode = which == 0 ? column(k - 1) : pumping(k);
      const std::string cathode = which == 0 ? pumping(k) : column(k);
      net << "D" << j << " " << anode << " " << cathode << " DM" << j << "\n";
      net << ".model DM" << j << " D(IS=" << number(model.saturation_current_amps)
          << " N=" << number(model.emission_coefficient) << " RS=" << number(model.series_ohms) << ")\n";
      if (std::isfinite(model.leakage_ohms)) {
        net << "RD" << j << "leak " << anode << " " << cathode << " " << number(model.leakage_ohms) << "\n";
      }
    }
  }
  const std::string top = filter_node ? "s" + std::to_string(n - 1) : "out";
  if (filter_node) net << "Rfilter " << top << " out " << number(circuit.filter_series_ohms) << "\n";
  if (filter_cap) {
    net << "Cfilter out 0 " << number(circuit.filter_capacitance_farads);
    if (!run.initial_state_volts.empty()) net << " IC=" << number(run.initial_state_volts[count]);
    net << "\n";
  }
  if (std::isfinite(circuit.meter_input_ohms)) net << "Rmeter out 0 " << number(circuit.meter_input_ohms) << "\n";
  if (load.input_on) {
    if (load.mode == LoadMode::constant_current) {
      if (load.current_amps > 0.0) net << "Iload out 0 DC " << number(load.current_amps) << "\n";
    } else if (std::isfinite(load.resistance_ohms)) {
      net << "Rload out 0 " << number(load.resistance_ohms) << "\n";
    }
  }

  const double max_step = run.max_step_s > 0.0 ? run.max_step_s : period / 200.0;
  const double from = std::max(0.0, run.stop_time_s - run.measured_cycles * period);
  net << ".options reltol=" << number(run.reltol) << "\n";
  net << ".tran " << number(max_step) << " " << number(run.stop_time_s) << " 0 " << number(max_step)
      << (run.initial_state_volts.empty() ? "" : " uic") << "\n";
  for (const char* what : {"AVG", "PP", "MAX", "MIN"}) {
    net << ".meas tran out_" << lower(what) << " " << what << " v(out) FROM=" << number(from)
        << " TO=" << number(run.stop_time_s) << "\n";
  }
  if (!run.waveform_path.empty()) {
    net << ".control\nrun\nwrdata " << run.waveform_path << " v(out)\n.endc\n";
  }
  net << ".end\n";
  return net.str();
}

std::map<std::string, double> parse_spice_measurements(std::string_view output) {
  std::map<std::string, double> values;
  std::istringstream lines{std::string(output)};
  std::string line;
  while (std::getline(lines, line)) {
    const auto equals = line.find('=');
    if (equals == std::string::npos) continue;
    std::string name = line.substr(0, equals);
    while (!name.empty() && std::isspace(static_cast<unsigned char>(name.back()))) name.pop_back();
    std::size_t first = 0;
    while (first < name.size() && std::isspace(static_cast<unsigned char>(name[first]))) ++first;
    name = lower(name.substr(first));
    if (name.empty() || name.find(' ') != std::string::npos || name.rfind("out_", 0) != 0) continue;
    const char* begin = line.c_str() + equals + 1;
    char* end = nullptr;
    const double value = std::strtod(begin, &end);
    if (end == begin) continue;
    values[name] = value;
  }
  return values;
}

std::vector<SpiceSample> parse_spice_wrdata(std::string_view text) {
  std::vector<SpiceSample> samples;
  std::istringstream lines{std::string(text)};
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    SpiceSample sample;
    if (fields >> sample.time_s >> sample.volts) samples.push_back(sample);
  }
  return samples;
}

}  // namespace zout::sim
