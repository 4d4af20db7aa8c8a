#include "source_instrument.h"

#include <cmath>

#include <fmt/format.h>

#include "response_format.h"
#include "scpi_error.h"

namespace zout::sim {

namespace {

// Our invented generator's limits.
constexpr double swing_limit_volts = 60.0;
const NumericSpec frequency_spec{"HZ", 1.0, 1e6, 1e3};
const NumericSpec amplitude_spec{"V", 0.0, swing_limit_volts, 0.1};
const NumericSpec offset_spec{"V", -swing_limit_volts / 2, swing_limit_volts / 2, 0.0};

void check_swing(double amplitude_volts_peak, double offset_volts) {
  if (std::abs(offset_volts) + amplitude_volts_peak > swing_limit_volts) {
    throw ScpiError(scpi_code::settings_conflict,
                    fmt::format("amplitude {:g} V peak with offset {:g} V exceeds the {:g} V swing",
                                amplitude_volts_peak, offset_volts, swing_limit_volts));
  }
}

}  // namespace

SourceInstrument::SourceInstrument(Fixture& fixture)
    : ScpiInstrument("source", {"zout-sim", "SIM-GEN-1", "ZS-GEN-0001", "sim-0.1.0"}), fixture_(fixture) {
  reset(0.0);
  add_command(
      "[SOURce:]FUNCtion[:SHAPe]",
      [this](const ParameterReader& p, double) {
        p.require(1);
        p.choice(0, {"SINusoid"});
        return CommandOutcome::none();
      },
      1, [](const ParameterReader&, double) { return CommandOutcome::answer("SIN"); }, 0);

  const auto set_frequency = [this](const ParameterReader& p, double now_s) {
    p.require(1);
    drive_.frequency_hz = p.number(0, frequency_spec);
    apply(now_s);
    return CommandOutcome::none();
  };
  const auto ask_frequency = [this](const ParameterReader& p, double) {
    return numeric_answer(p, frequency_spec, drive_.frequency_hz);
  };
  add_command("[SOURce:]FREQuency[:CW]", set_frequency, 1, ask_frequency, 1);
  add_command("[SOURce:]FREQuency:FIXed", set_frequency, 1, ask_frequency, 1);

  add_command(
      "[SOURce:]VOLTage[:LEVel][:IMMediate][:AMPLitude]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        const double amplitude = p.number(0, amplitude_spec);
        check_swing(amplitude, drive_.offset_volts);
        drive_.amplitude_volts_peak = amplitude;
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader& p, double) { return numeric_answer(p, amplitude_spec, drive_.amplitude_volts_peak); },
      1);

  add_command(
      "[SOURce:]VOLTage[:LEVel][:IMMediate]:OFFSet",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        const double offset = p.number(0, offset_spec);
        check_swing(drive_.amplitude_volts_peak, offset);
        drive_.offset_volts = offset;
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader& p, double) { return numeric_answer(p, offset_spec, drive_.offset_volts); }, 1);

  add_command(
      "OUTPut[:STATe]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        drive_.output_on = p.boolean(0);
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader&, double) { return CommandOutcome::answer(format_boolean(drive_.output_on)); },
      0);
}

void SourceInstrument::reset(double now_s) {
  drive_ = DriveSettings{};
  drive_.frequency_hz = frequency_spec.default_value;
  drive_.amplitude_volts_peak = amplitude_spec.default_value;
  drive_.offset_volts = 0.0;
  drive_.output_on = false;
  apply(now_s);
}

void SourceInstrument::apply(double now_s) { fixture_.set_drive(drive_, now_s); }

}  // namespace zout::sim
