#pragma once
// The Cockcroft–Walton model of an n-stage half-wave cascade with every capacitor C, driven
// at frequency f with peak amplitude V_pk (Kuffel, Zaengl & Kuffel, High Voltage Engineering:
// Fundamentals, §2.2):
//   ideal no-load output        V_ideal = 2n·V_pk
//   sag (voltage drop) at I     ΔV = (I/fC)·(2n³/3 + n²/2 − n/6)
//   ripple peak-to-peak at I    δV = (I/fC)·n(n+1)/2
// The sag is linear in I, so the cascade behaves as a source resistance
//   R = (2n³/3 + n²/2 − n/6)/(fC),
// and a measured R gives the unit's effective capacitance C_eff = (2n³/3 + n²/2 − n/6)/(f·R).
// The diode drops the model ignores show up as V_oc < 2n·V_pk; the mean drop per diode is
// estimated as (2n·V_pk − V_oc)/(2n) (each of the 2n diodes conducts once per cycle in the
// charge path).
//
// Every function throws std::invalid_argument for stages < 1, a non-positive frequency or
// capacitance, a negative current, or a non-finite argument.

namespace zout::analysis {

// 2n³/3 + n²/2 − n/6 (an integer for every n: n(n+1)(4n−1)/6).
double sag_factor(int stages);
// n(n+1)/2.
double ripple_factor(int stages);

// ΔV at load current I.
double predicted_sag_volts(int stages, double load_amps, double frequency_hz,
                           double capacitance_farads);
// δV (peak-to-peak) at load current I.
double predicted_ripple_pp_volts(int stages, double load_amps, double frequency_hz,
                                 double capacitance_farads);
// R = sag_factor/(fC).
double model_source_ohms(int stages, double frequency_hz, double capacitance_farads);
// C_eff = sag_factor/(f·R); R > 0.
double effective_capacitance_farads(int stages, double frequency_hz, double source_ohms);
// 2n·V_pk.
double ideal_open_circuit_volts(int stages, double amplitude_volts_peak);
// (2n·V_pk − V_oc)/(2n). May come out negative when V_oc exceeds the ideal (a measurement
// or drive-level problem); the value is returned as computed.
double mean_diode_drop_volts(int stages, double amplitude_volts_peak, double open_circuit_volts);

}  // namespace zout::analysis
