#include "scpi_load.h"

#include <cmath>
#include <stdexcept>
#include <utility>

#include <fmt/format.h>

namespace zout {

namespace {

void require_finite(const char* name, double value) {
  if (!std::isfinite(value)) {
    throw std::invalid_argument(fmt::format("load: {} must be finite, got {}", name, value));
  }
}

}  // namespace

ScpiLoad::ScpiLoad(Session& session, Dialect dialect)
    : runner_(session, std::move(dialect), "load") {}

void ScpiLoad::select_mode(LoadMode mode) {
  runner_.run(mode == LoadMode::constant_current ? "select_current_mode"
                                                 : "select_resistance_mode");
}

void ScpiLoad::set_current_amps(double current_amps) {
  require_finite("current_amps", current_amps);
  runner_.run("set_current", {{"current_amps", current_amps}});
}

void ScpiLoad::set_resistance_ohms(double resistance_ohms) {
  require_finite("resistance_ohms", resistance_ohms);
  runner_.run("set_resistance", {{"resistance_ohms", resistance_ohms}});
}

void ScpiLoad::set_input(bool on) { runner_.run(on ? "input_on" : "input_off"); }

double ScpiLoad::measure_current_amps() { return runner_.ask_finite_number("measure_current"); }

double ScpiLoad::measure_voltage_volts() { return runner_.ask_finite_number("measure_voltage"); }

}  // namespace zout
