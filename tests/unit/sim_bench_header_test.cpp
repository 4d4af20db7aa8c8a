// The simulated instruments' SCPI parsing: header patterns and the tree level of ';' chains
// (SCPI-1999 Vol 1 §6.2, IEEE 488.2 Annex A; clause numbers from memory), program message
// lexing (IEEE 488.2 §7) and numeric parameters with MIN/MAX/DEF and suffixes (§7.7.3).
#include <catch2/catch.hpp>

#include "drivers/sim/bench/error_queue.h"
#include "drivers/sim/bench/header_pattern.h"
#include "drivers/sim/bench/header_tree.h"
#include "drivers/sim/bench/parameter_reader.h"
#include "drivers/sim/bench/program_message.h"
#include "drivers/sim/bench/scpi_error.h"

using namespace zout::sim;

namespace {

std::vector<std::string> nodes_of(const std::string& header) {
  return ProgramMessageParser::parse_unit(header).nodes;
}

int error_code_of(const std::function<void()>& call) {
  try {
    call();
  } catch (const ScpiError& e) {
    return e.code();
  }
  return 0;
}

Parameter parameter(const std::string& text) {
  const auto unit = ProgramMessageParser::parse_unit("X " + text);
  REQUIRE(unit.parameters.size() == 1);
  return unit.parameters.front();
}

double number(const std::string& text, const NumericSpec& spec) {
  const std::vector<Parameter> parameters{parameter(text)};
  return ParameterReader(parameters).number(0, spec);
}

}  // namespace

TEST_CASE("a header pattern takes the long form, the short form, any case, optional nodes left out", "[sim-bench]") {
  const HeaderPattern amplitude("[SOURce:]VOLTage[:LEVel][:IMMediate][:AMPLitude]");
  REQUIRE(amplitude.nodes().size() == 5);
  REQUIRE(amplitude.nodes()[0].short_form == "SOUR");
  REQUIRE(amplitude.nodes()[0].long_form == "SOURCE");
  REQUIRE(amplitude.nodes()[0].optional);
  REQUIRE_FALSE(amplitude.nodes()[1].optional);
  for (const char* header : {"VOLT", "volt", "Voltage", "SOURce:VOLTage:LEVel:IMMediate:AMPLitude", "sour:volt:lev:imm:ampl",
                             "SOUR:VOLT", "VOLT:AMPL", "voltage:level", "SOURCE:VOLT:IMM"}) {
    INFO(header);
    REQUIRE(amplitude.matches(nodes_of(header)));
  }
  // Neither an abbreviation other than the short form, nor nodes out of order, nor extra nodes.
  for (const char* header : {"VOL", "VOLTA", "SOU:VOLT", "VOLT:SOUR", "VOLT:LEV:LEV", "VOLT:OFFS", "SOUR", "AMPL"}) {
    INFO(header);
    REQUIRE_FALSE(amplitude.matches(nodes_of(header)));
  }
  const HeaderPattern offset("[SOURce:]VOLTage[:LEVel][:IMMediate]:OFFSet");
  REQUIRE(offset.matches(nodes_of("VOLT:OFFS")));
  REQUIRE(offset.matches(nodes_of("sour:voltage:lev:offset")));
  REQUIRE_FALSE(offset.matches(nodes_of("VOLT")));
  // Patterns are written by us; a malformed one is a programming error.
  REQUIRE_THROWS_AS(HeaderPattern("[SOURce:VOLTage"), std::invalid_argument);
  REQUIRE_THROWS_AS(HeaderPattern("source"), std::invalid_argument);
}

TEST_CASE("a ',' chain continues at the level of the previous header, ':' returns to the root", "[sim-bench]") {
  HeaderTree tree;
  const auto frequency = tree.add("[SOURce:]FREQuency[:CW]");
  const auto amplitude = tree.add("[SOURce:]VOLTage[:LEVel][:IMMediate][:AMPLitude]");
  const auto offset = tree.add("[SOURce:]VOLTage[:LEVel][:IMMediate]:OFFSet");
  const auto nplc = tree.add("[SENSe:]VOLTage[:DC]:NPLCycles");
  const auto range = tree.add("[SENSe:]VOLTage[:DC]:RANGe[:UPPer]");
  const auto output = tree.add("OUTPut[:STATe]");

  // Resolves each unit of a message in turn, the way the instruments do.
  const auto resolve = [&](const std::string& message) {
    std::vector<std::optional<std::size_t>> found;
    HeaderTree::Level level;
    for (const auto& text : ProgramMessageParser::split_units(message)) {
      const auto unit = ProgramMessageParser::parse_unit(text);
      if (unit.common) {
        found.push_back(std::nullopt);
        continue;
      }
      const auto full = level.expand(unit.nodes, unit.absolute);
      found.push_back(tree.find(full));
      level.advance(full);
    }
    return found;
  };
  using Found = std::vector<std::optional<std::size_t>>;
  // SOUR:VOLT leaves the level at SOUR, so FREQ means SOUR:FREQ.
  REQUIRE(resolve("SOUR:VOLT 1;FREQ 1000") == Found{amplitude, frequency});
  // VOLT:LEV leaves the level at VOLT, so OFFS means VOLT:OFFS.
  REQUIRE(resolve("VOLT:LEV 1;OFFS 0.5") == Found{amplitude, offset});
  // SENS:VOLT:DC:NPLC leaves SENS:VOLT:DC; RANG continues there.
  REQUIRE(resolve("SENS:VOLT:DC:NPLC 10;RANG 100") == Found{nplc, range});
  // Without the leading ':' OUTP would be looked up under SOUR: undefined.
  REQUIRE(resolve("SOUR:FREQ 1;OUTP ON") == Found{frequency, std::nullopt});
  REQUIRE(resolve("SOUR:FREQ 1;:OUTP ON") == Found{frequency, output});
  // Common commands leave the level alone.
  REQUIRE(resolve("SOUR:VOLT 1;*CLS;FREQ 5") == Found{amplitude, std::nullopt, frequency});
  // Quoted ';' does not split.
  REQUIRE(ProgramMessageParser::split_units("FUNC \"A;B\";*CLS").size() == 2);
  REQUIRE(ProgramMessageParser::split_units(" ; ;").empty());
}

TEST_CASE("program message units are lexed into header and typed parameters", "[sim-bench]") {
  auto unit = ProgramMessageParser::parse_unit(":sour:volt:offs? MAX");
  REQUIRE(unit.absolute);
  REQUIRE(unit.query);
  REQUIRE(unit.nodes == std::vector<std::string>{"SOUR", "VOLT", "OFFS"});
  REQUIRE(unit.parameters.size() == 1);
  REQUIRE(unit.parameters[0].kind == Parameter::Kind::mnemonic);

  unit = ProgramMessageParser::parse_unit("CONF:VOLT:DC 1.5E+3 mV, DEF");
  REQUIRE(unit.parameters.size() == 2);
  REQUIRE(unit.parameters[0].kind == Parameter::Kind::number);
  REQUIRE(unit.parameters[0].number == 1500.0);
  REQUIRE(unit.parameters[0].suffix == "mV");
  REQUIRE(unit.parameters[1].text == "DEF");

  unit = ProgramMessageParser::parse_unit("ROUT:CLOS (@1,3:4)");
  REQUIRE(unit.parameters[0].kind == Parameter::Kind::expression);
  REQUIRE(unit.parameters[0].text == "@1,3:4");

  unit = ProgramMessageParser::parse_unit("FUNC 'VOLT:AC'");
  REQUIRE(unit.parameters[0].kind == Parameter::Kind::string);
  REQUIRE(unit.parameters[0].text == "VOLT:AC");
  REQUIRE(ProgramMessageParser::parse_unit("X \"say \"\"hi\"\"\"").parameters[0].text == "say \"hi\"");

  unit = ProgramMessageParser::parse_unit("*ese #H20");
  REQUIRE(unit.common);
  REQUIRE(unit.nodes == std::vector<std::string>{"*ESE"});
  REQUIRE(unit.parameters[0].number == 32.0);

  // Malformed: syntax errors (-102); bytes outside printable ASCII: invalid character (-101).
  for (const char* bad : {"VOLT1.5", "VOLT::AMPL", ":", "*", "VOLT 1.2.3", "VOLT \"open", "VOLT 1,,2", "VOLT ,",
                          "1VOLT", "VOLT (@1", "VOLT 5 V V", "*IDN?x"}) {
    INFO(bad);
    REQUIRE(error_code_of([&] { ProgramMessageParser::parse_unit(bad); }) == scpi_code::syntax_error);
  }
  REQUIRE(error_code_of([] { ProgramMessageParser::parse_unit(std::string("VOLT\x01 5")); }) ==
          scpi_code::invalid_character);
  REQUIRE(error_code_of([] { ProgramMessageParser::parse_unit(std::string("\xfe\xff")); }) ==
          scpi_code::invalid_character);
}

TEST_CASE("numeric parameters take MIN, MAX, DEF and unit suffixes with multipliers", "[sim-bench]") {
  const NumericSpec volts{"V", 0.0, 60.0, 0.1};
  const NumericSpec hertz{"HZ", 1.0, 1e6, 1e3};
  const NumericSpec amps{"A", 0.0, 0.1, 0.0};
  const NumericSpec ohms{"OHM", 1.0, 1e9, 1e9};
  const NumericSpec plain{"", 0.02, 100.0, 1.0};

  REQUIRE(number("5", volts) == 5.0);
  REQUIRE(number("+5.0E0", volts) == 5.0);
  REQUIRE(number(".5", volts) == 0.5);
  REQUIRE(number("MIN", volts) == 0.0);
  REQUIRE(number("maximum", volts) == 60.0);
  REQUIRE(number("Def", volts) == 0.1);
  REQUIRE(number("250mV", volts) == Approx(0.25));
  REQUIRE(number("250 MV", volts) == Approx(0.25));  // suffixes are case-blind: M is milli
  REQUIRE(number("12 V", volts) == 12.0);
  REQUIRE(number("2 kHz", hertz) == Approx(2000.0));
  REQUIRE(number("1 MHZ", hertz) == Approx(1e6));  // IEEE 488.2: MHZ is megahertz
  REQUIRE(number("50 uA", amps) == Approx(50e-6));
  REQUIRE(number("2.5mA", amps) == Approx(2.5e-3));
  REQUIRE(number("10 kOHM", ohms) == Approx(1e4));
  REQUIRE(number("2 MOHM", ohms) == Approx(2e6));  // IEEE 488.2: MOHM is megohm
  REQUIRE(number("#H0A", plain) == 10.0);

  const auto code = [](const std::string& text, const NumericSpec& spec) {
    return error_code_of([&] { number(text, spec); });
  };
  REQUIRE(code("61", volts) == scpi_code::data_out_of_range);
  REQUIRE(code("-1", volts) == scpi_code::data_out_of_range);
  REQUIRE(code("0.01", plain) == scpi_code::data_out_of_range);
  REQUIRE(code("5 A", volts) == scpi_code::invalid_suffix);
  REQUIRE(code("5 QV", volts) == scpi_code::invalid_suffix);
  REQUIRE(code("5 V", plain) == scpi_code::suffix_not_allowed);
  REQUIRE(code("\"5\"", volts) == scpi_code::data_type_error);
  REQUIRE(code("(@5)", volts) == scpi_code::data_type_error);
  REQUIRE(code("LOTS", volts) == scpi_code::invalid_character_data);
}

TEST_CASE("booleans, choices, channel lists and parameter counts follow the SCPI rules", "[sim-bench]") {
  const auto params = [](const std::string& text) { return ProgramMessageParser::parse_unit("X " + text).parameters; };
  auto p = params("ON");
  REQUIRE(ParameterReader(p).boolean(0));
  p = params("off");
  REQUIRE_FALSE(ParameterReader(p).boolean(0));
  p = params("0.4");  // SCPI-1999 Vol 1 §7.3: rounded, 0 = OFF
  REQUIRE_FALSE(ParameterReader(p).boolean(0));
  p = params("7");
  REQUIRE(ParameterReader(p).boolean(0));
  p = params("MAYBE");
  REQUIRE(error_code_of([&] { ParameterReader(p).boolean(0); }) == scpi_code::invalid_character_data);
  p = params("'ON'");
  REQUIRE(error_code_of([&] { ParameterReader(p).boolean(0); }) == scpi_code::data_type_error);

  p = params("sin");
  REQUIRE(ParameterReader(p).choice(0, {"SQUare", "SINusoid"}) == "SINusoid");
  p = params("SINUSOID");
  REQUIRE(ParameterReader(p).choice(0, {"SINusoid"}) == "SINusoid");
  p = params("SINU");
  REQUIRE(error_code_of([&] { ParameterReader(p).choice(0, {"SINusoid"}); }) == scpi_code::invalid_character_data);

  p = params("(@1,3:5, 8)");
  REQUIRE(ParameterReader(p).channel_list(0) == std::vector<int>{1, 3, 4, 5, 8});
  p = params("(@)");
  REQUIRE(ParameterReader(p).channel_list(0).empty());
  p = params("(1,2)");
  REQUIRE(error_code_of([&] { ParameterReader(p).channel_list(0); }) == scpi_code::expression_error);
  p = params("(@x)");
  REQUIRE(error_code_of([&] { ParameterReader(p).channel_list(0); }) == scpi_code::expression_error);
  p = params("(@5:2)");
  REQUIRE(error_code_of([&] { ParameterReader(p).channel_list(0); }) == scpi_code::expression_error);

  p = params("1, 2");
  REQUIRE(error_code_of([&] { ParameterReader(p).allow_at_most(1); }) == scpi_code::parameter_not_allowed);
  REQUIRE(error_code_of([&] { ParameterReader(p).require(3); }) == scpi_code::missing_parameter);
  REQUIRE(error_code_of([&] { ParameterReader(p).allow_at_most(2); }) == 0);
}

TEST_CASE("the error queue is first in, first out, bounded, with -350 on overflow", "[sim-bench]") {
  ErrorQueue queue(4);
  REQUIRE(ErrorQueue::format(queue.pop()) == "0,\"No error\"");
  queue.push(scpi_code::undefined_header, "FOO");
  queue.push(scpi_code::data_out_of_range);
  REQUIRE(ErrorQueue::format(queue.pop()) == "-113,\"Undefined header;FOO\"");
  REQUIRE(ErrorQueue::format(queue.pop()) == "-222,\"Data out of range\"");
  REQUIRE(queue.empty());

  // SCPI-1999 Vol 2 §21.8 (as we remember it): when full, the newest entry becomes -350 and
  // later errors are lost; the oldest stay.
  for (int i = 0; i < 10; ++i) queue.push(scpi_code::syntax_error, std::to_string(i));
  REQUIRE(queue.size() == 4);
  REQUIRE(ErrorQueue::format(queue.pop()) == "-102,\"Syntax error;0\"");
  REQUIRE(ErrorQueue::format(queue.pop()) == "-102,\"Syntax error;1\"");
  REQUIRE(ErrorQueue::format(queue.pop()) == "-102,\"Syntax error;2\"");
  REQUIRE(ErrorQueue::format(queue.pop()) == "-350,\"Queue overflow\"");
  REQUIRE(queue.pop().code == 0);
  // A quote inside the detail is doubled (IEEE 488.2 §8.7.8 string response).
  queue.push(scpi_code::syntax_error, "bad \"x\"");
  REQUIRE(ErrorQueue::format(queue.pop()) == "-102,\"Syntax error;bad \"\"x\"\"\"");
}
