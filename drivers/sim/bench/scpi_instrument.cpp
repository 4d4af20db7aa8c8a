#include "scpi_instrument.h"

#include <fmt/format.h>

#include "program_message.h"
#include "response_format.h"
#include "scpi_error.h"

namespace zout::sim {

namespace {

// IEEE 488.2 §11.5.1.1 standard event status register bits.
constexpr std::uint8_t esr_operation_complete = 0x01;
constexpr std::uint8_t esr_query_error = 0x04;
constexpr std::uint8_t esr_device_error = 0x08;
constexpr std::uint8_t esr_execution_error = 0x10;
constexpr std::uint8_t esr_command_error = 0x20;

const NumericSpec register_value{"", 0.0, 255.0, 0.0};

}  // namespace

ScpiInstrument::ScpiInstrument(std::string role, InstrumentIdentity identity)
    : role_(std::move(role)), identity_(std::move(identity)) {
  // SCPI-1999 Vol 2 §21.8: SYSTem:ERRor[:NEXT]? takes the oldest entry.
  add_command("SYSTem:ERRor[:NEXT]", {}, 0,
              [this](const ParameterReader&, double) { return CommandOutcome::answer(ErrorQueue::format(errors_.pop())); },
              0);
  add_command("SYSTem:ERRor:COUNt", {}, 0,
              [this](const ParameterReader&, double) {
                return CommandOutcome::answer(format_nr1(static_cast<long long>(errors_.size())));
              },
              0);
  // SCPI-1999 Vol 2 §21.21 (from memory): SYSTem:VERSion? answers the SCPI year.
  add_command("SYSTem:VERSion", {}, 0,
              [](const ParameterReader&, double) { return CommandOutcome::answer("1999.0"); }, 0);
}

void ScpiInstrument::add_command(std::string_view pattern, Handler set, std::size_t set_max_parameters,
                                 Handler query, std::size_t query_max_parameters) {
  tree_.add(pattern);
  commands_.push_back({std::move(set), set_max_parameters, std::move(query), query_max_parameters});
}

CommandOutcome ScpiInstrument::numeric_answer(const ParameterReader& parameters, const NumericSpec& spec,
                                              double current) {
  if (!parameters.has(0)) return CommandOutcome::answer(format_nr3(current));
  const std::string which = parameters.choice(0, {"MINimum", "MAXimum", "DEFault"});
  if (which == "MINimum") return CommandOutcome::answer(format_nr3(spec.minimum));
  if (which == "MAXimum") return CommandOutcome::answer(format_nr3(spec.maximum));
  return CommandOutcome::answer(format_nr3(spec.default_value));
}

void ScpiInstrument::push_error(int code, const std::string& detail) {
  errors_.push(code, detail);
  // IEEE 488.2 §11.5.1.1: -1xx command, -2xx execution, -3xx device-dependent, -4xx query.
  if (code <= -100 && code > -200) event_status_ |= esr_command_error;
  else if (code <= -200 && code > -300) event_status_ |= esr_execution_error;
  else if (code <= -400 && code > -500) event_status_ |= esr_query_error;
  else event_status_ |= esr_device_error;
}

std::uint8_t ScpiInstrument::status_byte() const {
  std::uint8_t stb = 0;
  // SCPI-1999 Vol 1 §9 (from memory): bit 2 summarises the error/event queue.
  if (!errors_.empty()) stb |= 0x04;
  // IEEE 488.2 §11.2: bit 5 ESB summarises the enabled event status bits. Bit 4 (MAV) reads
  // 0 here: the *STB? reply itself is not yet in the output queue.
  if ((event_status_ & event_status_enable_) != 0) stb |= 0x20;
  // Bit 6 (MSS) when any enabled summary bit is set.
  if ((stb & service_request_enable_ & 0xBF) != 0) stb |= 0x40;
  return stb;
}

CommandOutcome ScpiInstrument::run_common(const ProgramUnit& unit) {
  const std::string& name = unit.nodes.front();
  const ParameterReader parameters(unit.parameters);
  const auto no_parameters = [&] { parameters.allow_at_most(0); };
  // IEEE 488.2 §10: the mandatory common commands.
  if (unit.query) {
    no_parameters();
    if (name == "*IDN") {  // §10.14
      return CommandOutcome::answer(fmt::format("{},{},{},{}", identity_.manufacturer, identity_.model,
                                                identity_.serial_number, identity_.firmware));
    }
    if (name == "*OPC") return CommandOutcome::answer("1");  // §10.19: commands run in order
    if (name == "*ESR") {                                     // §10.12: read and clear
      const auto value = event_status_;
      event_status_ = 0;
      return CommandOutcome::answer(format_nr1(value));
    }
    if (name == "*ESE") return CommandOutcome::answer(format_nr1(event_status_enable_));  // §10.11
    if (name == "*SRE") return CommandOutcome::answer(format_nr1(service_request_enable_));  // §10.35
    if (name == "*STB") return CommandOutcome::answer(format_nr1(status_byte()));  // §10.36
    if (name == "*TST") return CommandOutcome::answer("0");  // §10.38: 0 = self-test passed
  } else {
    if (name == "*RST") {  // §10.32
      no_parameters();
      return CommandOutcome::none();
    }
    if (name == "*CLS") {  // §10.3: clears the queue and the event status
      no_parameters();
      errors_.clear();
      event_status_ = 0;
      return CommandOutcome::none();
    }
    if (name == "*OPC") {  // §10.18: everything before it is complete once it runs
      no_parameters();
      event_status_ |= esr_operation_complete;
      return CommandOutcome::none();
    }
    if (name == "*WAI") {  // §10.39: commands already run one after another
      no_parameters();
      return CommandOutcome::none();
    }
    if (name == "*ESE" || name == "*SRE") {
      parameters.require(1);
      parameters.allow_at_most(1);
      const auto value = static_cast<std::uint8_t>(parameters.integer(0, register_value));
      (name == "*ESE" ? event_status_enable_ : service_request_enable_) = value;
      return CommandOutcome::none();
    }
  }
  throw ScpiError(scpi_code::undefined_header, unit.header);
}

CommandOutcome ScpiInstrument::execute(std::string_view unit_text, HeaderTree::Level& level, double now_s) {
  try {
    const ProgramUnit unit = ProgramMessageParser::parse_unit(unit_text);
    if (unit.common) {
      CommandOutcome outcome = run_common(unit);
      if (unit.nodes.front() == "*RST" && !unit.query) reset(now_s);
      return outcome;
    }
    const auto full = level.expand(unit.nodes, unit.absolute);
    const auto index = tree_.find(full);
    if (!index) throw ScpiError(scpi_code::undefined_header, unit.header);
    level.advance(full);
    const Command& command = commands_[*index];
    const Handler& handler = unit.query ? command.query : command.set;
    if (!handler) {
      throw ScpiError(scpi_code::undefined_header,
                      fmt::format("{} has no {} form", unit.header, unit.query ? "query" : "command"));
    }
    const ParameterReader parameters(unit.parameters);
    parameters.allow_at_most(unit.query ? command.query_max_parameters : command.set_max_parameters);
    return handler(parameters, now_s);
  } catch (const ScpiError& e) {
    push_error(e.code(), e.what());
    CommandOutcome outcome;
    // IEEE 488.2 §6.1.6 (from memory): after a command error the parser skips to the end
    // of the program message; execution errors leave the following units to run.
    outcome.skip_rest = e.code() <= -100 && e.code() > -200;
    return outcome;
  } catch (const std::exception& e) {
    // The circuit refused the settings: an execution error, never a crash.
    push_error(-200, e.what());
    return CommandOutcome::none();
  }
}

}  // namespace zout::sim
