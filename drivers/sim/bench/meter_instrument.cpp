#include "meter_instrument.h"

#include <algorithm>
#include <cmath>
#include <memory>

#include <fmt/format.h>

#include "header_tree.h"
#include "response_format.h"
#include "scpi_error.h"

namespace zout::sim {

namespace {

constexpr int range_decades = 4;  // ranges: top, top/10, ..., top/10^4
const NumericSpec nplc_spec{"", 0.02, 100.0, 1.0};
const NumericSpec count_spec{"", 1.0, 10000.0, 1.0};
const NumericSpec line_frequency_spec{"HZ", 50.0, 60.0, 50.0};

// Samples per reading: about one every 5 ms of integration, 2 to 11 (both window ends).
std::size_t samples_per_reading(double reading_s) {
  const double intervals = std::round(reading_s / 0.005);
  return static_cast<std::size_t>(std::clamp(intervals, 1.0, 10.0)) + 1;
}

}  // namespace

// SAMPle:COUNt readings taken back to back; samples shared at the window boundaries.
class MeterInstrument::Reading : public Acquisition {
 public:
  Reading(MeterInstrument& meter, int count, bool overload)
      : meter_(meter), count_(count), overload_(overload), function_(meter.function_),
        range_volts_(meter.range_volts(meter.function_)), reading_s_(meter.reading_time_s()),
        per_reading_(samples_per_reading(reading_s_)) {
    const std::size_t intervals = per_reading_ - 1;
    const std::size_t total = static_cast<std::size_t>(count_) * intervals + 1;
    offsets_.reserve(total);
    for (std::size_t i = 0; i < total; ++i) {
      offsets_.push_back(reading_s_ * static_cast<double>(i) / static_cast<double>(intervals));
    }
    values_.resize(total);
  }

  const std::vector<double>& sample_offsets_s() const override { return offsets_; }

  void sample(std::size_t index, double now_s) override {
    const OutputState out = meter_.fixture_.output(now_s);
    values_[index] = function_ == Function::dc_volts ? out.dc_volts : out.ripple_rms_volts * out.ripple_rms_volts;
  }

  std::string finish() override {
    std::string reply;
    const std::size_t intervals = per_reading_ - 1;
    for (int k = 0; k < count_; ++k) {
      // Trapezoid mean over the window of reading k.
      const std::size_t first = static_cast<std::size_t>(k) * intervals;
      double sum = 0.0;
      for (std::size_t i = first; i < first + intervals; ++i) sum += 0.5 * (values_[i] + values_[i + 1]);
      const double mean = sum / static_cast<double>(intervals);
      if (!reply.empty()) reply += ',';
      reply += format_nr3(overload_ ? scpi_not_a_number : reading(mean));
    }
    return reply;
  }

 private:
  double reading(double mean) {
    const double top = meter_.config_.range_volts;
    const double true_volts = function_ == Function::dc_volts ? mean : std::sqrt(std::max(mean, 0.0));
    const double range = range_volts_ ? *range_volts_ : meter_.smallest_range_holding(std::abs(true_volts));
    double sigma = meter_.config_.noise_volts * range / top;
    if (function_ == Function::dc_volts) sigma /= std::sqrt(meter_.nplc_);
    double volts = true_volts + sigma * meter_.noise_.gaussian();
    if (function_ == Function::ac_volts) volts = std::abs(volts);
    return std::abs(volts) > range ? scpi_not_a_number : volts;
  }

  MeterInstrument& meter_;
  int count_;
  bool overload_;
  Function function_;
  std::optional<double> range_volts_;
  double reading_s_;
  std::size_t per_reading_;
  std::vector<double> offsets_;
  std::vector<double> values_;
};

MeterInstrument::MeterInstrument(Fixture& fixture, const MeterConfig& config, std::uint64_t seed)
    : ScpiInstrument("meter", {"zout-sim", "SIM-DMM-1", "ZS-DMM-0001", "sim-0.1.0"}),
      fixture_(fixture),
      config_(config),
      noise_(seed),
      line_frequency_hz_(config.line_frequency_hz) {
  const NumericSpec range_spec{"V", 0.0, config_.range_volts, config_.range_volts};

  add_command(
      "CONFigure:VOLTage[:DC]", [this](const ParameterReader& p, double) { return configure(p, Function::dc_volts); }, 2,
      {}, 0);
  add_command(
      "CONFigure:VOLTage:AC", [this](const ParameterReader& p, double) { return configure(p, Function::ac_volts); }, 2,
      {}, 0);
  add_command("CONFigure", {}, 0,
              [this](const ParameterReader&, double) {
                const auto range = range_volts(function_);
                return CommandOutcome::answer(format_string(
                    fmt::format("{} {}", function_ == Function::dc_volts ? "VOLT:DC" : "VOLT:AC",
                                range ? format_nr3(*range) : std::string("AUTO"))));
              },
              0);

  const auto measure = [this](Function function) {
    return [this, function](const ParameterReader& p, double) {
      CommandOutcome configured = configure(p, function);
      CommandOutcome outcome = start_reading(1);
      outcome.busy_s = configured.busy_s;  // a function switch comes before the reading
      return outcome;
    };
  };
  add_command("MEASure[:VOLTage][:DC]", {}, 0, measure(Function::dc_volts), 2);
  add_command("MEASure:VOLTage:AC", {}, 0, measure(Function::ac_volts), 2);

  // SCPI-1999 Vol 2 SENSe:FUNCtion takes a quoted sensor function name; we read it with the
  // same header matching as commands.
  add_command(
      "[SENSe:]FUNCtion[:ON]",
      [this](const ParameterReader& p, double) {
        p.require(1);
        HeaderTree functions;
        functions.add("VOLTage[:DC]");
        functions.add("VOLTage:AC");
        ProgramUnit name;
        try {
          name = ProgramMessageParser::parse_unit(p.string(0));
        } catch (const ScpiError&) {
          name.nodes.clear();
        }
        const auto index = name.parameters.empty() && !name.query && !name.common ? functions.find(name.nodes)
                                                                                   : std::nullopt;
        if (!index) {
          throw ScpiError(scpi_code::illegal_parameter_value,
                          fmt::format("function \"{}\"; this meter has \"VOLT:DC\" and \"VOLT:AC\"", p.string(0)));
        }
        CommandOutcome outcome;
        outcome.busy_s = select_function(*index == 0 ? Function::dc_volts : Function::ac_volts);
        return outcome;
      },
      1,
      [this](const ParameterReader&, double) {
        return CommandOutcome::answer(format_string(function_ == Function::dc_volts ? "VOLT" : "VOLT:AC"));
      },
      0);

  add_command(
      "[SENSe:]VOLTage[:DC]:NPLCycles",
      [this](const ParameterReader& p, double) {
        p.require(1);
        nplc_ = p.number(0, nplc_spec);
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader& p, double) { return numeric_answer(p, nplc_spec, nplc_); }, 1);

  for (const auto function : {Function::dc_volts, Function::ac_volts}) {
    const bool dc = function == Function::dc_volts;
    auto& range = dc ? dc_range_volts_ : ac_range_volts_;
    add_command(
        dc ? "[SENSe:]VOLTage[:DC]:RANGe[:UPPer]" : "[SENSe:]VOLTage:AC:RANGe[:UPPer]",
        [this, &range, range_spec](const ParameterReader& p, double) {
          p.require(1);
          range = smallest_range_holding(p.number(0, range_spec));
          return CommandOutcome::none();
        },
        1,
        [this, &range, range_spec](const ParameterReader& p, double) {
          // On autorange the upper limit reads as the top range.
          return numeric_answer(p, range_spec, range ? *range : config_.range_volts);
        },
        1);
    add_command(
        dc ? "[SENSe:]VOLTage[:DC]:RANGe:AUTO" : "[SENSe:]VOLTage:AC:RANGe:AUTO",
        [this, &range](const ParameterReader& p, double) {
          p.require(1);
          if (p.boolean(0)) {
            range.reset();
          } else if (!range) {
            range = config_.range_volts;  // autorange off holds the top range (our choice)
          }
          return CommandOutcome::none();
        },
        1, [&range](const ParameterReader&, double) { return CommandOutcome::answer(format_boolean(!range)); }, 0);
  }

  add_command(
      "SAMPle:COUNt",
      [this](const ParameterReader& p, double) {
        p.require(1);
        sample_count_ = p.integer(0, count_spec);
        return CommandOutcome::none();
      },
      1,
      [this](const ParameterReader& p, double) {
        return numeric_answer(p, count_spec, static_cast<double>(sample_count_));
      },
      1);

  add_command("READ", {}, 0, [this](const ParameterReader&, double) { return start_reading(static_cast<int>(sample_count_)); },
              0);

  // SCPI-1999 Vol 2 SYSTem:LFRequency (from memory): the power-line frequency NPLC counts.
  add_command(
      "SYSTem:LFRequency",
      [this](const ParameterReader& p, double) {
        p.require(1);
        const double hz = p.number(0, line_frequency_spec);
        if (hz != 50.0 && hz != 60.0) {
          throw ScpiError(scpi_code::data_out_of_range, fmt::format("{:g} Hz; mains is 50 or 60 Hz", hz));
        }
        line_frequency_hz_ = hz;
        return CommandOutcome::none();
      },
      1, [this](const ParameterReader&, double) { return CommandOutcome::answer(format_nr3(line_frequency_hz_)); }, 0);

  reset(0.0);
}

void MeterInstrument::reset(double) {
  function_ = Function::dc_volts;
  dc_range_volts_.reset();
  ac_range_volts_.reset();
  nplc_ = nplc_spec.default_value;
  sample_count_ = 1;
}

std::optional<double> MeterInstrument::range_volts(Function function) const {
  return function == Function::dc_volts ? dc_range_volts_ : ac_range_volts_;
}

double MeterInstrument::reading_time_s() const {
  return function_ == Function::dc_volts ? nplc_ / line_frequency_hz_ : ac_reading_s;
}

double MeterInstrument::smallest_range_holding(double volts) const {
  double range = config_.range_volts / std::pow(10.0, range_decades);
  for (int k = range_decades; k > 0 && range < volts; --k) range *= 10.0;
  return std::min(range, config_.range_volts);
}

std::optional<double> MeterInstrument::range_parameter(const ParameterReader& parameters) const {
  if (!parameters.has(0)) return std::nullopt;  // SCPI-1999 CONFigure: omitted = DEF = autorange
  // AUTO and DEF mean autorange; MIN, MAX and numbers follow the numeric rules.
  if (parameters.is_keyword(0, "AUTO") || parameters.is_keyword(0, "DEFault")) return std::nullopt;
  const NumericSpec spec{"V", 0.0, config_.range_volts, config_.range_volts};
  return smallest_range_holding(parameters.number(0, spec));
}

double MeterInstrument::select_function(Function function) {
  if (function == function_) return 0.0;
  function_ = function;
  return function_switch_s;
}

CommandOutcome MeterInstrument::configure(const ParameterReader& parameters, Function function) {
  const auto range = range_parameter(parameters);
  if (parameters.has(1)) {
    // The resolution is accepted and checked, then follows from NPLC (our simplification).
    parameters.number(1, NumericSpec{"V", 0.0, config_.range_volts, config_.range_volts});
  }
  CommandOutcome outcome;
  outcome.busy_s = select_function(function);
  (function == Function::dc_volts ? dc_range_volts_ : ac_range_volts_) = range;
  sample_count_ = 1;  // SCPI-1999 CONFigure presets a single reading
  return outcome;
}

CommandOutcome MeterInstrument::start_reading(int count) {
  CommandOutcome outcome;
  outcome.acquisition = std::make_shared<Reading>(*this, count, faults().consume(FaultKind::overload));
  return outcome;
}

}  // namespace zout::sim
