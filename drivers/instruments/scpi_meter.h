#pragma once
// A DMM driven through a dialect of role "meter" (see config/dialects/).

#include <chrono>
#include <vector>

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/meter.h"
#include "drivers/instruments/operation_runner.h"
#include "drivers/scpi/session.h"

namespace zout {

class ScpiMeter : public Meter {
 public:
  // Throws DialectError unless `dialect` has role "meter", std::invalid_argument unless
  // `line_frequency_hz` is positive. Mains is 50 Hz or 60 Hz depending on the country
  // (common practice); it turns NPLC into seconds. `session` must outlive this.
  ScpiMeter(Session& session, Dialect dialect, double line_frequency_hz = 50.0);

  // Throw std::invalid_argument for a non-finite range or a non-positive nplc, before
  // anything is sent.
  void configure_dc_volts(double range_volts, double nplc) override;
  void configure_ac_volts(double range_volts) override;

  // Readings after the dialect's scale; overload and infinities stay distinct (ScpiNumber).
  ScpiNumber read_one() override;
  // Exactly `count` readings (count >= 1, else std::invalid_argument); a reply with another
  // number of elements is an IoError(protocol).
  std::vector<ScpiNumber> read_many(int count) override;

  // The deadline given to a query for `count` readings: the session's default timeout plus
  // the time the meter spends integrating them in the configured function.
  std::chrono::milliseconds reading_timeout(int count) const;

 private:
  OperationRunner runner_;
  double line_frequency_hz_;
  // Integration time of one reading in the configured function. Until the meter is
  // configured we do not know it, so allow a generous second per reading.
  double seconds_per_reading_ = 1.0;
};

}  // namespace zout
