#pragma once
// A function generator driven through a dialect of role "source" (see config/dialects/).

#include "drivers/instruments/dialect.h"
#include "drivers/instruments/operation_runner.h"
#include "drivers/instruments/source.h"
#include "drivers/scpi/session.h"

namespace zout {

class ScpiSource : public Source {
 public:
  // Throws DialectError unless `dialect` has role "source". `session` must outlive this.
  ScpiSource(Session& session, Dialect dialect);

  // Setters throw std::invalid_argument for a non-finite value, before anything is sent.
  void select_sine() override;
  void set_frequency_hz(double frequency_hz) override;
  // Offers the dialect the amplitude as volts peak, peak-to-peak and RMS (of a sine).
  void set_amplitude_volts_peak(double amplitude_volts_peak) override;
  void set_offset_volts(double offset_volts) override;
  void set_output(bool on) override;

  // Readbacks in SI units after the dialect's scale; a special value is an IoError(protocol).
  double read_frequency_hz() override;
  double read_amplitude_volts_peak() override;
  double read_offset_volts() override;
  bool read_output() override;

 private:
  OperationRunner runner_;
};

}  // namespace zout
