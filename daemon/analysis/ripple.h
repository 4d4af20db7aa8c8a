#pragma once
// Ripple of the DC output.
//   From an AC RMS reading: a cascade's ripple is close to a sawtooth (the output capacitor
//   charges briefly once per cycle and discharges linearly into the load), and a sawtooth of
//   peak-to-peak amplitude A has RMS A/(2√3) (common practice; any signals textbook), so
//   V_pp ≈ 2√3·V_rms. An estimate: other waveshapes give other factors (a sine: 2√2).
//   From samples: exact, max − min.
// Throws std::invalid_argument for a negative or non-finite RMS, or samples that are empty or
// not finite.

#include <span>

namespace zout::analysis {

// 2√3 · ac_rms_volts.
double sawtooth_pp_from_rms_volts(double ac_rms_volts);
// max − min of the samples.
double sampled_pp_volts(std::span<const double> samples_volts);
// RMS of the samples about their mean (the AC part, as an AC-coupled true-RMS meter reads it).
double ac_rms_volts(std::span<const double> samples_volts);

}  // namespace zout::analysis
