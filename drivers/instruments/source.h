#pragma once
// The function generator role: a sine drive for the multiplier under test.
// Every call may throw IoError or InstrumentError from the session underneath.

namespace zout {

class Source {
 public:
  virtual ~Source() = default;

  virtual void select_sine() = 0;
  virtual void set_frequency_hz(double frequency_hz) = 0;
  virtual void set_amplitude_volts_peak(double amplitude_volts_peak) = 0;
  virtual void set_offset_volts(double offset_volts) = 0;
  virtual void set_output(bool on) = 0;

  // Readbacks of what the instrument holds now (in SI units, amplitude in volts peak).
  virtual double read_frequency_hz() = 0;
  virtual double read_amplitude_volts_peak() = 0;
  virtual double read_offset_volts() = 0;
  virtual bool read_output() = 0;
};

}  // namespace zout
