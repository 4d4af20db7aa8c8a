#include "scpi_source.h"

#include <cmath>
#include <stdexcept>
#include <utility>

#include <fmt/format.h>

namespace zout {

namespace {

void require_finite(const char* name, double value) {
  if (!std::isfinite(value)) {
    throw std::invalid_argument(fmt::format("source: {} must be finite, got {}", name, value));
  }
}

}  // namespace

ScpiSource::ScpiSource(Session& session, Dialect dialect)
    : runner_(session, std::move(dialect), "source") {}

void ScpiSource::select_sine() { runner_.run("select_sine"); }

void ScpiSource::set_frequency_hz(double frequency_hz) {
  require_finite("frequency_hz", frequency_hz);
  runner_.run("set_frequency", {{"frequency_hz", frequency_hz}});
}

void ScpiSource::set_amplitude_volts_peak(double amplitude_volts_peak) {
  require_finite("amplitude_volts_peak", amplitude_volts_peak);
  runner_.run("set_amplitude", {{"amplitude_volts_peak", amplitude_volts_peak},
                                {"amplitude_volts_pp", 2.0 * amplitude_volts_peak},
                                {"amplitude_volts_rms", amplitude_volts_peak / std::sqrt(2.0)}});
}

void ScpiSource::set_offset_volts(double offset_volts) {
  require_finite("offset_volts", offset_volts);
  runner_.run("set_offset", {{"offset_volts", offset_volts}});
}

void ScpiSource::set_output(bool on) { runner_.run(on ? "output_on" : "output_off"); }

double ScpiSource::read_frequency_hz() { return runner_.ask_finite_number("read_frequency"); }

double ScpiSource::read_amplitude_volts_peak() {
  return runner_.ask_finite_number("read_amplitude");
}

double ScpiSource::read_offset_volts() { return runner_.ask_finite_number("read_offset"); }

bool ScpiSource::read_output() { return runner_.ask_boolean("read_output"); }

}  // namespace zout
