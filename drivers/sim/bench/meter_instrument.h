#pragma once
// The simulated DMM (role "meter"), on the unit's output. SCPI-1999 CONFigure, MEASure,
// SENSe, SAMPle subsystems and READ?:
//   CONFigure:VOLTage[:DC] [range|AUTO|MIN|MAX|DEF[,resolution]]  DC volts, SAMPle:COUNt 1
//   CONFigure:VOLTage:AC   [same]                                 AC volts (true RMS of the ripple)
//   CONFigure?                                                    "VOLT:DC <range>" or "VOLT:AC AUTO"
//   MEASure[:VOLTage][:DC]? [range...], MEASure:VOLTage:AC? [range...]   configure, then one reading
//   [SENSe:]FUNCtion[:ON] "VOLT[:DC]"|"VOLT:AC"
//   [SENSe:]VOLTage[:DC]:NPLCycles 0.02..100 (DEF 1)
//   [SENSe:]VOLTage[:DC]:RANGe[:UPPer] V, [SENSe:]VOLTage[:DC]:RANGe:AUTO ON|OFF (and :AC:)
//   SAMPle:COUNt 1..10000 (DEF 1)
//   READ?                           SAMPle:COUNt readings back to back, comma-separated
//   SYSTem:LFRequency 50|60, SYSTem:LFRequency?
// Ranges: the top range (meter.range_volts) and four decades below it. A reading whose
// magnitude exceeds the range (or the top range, on autorange) is 9.91E37 (overload).
//
// Timing: a DC reading integrates NPLC / line frequency seconds, an AC reading 60 ms;
// changing between DC and AC costs 80 ms (the function-switch relays and filters settling,
// common practice for bench DMMs). A DC reading is the mean of the unit's cycle-mean output
// over its integration window, sampled while the window runs; an AC reading is the RMS of the
// ripple over its window. Seeded Gaussian noise is added: σ = meter.noise_volts × (range /
// top range), divided by √NPLC for DC (longer integration averages noise down; common
// practice); an AC reading is the magnitude of ripple RMS plus noise.

#include <optional>

#include "fixture.h"
#include "scpi_instrument.h"
#include "seeded_random.h"
#include "sim_config.h"

namespace zout::sim {

class MeterInstrument : public ScpiInstrument {
 public:
  enum class Function { dc_volts, ac_volts };

  static constexpr double ac_reading_s = 0.060;
  static constexpr double function_switch_s = 0.080;

  // `fixture` must outlive the instrument. `seed` seeds the reading noise.
  MeterInstrument(Fixture& fixture, const MeterConfig& config, std::uint64_t seed);

  void reset(double now_s) override;

  Function function() const { return function_; }
  double nplc() const { return nplc_; }
  // The present range of `function`; std::nullopt on autorange.
  std::optional<double> range_volts(Function function) const;
  double line_frequency_hz() const { return line_frequency_hz_; }
  // Seconds one reading takes in the present function.
  double reading_time_s() const;

 private:
  class Reading;

  // Parses a CONFigure/MEASure range parameter: AUTO or DEF = autorange, MIN, MAX, or the
  // smallest range that holds the value.
  std::optional<double> range_parameter(const ParameterReader& parameters) const;
  double smallest_range_holding(double volts) const;
  // Switches function (costing function_switch_s when it changes); returns the busy time.
  double select_function(Function function);
  CommandOutcome configure(const ParameterReader& parameters, Function function);
  CommandOutcome start_reading(int count);

  Fixture& fixture_;
  MeterConfig config_;
  SeededRandom noise_;
  Function function_ = Function::dc_volts;
  std::optional<double> dc_range_volts_;  // std::nullopt = autorange
  std::optional<double> ac_range_volts_;
  double nplc_ = 1.0;
  long long sample_count_ = 1;
  double line_frequency_hz_;
};

}  // namespace zout::sim
