#include "scpi_meter.h"

#include <cmath>
#include <stdexcept>
#include <utility>

#include <fmt/format.h>

#include "drivers/transport/io_error.h"

namespace zout {

namespace {

// AC (true RMS) readings have no NPLC setting; a meter's AC filter typically needs a few
// signal cycles per reading, so we allow a fixed 0.1 s per reading (common practice for
// ripple at mains and drive frequencies of tens of hertz and up).
constexpr double ac_seconds_per_reading = 0.1;

void require_finite(const char* name, double value) {
  if (!std::isfinite(value)) {
    throw std::invalid_argument(fmt::format("meter: {} must be finite, got {}", name, value));
  }
}

}  // namespace

ScpiMeter::ScpiMeter(Session& session, Dialect dialect, double line_frequency_hz)
    : runner_(session, std::move(dialect), "meter"), line_frequency_hz_(line_frequency_hz) {
  if (!std::isfinite(line_frequency_hz) || line_frequency_hz <= 0.0) {
    throw std::invalid_argument(
        fmt::format("meter: line_frequency_hz must be positive, got {}", line_frequency_hz));
  }
}

void ScpiMeter::configure_dc_volts(double range_volts, double nplc) {
  require_finite("range_volts", range_volts);
  require_finite("nplc", nplc);
  if (nplc <= 0.0) {
    throw std::invalid_argument(fmt::format("meter: nplc must be positive, got {}", nplc));
  }
  runner_.run("configure_dc_volts", {{"range_volts", range_volts}, {"nplc", nplc}});
  seconds_per_reading_ = nplc / line_frequency_hz_;
}

void ScpiMeter::configure_ac_volts(double range_volts) {
  require_finite("range_volts", range_volts);
  runner_.run("configure_ac_volts", {{"range_volts", range_volts}});
  seconds_per_reading_ = ac_seconds_per_reading;
}

ScpiNumber ScpiMeter::read_one() {
  return runner_.ask_number("read_one", {}, reading_timeout(1));
}

std::vector<ScpiNumber> ScpiMeter::read_many(int count) {
  if (count < 1) {
    throw std::invalid_argument(fmt::format("meter: count must be at least 1, got {}", count));
  }
  auto readings = runner_.ask_number_list("read_many", {{"count", static_cast<double>(count)}},
                                          reading_timeout(count));
  if (readings.size() != static_cast<std::size_t>(count)) {
    throw IoError(IoErrorKind::protocol,
                  fmt::format("{}: read_many asked for {} readings, got {}",
                              runner_.session().address(), count, readings.size()));
  }
  return readings;
}

std::chrono::milliseconds ScpiMeter::reading_timeout(int count) const {
  const double integration_ms = std::ceil(count * seconds_per_reading_ * 1000.0);
  return runner_.session().default_timeout() +
         std::chrono::milliseconds(static_cast<long long>(integration_ms));
}

}  // namespace zout
