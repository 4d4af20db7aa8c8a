// Small pieces of the client: query detection for `zout scpi`, and the aligned table.
#include <catch2/catch.hpp>

#include "daemon/cli/scpi_command.h"
#include "daemon/cli/text_table.h"

using namespace zout::cli;

TEST_CASE("is_query finds a query header anywhere in a program message", "[cli]") {
  REQUIRE(is_query("*IDN?"));
  REQUIRE(is_query("MEASure:VOLTage:DC? 10,0.001"));
  REQUIRE(is_query("CONF:VOLT:DC 10;READ?"));
  REQUIRE(is_query("READ?;*OPC"));
  REQUIRE(is_query("  SYST:ERR?  "));
  REQUIRE_FALSE(is_query("*RST"));
  REQUIRE_FALSE(is_query("OUTPut:STATe ON"));
  REQUIRE_FALSE(is_query("DISP:TEXT \"READY?\""));
  REQUIRE_FALSE(is_query("SYST:BEEP;*CLS"));
}

TEST_CASE("text table pads columns to the widest cell", "[cli]") {
  TextTable table({"SERIAL", "V_oc"});
  table.add_row({"BB5-0001", "1234.5"});
  table.add_row({"B", "1.0 Ω"});
  REQUIRE(table.render() ==
          "SERIAL    V_oc\n"
          "BB5-0001  1234.5\n"
          "B         1.0 Ω\n");
  REQUIRE_THROWS_AS(table.add_row({"a", "b", "c"}), std::invalid_argument);
}
