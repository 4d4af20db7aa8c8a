#include "cascade_model.h"

#include <stdexcept>
#include <string>

#include "daemon/analysis/input_checks.h"

namespace zout::analysis {

namespace {

double checked_stages(int stages) {
  if (stages < 1) {
    throw std::invalid_argument("stages must be >= 1 (" + std::to_string(stages) + ")");
  }
  return static_cast<double>(stages);
}

}  // namespace

double sag_factor(int stages) {
  const double n = checked_stages(stages);
  // n(n+1)(4n−1)/6 == 2n³/3 + n²/2 − n/6, computed in a form that is exact in doubles.
  return n * (n + 1.0) * (4.0 * n - 1.0) / 6.0;
}

double ripple_factor(int stages) {
  const double n = checked_stages(stages);
  return n * (n + 1.0) / 2.0;
}

double predicted_sag_volts(int stages, double load_amps, double frequency_hz,
                           double capacitance_farads) {
  require_non_negative(load_amps, "load_amps");
  return load_amps * model_source_ohms(stages, frequency_hz, capacitance_farads);
}

double predicted_ripple_pp_volts(int stages, double load_amps, double frequency_hz,
                                 double capacitance_farads) {
  require_non_negative(load_amps, "load_amps");
  require_positive(frequency_hz, "frequency_hz");
  require_positive(capacitance_farads, "capacitance_farads");
  return load_amps / (frequency_hz * capacitance_farads) * ripple_factor(stages);
}

double model_source_ohms(int stages, double frequency_hz, double capacitance_farads) {
  require_positive(frequency_hz, "frequency_hz");
  require_positive(capacitance_farads, "capacitance_farads");
  return sag_factor(stages) / (frequency_hz * capacitance_farads);
}

double effective_capacitance_farads(int stages, double frequency_hz, double source_ohms) {
  require_positive(frequency_hz, "frequency_hz");
  require_positive(source_ohms, "source_ohms");
  return sag_factor(stages) / (frequency_hz * source_ohms);
}

double ideal_open_circuit_volts(int stages, double amplitude_volts_peak) {
  require_positive(amplitude_volts_peak, "amplitude_volts_peak");
  return 2.0 * checked_stages(stages) * amplitude_volts_peak;
}

double mean_diode_drop_volts(int stages, double amplitude_volts_peak, double open_circuit_volts) {
  require_finite(open_circuit_volts, "open_circuit_volts");
  const double ideal = ideal_open_circuit_volts(stages, amplitude_volts_peak);
  return (ideal - open_circuit_volts) / (2.0 * checked_stages(stages));
}

}  // namespace zout::analysis
