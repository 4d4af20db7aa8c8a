// The client's small text helpers: engineering-prefix numbers, clock times, and the unit
// arguments and panel files of `zout start`.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include "daemon/cli/si_format.h"
#include "daemon/cli/unit_list.h"
#include "daemon/plan/config_error.h"

using namespace zout;
using namespace zout::cli;
using Catch::Contains;

TEST_CASE("si() writes values with an engineering prefix and fixed significant digits", "[cli-text]") {
  CHECK(si(20e-6, "A", 3) == "20.0 µA");
  CHECK(si(2e-6, "A", 3) == "2.00 µA");
  CHECK(si(0.001, "A", 3) == "1.00 mA");
  CHECK(si(384.923, "V", 5) == "384.92 V");
  CHECK(si(194600.0, "Ω", 3) == "195 kΩ");
  CHECK(si(47e-9, "F", 3) == "47.0 nF");
  CHECK(si(-0.25, "V", 3) == "-250 mV");
  CHECK(si(0.0, "A") == "0 A");
  CHECK(si(std::nan(""), "V") == "—");
  CHECK(si(std::optional<double>(), "V") == "—");
  // Rounding that carries to 1000 moves up a prefix rather than printing "1000 mV".
  CHECK(si(0.99996, "V", 4) == "1.000 V");
  CHECK(si(999.96e3, "Ω", 4) == "1.000 MΩ");
}

TEST_CASE("clock_time() writes m:ss under an hour and h:mm:ss above", "[cli-text]") {
  CHECK(clock_time(0.0) == "0:00");
  CHECK(clock_time(75.4) == "1:15");
  CHECK(clock_time(3599.4) == "59:59");
  CHECK(clock_time(3725.0) == "1:02:05");
  CHECK(clock_time(-1.0) == "—");
}

TEST_CASE("a unit argument is SERIAL or SERIAL@SLOT; mistakes are named", "[cli-text]") {
  CHECK(parse_unit_argument("BB5-2611-0001").serial == "BB5-2611-0001");
  CHECK_FALSE(parse_unit_argument("BB5-2611-0001").slot.has_value());
  const auto on_panel = parse_unit_argument("BB5-2611-0001@7");
  CHECK(on_panel.serial == "BB5-2611-0001");
  CHECK(on_panel.slot == std::optional<int>(7));
  // The last '@' separates the slot, so a serial may hold one.
  CHECK(parse_unit_argument("lot@3@2").serial == "lot@3");
  CHECK_THROWS_WITH(parse_unit_argument("@2"), Contains("the serial number is empty"));
  CHECK_THROWS_WITH(parse_unit_argument("X@0"), Contains("slot \"0\" is not a whole number >= 1"));
  CHECK_THROWS_WITH(parse_unit_argument("X@"), Contains("slot \"\" is not a whole number"));
  CHECK_THROWS_WITH(parse_unit_argument("X@1.5"), Contains("slot \"1.5\""));
}

TEST_CASE("a panel file lists units in slot order; mistakes name the file and JSON path", "[cli-text]") {
  const auto dir = std::filesystem::temp_directory_path() / ("zout-cli-text-" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto write = [&](const std::string& name, const std::string& text) {
    std::ofstream((dir / name).string()) << text;
    return (dir / name).string();
  };
  const auto units = load_panel_file(write("p.json", R"({"panel": [{"slot": 3, "serial": "C"}, {"slot": 1, "serial": "A"}]})"));
  REQUIRE(units.size() == 2);
  CHECK(units[0].serial == "A");
  CHECK(units[0].slot == std::optional<int>(1));
  CHECK(units[1].serial == "C");
  CHECK(units_json(units).dump() == R"([{"serial":"A","slot":1},{"serial":"C","slot":3}])");

  const auto bad_serial = write("dup.json", R"({"panel": [{"slot": 1, "serial": "A"}, {"slot": 2, "serial": "A"}]})");
  CHECK_THROWS_WITH(load_panel_file(bad_serial), Contains("dup.json") && Contains("panel[1].serial") &&
                                                     Contains("\"A\" appears twice"));
  CHECK_THROWS_AS(load_panel_file(write("empty.json", R"({"panel": []})")), ConfigError);
  CHECK_THROWS_WITH(load_panel_file(write("typo.json", R"({"panel": [{"slot": 1, "serail": "A"}]})")),
                    Contains("typo.json"));
  CHECK_THROWS_WITH(load_panel_file(write("extra.json", R"({"panel": [{"slot": 1, "serial": "A", "fault": "x"}]})")),
                    Contains("panel[0].fault: unknown key"));
  std::filesystem::remove_all(dir);
}
