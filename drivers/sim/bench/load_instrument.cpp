#include "load_instrument.h"

#include <memory>

#include "response_format.h"

namespace zout::sim {

namespace {

// Our invented load's limits.
const NumericSpec current_spec{"A", 0.0, 0.1, 0.0};
const NumericSpec resistance_spec{"OHM", 1.0, 1e9, 1e9};

}  // namespace

// The load's own measurement: the mean of current or voltage over its aperture.
class LoadInstrument::Readback : public Acquisition {
 public:
  Readback(Fixture& fixture, bool current, bool overload) : fixture_(fixture), current_(current), overload_(overload) {}

  const std::vector<double>& sample_offsets_s() const override { return offsets_; }
  void sample(std::size_t index, double now_s) override {
    const OutputState out = fixture_.output(now_s);
    values_[index] = current_ ? out.load_current_amps : out.load_voltage_volts;
  }
  std::string finish() override {
    if (overload_) return format_nr3(scpi_not_a_number);
    // Trapezoid mean over the three samples.
    return format_nr3(0.25 * values_[0] + 0.5 * values_[1] + 0.25 * values_[2]);
  }

 private:
  Fixture& fixture_;
  bool current_;
  bool overload_;
  std::vector<double> offsets_{0.0, readback_aperture_s / 2, readback_aperture_s};
  std::vector<double> values_ = std::vector<double>(3, 0.0);
};

LoadInstrument::LoadInstrument(Fixture& fixture)
    : ScpiInstrument("load", {"zout-sim", "SIM-LOAD-1", "ZS-LOAD-0001", "sim-0.1.0"}), fixture_(fixture) {
  reset(0.0);
  add_command(
      "[SOURce:]FUNCtion[:MODE]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        load_.mode = p.choice(0, {"CURRent", "RESistance"}) == "CURRent" ? LoadMode::constant_current
                                                                           : LoadMode::constant_resistance;
        apply(now_s);
        return CommandOutcome::none();
      },
      1,
      [this](const ParameterReader&, double) {
        return CommandOutcome::answer(load_.mode == LoadMode::constant_current ? "CURR" : "RES");
      },
      0);
  add_command(
      "[SOURce:]CURRent[:LEVel][:IMMediate][:AMPLitude]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        load_.current_amps = p.number(0, current_spec);
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader& p, double) { return numeric_answer(p, current_spec, load_.current_amps); }, 1);
  add_command(
      "[SOURce:]RESistance[:LEVel][:IMMediate][:AMPLitude]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        load_.resistance_ohms = p.number(0, resistance_spec);
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader& p, double) { return numeric_answer(p, resistance_spec, load_.resistance_ohms); },
      1);
  add_command(
      "INPut[:STATe]",
      [this](const ParameterReader& p, double now_s) {
        p.require(1);
        load_.input_on = p.boolean(0);
        apply(now_s);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader&, double) { return CommandOutcome::answer(format_boolean(load_.input_on)); }, 0);

  const auto readback = [this](bool current) {
    return [this, current](const ParameterReader&, double) {
      CommandOutcome outcome;
      outcome.acquisition = std::make_shared<Readback>(fixture_, current, faults().consume(FaultKind::overload));
      return outcome;
    };
  };
  add_command("MEASure[:SCALar]:CURRent[:DC]", {}, 0, readback(true), 0);
  add_command("MEASure[:SCALar]:VOLTage[:DC]", {}, 0, readback(false), 0);
}

void LoadInstrument::reset(double now_s) {
  load_ = LoadSettings{};
  load_.mode = LoadMode::constant_current;
  load_.current_amps = current_spec.default_value;
  load_.resistance_ohms = resistance_spec.default_value;
  load_.input_on = false;
  apply(now_s);
}

void LoadInstrument::apply(double now_s) { fixture_.set_load(load_, now_s); }

}  // namespace zout::sim
